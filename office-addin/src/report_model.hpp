// The analysis report, free of UNO: options, the source table as read from the sheet, the analysis
// through the C ABI (lode.h), and the report as plain sheets of cells that report_uno.cpp writes.
#pragma once

#include "defaults.hpp"

#include <atomic>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace lode::addin::report {

// The ranges of the integer options (checked when the named values are read and again by validate).
inline constexpr int kMaxReportFactors = 100;
inline constexpr int kMaxReportBootstrap = 100000;
inline constexpr int kMaxReportHalves = 10000;
// The smallest group compared by default: about 100 respondents per group is common practice for loadings
// stable enough to compare (README, "Groups"); the C ABI raises it to items + 1 when that is more.
inline constexpr int kDefaultMinGroup = 100;
inline constexpr int kMaxMinGroup = 1000000;

// Everything the dialog (or any UNO caller) can choose. Text values are the option words of the
// README's table ("pearson", "pairwise", ...); validate() checks them against option_table.cpp.
struct Options {
  int header = -1;                 // -1 detect, 0 no header row, 1 the first row holds item names
  std::vector<std::string> items;  // names of the columns to analyse; empty = every column holding numbers
  // The word options: their accepted words, labels and help are in option_table.cpp.
  std::string correlation = defaults::correlation;
  std::string missing = defaults::missing;
  int factors = 0;                       // 0 = suggest from the data, else this many
  std::string extraction = defaults::extraction;
  std::string rotation = defaults::rotation;
  double rotation_parameter = 0.0;       // oblimin gamma; promax power (0 = the method's usual value)
  std::string scores = defaults::scores;
  std::string scores_place = defaults::scores_place;  // beside: new columns right of the data, when empty
  int bootstrap = 0;                     // resamples; 0 = off
  double holdout = 0.0;                  // share of respondents held out for the confirmatory check; 0 = off
  int halves = 0;                        // random splits into halves (replication); 0 = off
  std::string group_column;              // a column of the range naming each respondent's group; "" = no comparison
  int min_group = kDefaultMinGroup;      // groups with fewer respondents (or no more than the items) are skipped
  double salient = defaults::salient;    // loadings at least this large (absolute) are emphasised
  std::uint64_t seed = 20260101;  // the library's default seed, so the factor count agrees with the cells and Python
  char decimal_separator = '.';   // the document's (the service sets it from the document's locale): numbers
                                  // written inside the report's sentences use it, as its cells do
  int cancel_after_sheets = -1;          // tests only: cancel after this many writing steps (the score
                                         // columns beside the data, when written, are the first step;
                                         // then one step per sheet)
};

// Checks the option words; throws std::invalid_argument naming the option and the allowed words.
void validate(const Options& o);

// One cell of the source range.
struct SourceCell {
  enum class Kind { empty, number, text } kind = Kind::empty;
  double number = 0.0;
  std::string text;
};

struct SourceTable {
  std::size_t rows = 0, cols = 0;
  std::vector<SourceCell> cells;  // row-major
  std::string address;            // e.g. "$Responses.$A$1:$AE$301"
  std::vector<std::string> column_letters;  // "A", "B", ... of each column
  std::string sheet_name;                   // the sheet holding the range
  std::size_t first_column = 0;             // 0-based column of the range's left edge
  std::size_t first_row = 0;                // 0-based row of the range's top edge
  // Columns directly right of the range with no content (values, text, formulas, comments) in any of
  // the range's rows, counted up to 101 and up to the sheet's last column.
  std::size_t free_columns_right = 0;
  const SourceCell& at(std::size_t r, std::size_t c) const { return cells[r * cols + c]; }
};

// Whether the first row holds item names: every non-empty cell of it is text, at least one is, and
// some later row holds a number.
bool detect_header(const SourceTable& t);

struct Column {
  std::string name;       // from the header row, else "column C"
  bool numeric = false;   // some cell below the header holds a number
  std::size_t text_cells = 0;  // text cells below the header (read as missing answers)
};
std::vector<Column> describe_columns(const SourceTable& t, bool header);

