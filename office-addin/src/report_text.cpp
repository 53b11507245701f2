// Words and small helpers shared by the report's analysis and its sheet layouts.
#include "report_text.hpp"

#include "report_model.hpp"

#include <algorithm>
#include <cmath>
#include <cctype>
#include <chrono>
#include <cstdio>
#include <ctime>

namespace lode::addin::report {

std::string fmt_num(double v, int digits) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", digits, v);
  return buf;
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> out;
  std::size_t start = 0;
  while (start < text.size()) {
    std::size_t end = text.find('\n', start);
    if (end == std::string::npos) end = text.size();
    if (end > start) out.push_back(text.substr(start, end - start));
    start = end + 1;
  }
  return out;
}

std::vector<std::size_t> loading_order(const std::vector<double>& L, std::size_t p, std::size_t k) {
  std::vector<std::size_t> idx(p), home(p);
  for (std::size_t j = 0; j < p; ++j) {
    idx[j] = j;
    std::size_t best = 0;
    for (std::size_t f = 1; f < k; ++f)
      if (std::fabs(L[j * k + f]) > std::fabs(L[j * k + best])) best = f;
    home[j] = best;
  }
  std::stable_sort(idx.begin(), idx.end(), [&](std::size_t a, std::size_t b) {
    if (home[a] != home[b]) return home[a] < home[b];
    return std::fabs(L[a * k + home[a]]) > std::fabs(L[b * k + home[b]]);
  });
  return idx;
}

const char* correlation_words(const std::string& kind) {
  if (kind == "spearman") return "Spearman (rank order)";
  if (kind == "polychoric") return "polychoric (ordered answer categories)";
  return "Pearson (answers taken as numbers)";
}
const char* missing_words(const std::string& m) {
  if (m == "listwise") return "only respondents who answered every item (listwise)";
  if (m == "em") return "estimated from everyone with an answer, assuming missing at random (EM, maximum likelihood)";
  return "each pair of items uses everyone who answered both (pairwise)";
}
const char* score_method_words(const std::string& m) {
  if (m == "bartlett") return "Bartlett (1937)";
  if (m == "correlation_preserving") return "correlation-preserving (ten Berge, Krijnen, Wansbeek and Shapiro 1999)";
  return "regression (Thurstone 1935)";
}
const char* score_method_short(const std::string& m) {
  if (m == "bartlett") return "Bartlett";
  if (m == "correlation_preserving") return "correlation-preserving";
  return "regression";
}

const char* extraction_words(const std::string& m) {
  if (m == "paf") return "principal axis factoring";
  if (m == "minres") return "least squares on the residual correlations (minimum residual)";
  return "maximum likelihood";
}

std::string rotation_words(const std::string& rotation, double parameter, const std::string& used) {
  if (used != rotation) return used;  // not applied, with the reason
  if (rotation == "oblimin")
    return "direct oblimin with gamma " + fmt_num(parameter, 2) + " (Jennrich and Sampson 1966; gamma 0 is common practice)";
  if (rotation == "promax")
    return "promax with power " + fmt_num(parameter > 0 ? parameter : 4.0, 0) +
           " (Hendrickson and White 1964, who used 4)";
  if (rotation == "varimax") return "varimax (Kaiser 1958)";
  if (rotation == "none") return "none: the loadings as extracted";
  return used;
}

std::string reliability_words(double v) {
  if (std::isnan(v)) return "";
  if (v >= 0.90) return "high enough to consider individual use (0.90 or more; common practice)";
  if (v >= 0.80) return "good for research and group comparisons (0.80 or more; common practice)";
  if (v >= 0.70) return "adequate for research (0.70 or more; common practice)";
  return "low: under 0.70 (common practice)";
}

std::string fmt_whole(double d) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.0f", d);
  return buf;
}

