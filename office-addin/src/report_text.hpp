// Words and small helpers shared by the report's analysis and its sheet layouts. UNO-free.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

namespace lode::addin::report {

// A number with `digits` decimals ("0.300").
std::string fmt_num(double v, int digits = 3);

// The non-empty lines of a text.
std::vector<std::string> lines_of(const std::string& text);

// Items in reading order: grouped by the factor of their largest absolute loading (factor 1 first),
// within a group by that loading's size, largest first. L is items x factors, row-major.
std::vector<std::size_t> loading_order(const std::vector<double>& L, std::size_t p, std::size_t k);

// The option words in the report's own words.
const char* correlation_words(const std::string& kind);
const char* missing_words(const std::string& missing);
const char* score_method_words(const std::string& method);
const char* score_method_short(const std::string& method);
// The extraction and the rotation in a reader's words with their sources (never the option codes);
// `used` is the rotation applied (model.rotation_used), which may say why none was.
const char* extraction_words(const std::string& method);
std::string rotation_words(const std::string& rotation, double parameter, const std::string& used);

// Common-practice reading of alpha or omega (often traced to Nunnally 1978; README, "Reading the results").
std::string reliability_words(double v);

// A whole number held in a double, written out in full (4294967298, not 4.29e+09).
std::string fmt_whole(double d);
// The text without the white space around it: option words are trimmed, as the C ABI's name lookups do.
std::string trimmed(const std::string& s);

// The decimal numbers written inside `text` ("0.50", "-1.5") with `separator` instead of the point;
// a point inside a word or name ("q1.2"), a version ("0.1.0") or an address ("$Sheet.$A$1") stays.
std::string with_decimal_separator(const std::string& text, char separator);
struct Sheet;
// The same over the sentences of a sheet: its text cells except labels, headings and titles (which
// hold item names and column headings).
void localise_decimals(Sheet& sheet, char separator);
// A sheet name as Calc writes it in an absolute reference: $Name, or $'Name' when it needs quotes.
std::string sheet_ref(const std::string& name);
// A range typed as "$Sheet.$A$1:$B$9", "'My sheet'.A1:B9" or "A1:B9" split into its sheet name
// (unquoted; empty when none is given) and its cells.
void split_range_text(const std::string& text, std::string& sheet, std::string& cells);
// An absolute range address as Calc writes it: "$Sheet.$A$1:$D$20" (0-based columns and rows).
std::string range_address(const std::string& sheet, std::size_t first_col, std::size_t first_row, std::size_t last_col,
                          std::size_t last_row);
// The time now, "YYYY-MM-DD hh:mm:ss UTC".
std::string utc_now();

// The caution of the replication and hold-out sheets.
extern const char* const kConfirmCaution;

// The chi-square family of a minimum residual or principal axis solution (stated wherever those figures appear).
extern const char* const kNotLikelihoodRatio;

}  // namespace lode::addin::report