// A cell of the report. `style` names one of Lode's cell styles (report_styles), or "".
struct Cell {
  enum class Kind { empty, number, text } kind = Kind::empty;
  double number = 0.0;
  std::string text;
  std::string style;
  static Cell num(double v, std::string style = "") { return Cell{Kind::number, v, {}, std::move(style)}; }
  static Cell txt(std::string t, std::string style = "") { return Cell{Kind::text, 0.0, std::move(t), std::move(style)}; }
};

// A line chart over a block of the same sheet: first column categories, first row series names.
struct Chart {
  std::string name, title, x_title, y_title;
  std::size_t top = 0, left = 0, rows = 0, cols = 0;  // the data block, header row included
  std::size_t anchor_row = 0, anchor_col = 0;          // where the chart's top-left corner goes
};

struct Sheet {
  std::string base_name;  // the report's name for it; the writer makes it unique in the workbook
  std::vector<std::vector<Cell>> rows;
  std::vector<Chart> charts;
  std::vector<int> column_widths;  // 1/100 mm; 0 = leave

  Sheet& line(std::vector<Cell> cells) { rows.push_back(std::move(cells)); return *this; }
  Sheet& blank() { rows.emplace_back(); return *this; }
};

// Cells the report puts into the source sheet: new columns directly right of the range (only when
// every one of them is empty; the writer checks again before writing). Row i is row i of the range.
struct Beside {
  std::size_t columns = 0;                   // how many columns, starting right of the range
  std::vector<std::vector<Cell>> rows;       // one per row of the range
  std::vector<std::string> header_comments;  // a comment (annotation) on each cell of row 0
  std::string where;                         // in words, e.g. "columns AF to AJ of Responses"
};

struct Report {
  std::optional<Beside> beside;       // written first, when present
  std::vector<Sheet> sheets;          // in the order they are written
  std::string summary;                // one line for the status bar and the caller
  std::uint64_t values_hash = 0;
};

// Progress of a run: phase text and a share in [0, 1]. Returning false cancels the run.
using Progress = std::function<bool(const std::string& phase, double share)>;

// Thrown when the run was cancelled (by the progress callback or by the C ABI's LODE_E_CANCELLED).
struct Cancelled {};

// Reads the items, runs the analysis through the C ABI and lays out the report. Throws
// std::invalid_argument (bad options or data, with the reason), Cancelled, or std::runtime_error.
Report build_report(const SourceTable& source, const Options& options, const std::string& timestamp,
                    const Progress& progress);

// FNV-1a, 64 bits, over the analysed values row by row (each an IEEE double, little-endian; an empty
// or text cell as a quiet NaN with the bit pattern 0x7ff8000000000000), then the item names, each
// followed by a NUL byte. The run record shows it in hexadecimal.
std::uint64_t hash_values(const std::vector<double>& row_major, const std::vector<std::string>& names);

// "A", "B", ..., "Z", "AA", ... of a 0-based column.
std::string column_name(std::size_t col);

// Sheet names the report uses (its own words).
namespace names {
inline constexpr const char* overview = "Lode overview";
inline constexpr const char* loadings = "Lode loadings";
inline constexpr const char* factors = "Lode factors";
inline constexpr const char* scree = "Lode scree";
inline constexpr const char* record = "Lode run record";
inline constexpr const char* scores = "Lode scores";
inline constexpr const char* replication = "Lode halves";
inline constexpr const char* holdout = "Lode new respondents";
inline constexpr const char* groups = "Lode groups";
inline constexpr const char* general = "Lode general factor";
}  // namespace names

// Cell style names (created in the workbook by the writer; report_uno.cpp defines their look).
namespace styles {
inline constexpr const char* title = "Lode title";
inline constexpr const char* heading = "Lode heading";
inline constexpr const char* label = "Lode label";
inline constexpr const char* number = "Lode number";
inline constexpr const char* salient = "Lode strong loading";
inline constexpr const char* faint = "Lode faint loading";
inline constexpr const char* flag = "Lode flag";
inline constexpr const char* note = "Lode note";
inline constexpr const char* caution = "Lode caution";
}  // namespace styles

}  // namespace lode::addin::report
