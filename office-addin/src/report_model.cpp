// The report's plain parts: option checks, the source table's header and columns, the values hash,
// and build_report, which runs the analysis (report_analysis.cpp) and lays out each sheet
// (layout_*.cpp). UNO-free.
#include "report_model.hpp"

#include "report_analysis.hpp"
#include "report_layout.hpp"
#include "option_table.hpp"
#include "report_text.hpp"

#include <cmath>
#include <cstring>
#include <stdexcept>

namespace lode::addin::report {

void validate(const Options& o) {
  if (o.header < -1 || o.header > 1) throw std::invalid_argument("option HeaderRow must be -1 (detect), 0 or 1");
  for (const WordOption& w : word_options()) {
    const std::string& v = o.*(w.field);
    std::string list;
    bool known = false;
    for (const OptionWord& word : w.words) {
      known = known || v == word.word;
      list += (list.empty() ? "" : ", ") + std::string(word.word);
    }
    if (!known) throw std::invalid_argument("option " + std::string(w.property) + " is \"" + v + "\"; it must be one of " + list);
  }
  if (o.factors < 0 || o.factors > kMaxReportFactors) throw std::invalid_argument("option Factors must be 0 (suggest) to 100");
  // One resample gives no interval (the C ABI's lode_bootstrap_compute needs at least 2).
  if (o.bootstrap < 0 || o.bootstrap == 1 || o.bootstrap > kMaxReportBootstrap)
    throw std::invalid_argument("option Bootstrap is " + std::to_string(o.bootstrap) +
                                "; it must be 0 (off) or 2 to 100000 resamples");
  if (o.holdout != 0.0 && !(o.holdout > 0.0 && o.holdout < 1.0))
    throw std::invalid_argument("option Holdout is " + fmt_num(o.holdout, 3) +
                                "; it must be 0 (off) or a share of the respondents between 0 and 1, e.g. 0.5");
  if (o.halves < 0 || o.halves == 1 || o.halves > kMaxReportHalves)
    throw std::invalid_argument("option Halves is " + std::to_string(o.halves) +
                                "; it must be 0 (off) or 2 to 10000 random splits");
  if (!(o.salient > 0.0 && o.salient < 1.0)) throw std::invalid_argument("option Salient must lie between 0 and 1");
  if (!std::isfinite(o.rotation_parameter)) throw std::invalid_argument("option RotationParameter must be a number");
  if (o.min_group < 2 || o.min_group > kMaxMinGroup)
    throw std::invalid_argument("option MinGroup is " + std::to_string(o.min_group) + "; it must be 2 to 1000000");
}

bool detect_header(const SourceTable& t) {
  if (t.rows < 2) return false;
  bool any_text = false;
  for (std::size_t c = 0; c < t.cols; ++c) {
    const SourceCell& s = t.at(0, c);
    if (s.kind == SourceCell::Kind::number) return false;
    if (s.kind == SourceCell::Kind::text) any_text = true;
  }
  if (!any_text) return false;
  for (std::size_t r = 1; r < t.rows; ++r)
    for (std::size_t c = 0; c < t.cols; ++c)
      if (t.at(r, c).kind == SourceCell::Kind::number) return true;
  return false;
}

std::vector<Column> describe_columns(const SourceTable& t, bool header) {
  std::vector<Column> out(t.cols);
  for (std::size_t c = 0; c < t.cols; ++c) {
    Column& col = out[c];
    const std::string letter = c < t.column_letters.size() ? t.column_letters[c] : std::to_string(c + 1);
    col.name = header && t.at(0, c).kind == SourceCell::Kind::text && !t.at(0, c).text.empty() ? t.at(0, c).text
                                                                                              : "column " + letter;
    for (std::size_t r = header ? 1 : 0; r < t.rows; ++r) {
      const SourceCell& s = t.at(r, c);
      if (s.kind == SourceCell::Kind::number) col.numeric = true;
      else if (s.kind == SourceCell::Kind::text) ++col.text_cells;
    }
  }
  return out;
}

std::string column_name(std::size_t col) {
  std::string s;
  for (std::size_t c = col + 1; c > 0; c = (c - 1) / 26) s.insert(s.begin(), static_cast<char>('A' + (c - 1) % 26));
  return s;
}

std::uint64_t hash_values(const std::vector<double>& values, const std::vector<std::string>& names) {
  std::uint64_t h = 0xcbf29ce484222325ULL;
  auto byte = [&h](unsigned char b) {
    h ^= b;
    h *= 0x100000001b3ULL;
  };
  for (double v : values) {
    std::uint64_t bits;
    if (std::isnan(v)) bits = 0x7ff8000000000000ULL;
    else std::memcpy(&bits, &v, sizeof bits);
    for (int i = 0; i < 8; ++i) byte(static_cast<unsigned char>(bits >> (8 * i)));
  }
  for (const std::string& n : names) {
    for (unsigned char ch : n) byte(ch);
    byte(0);
  }
  return h;
}

Report build_report(const SourceTable& src, const Options& o, const std::string& timestamp, const Progress& progress) {
  const Analysis a = analyse(src, o, timestamp, progress);
  Report rep;
  rep.values_hash = a.values_hash;
  rep.sheets.push_back(layout_overview(a));
  rep.sheets.push_back(layout_loadings(a));
  rep.sheets.push_back(layout_factors(a));
  rep.sheets.push_back(layout_scree(a));
  if (a.halves_asked()) rep.sheets.push_back(layout_replication(a));
  if (a.holdout_asked()) rep.sheets.push_back(layout_holdout(a));
  if (a.general.available) rep.sheets.push_back(layout_general(a));
  if (a.groups.asked) rep.sheets.push_back(layout_groups(a));
  rep.sheets.push_back(layout_record(a));
  if (a.scores.available) {
    if (a.scores.beside) rep.beside = layout_scores_beside(a);
    else rep.sheets.push_back(layout_scores(a));
  }
  if (o.decimal_separator != '.')
    for (Sheet& s : rep.sheets)
      if (s.base_name != names::record) localise_decimals(s, o.decimal_separator);
  rep.summary = "Lode analysed " + std::to_string(a.p()) + " items of " +
                std::to_string(static_cast<long long>(a.corr.rows_used)) + " respondents";
  if (a.scores.beside) rep.summary += "; factor scores are in " + a.scores.where;
  if (progress && !progress("writing the report", 1.0)) throw Cancelled{};
  return rep;
}

}  // namespace lode::addin::report