std::string with_decimal_separator(const std::string& text, char separator) {
  std::string out = text;
  const auto digit = [&](std::size_t i) { return i < text.size() && std::isdigit(static_cast<unsigned char>(text[i])); };
  for (std::size_t i = 1; i + 1 < text.size(); ++i) {
    if (text[i] != '.' || !digit(i - 1) || !digit(i + 1)) continue;
    std::size_t b = i - 1;  // the start of the digits before the point
    while (b > 0 && digit(b - 1)) --b;
    if (b > 0 && (std::isalpha(static_cast<unsigned char>(text[b - 1])) || text[b - 1] == '_' || text[b - 1] == '.'))
      continue;  // part of a name or of a version
    std::size_t e = i + 1;  // past the digits after the point
    while (digit(e)) ++e;
    if (e < text.size() && (text[e] == '.' && digit(e + 1))) continue;  // a version such as 0.1.0
    if (e < text.size() && (std::isalpha(static_cast<unsigned char>(text[e])) || text[e] == '_')) continue;
    out[i] = separator;
  }
  return out;
}

void localise_decimals(Sheet& sheet, char separator) {
  for (auto& row : sheet.rows)
    for (Cell& c : row)
      if (c.kind == Cell::Kind::text && c.style != styles::label && c.style != styles::heading && c.style != styles::title)
        c.text = with_decimal_separator(c.text, separator);
}

std::string trimmed(const std::string& s) {
  const auto first = s.find_first_not_of(" \t\r\n\v\f");
  if (first == std::string::npos) return std::string();
  return s.substr(first, s.find_last_not_of(" \t\r\n\v\f") - first + 1);
}

std::string sheet_ref(const std::string& name) {
  bool plain = !name.empty();
  for (char ch : name)
    if (!(std::isalnum(static_cast<unsigned char>(ch)) || ch == '_')) plain = false;
  if (plain) return "$" + name;
  std::string q = "$'";
  for (char ch : name) q += ch == '\'' ? std::string("''") : std::string(1, ch);
  return q + "'";
}

void split_range_text(const std::string& text, std::string& sheet, std::string& cells) {
  sheet.clear();
  cells = text;
  const std::size_t dot = text.rfind('.');
  if (dot == std::string::npos) return;
  sheet = text.substr(0, dot);
  cells = text.substr(dot + 1);
  if (!sheet.empty() && sheet[0] == '$') sheet.erase(0, 1);
  if (sheet.size() >= 2 && sheet.front() == '\'' && sheet.back() == '\'') {
    std::string s;
    for (std::size_t i = 1; i + 1 < sheet.size(); ++i) {
      s += sheet[i];
      if (sheet[i] == '\'' && sheet[i + 1] == '\'') ++i;
    }
    sheet = s;
  }
}

std::string range_address(const std::string& sheet, std::size_t first_col, std::size_t first_row, std::size_t last_col,
                          std::size_t last_row) {
  return sheet_ref(sheet) + ".$" + column_name(first_col) + "$" + std::to_string(first_row + 1) + ":$" +
         column_name(last_col) + "$" + std::to_string(last_row + 1);
}

std::string utc_now() {
  std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[40];
  std::strftime(buf, sizeof buf, "%Y-%m-%d %H:%M:%S UTC", &tm);
  return buf;
}

const char* const kNotLikelihoodRatio =
    "The extraction is not maximum likelihood: chi-square, p-value, RMSEA, TLI and BIC are the maximum likelihood "
    "discrepancy evaluated at this solution, not a likelihood-ratio test; the p-value is approximate (it runs a "
    "little small) and the figures describe fit rather than test it. RMSR needs no such caveat.";

const char* const kConfirmCaution =
    "Caution: a structure that replicates, or fits respondents held out from the same survey, shows that it holds "
    "in this survey; it is not evidence that the scales are valid for decisions about people. Scores are "
    "estimates, and an instrument needs validation for the purpose before it is used to select, rate or diagnose "
    "anyone; local law and professional testing standards govern such use.";

}  // namespace lode::addin::report
