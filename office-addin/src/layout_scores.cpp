// The factor scores: columns beside the data, or a sheet of their own (with up to three columns of
// the range that were not analysed, so each row can be matched to its respondent).
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

std::string score_header(const Analysis& a, std::size_t f) {
  return "Factor " + std::to_string(f + 1) + " score (" + score_method_short(a.options.scores) + ")";
}
Cell score_cell(const Analysis& a, std::size_t r, std::size_t f) {
  const double v = a.scores.values[r * a.k() + f];
  return std::isnan(v) ? Cell{} : Cell::num(v);
}

}  // namespace

Beside layout_scores_beside(const Analysis& a) {
  const std::size_t k = a.k();
  Beside b;
  b.columns = k;
  b.where = a.scores.where;
  std::vector<Cell> hdr;
  for (std::size_t f = 0; f < k; ++f) {
    hdr.push_back(Cell::txt(score_header(a, f)));
    b.header_comments.push_back("Written by Lode (" + std::string(score_method_words(a.options.scores)) + "), " +
                                a.timestamp + ". " + a.scores.cautions + " Blank cells: " + a.scores.rule + ".");
  }
  b.rows.push_back(std::move(hdr));
  for (std::size_t r = 0; r < a.items.rows; ++r) {
    std::vector<Cell> row;
    for (std::size_t f = 0; f < k; ++f) row.push_back(score_cell(a, r, f));
    b.rows.push_back(std::move(row));
  }
  return b;
}

Sheet layout_scores(const Analysis& a) {
  const std::size_t k = a.k();
  Sheet ss;
  ss.base_name = names::scores;
  ss.line({Cell::txt("Factor scores", title)});
  ss.line({Cell::txt(a.scores.cautions, caution)});
  ss.line({Cell::txt("Method: " + std::string(score_method_words(a.options.scores)) + ". Blank cells: " + a.scores.rule + ".",
                     note)});
  if (!a.scores.moved.empty())
    ss.line({Cell::txt("On this sheet rather than beside the data because " + a.scores.moved + ".", note)});
  ss.blank();
  std::vector<Cell> hdr{Cell::txt("Row in " + a.sheet_name, heading)};
  for (const std::string& n : a.id_names) hdr.push_back(Cell::txt(n, heading));
  for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt(score_header(a, f), heading));
  ss.line(std::move(hdr));
  const std::size_t first = a.first_row + (a.items.header ? 1 : 0);
  for (std::size_t r = 0; r < a.items.rows; ++r) {
    std::vector<Cell> row{Cell::num(static_cast<double>(first + r + 1))};
    for (const SourceCell& sc : a.id_cells[r])
      row.push_back(sc.kind == SourceCell::Kind::number ? Cell::num(sc.number)
                    : sc.kind == SourceCell::Kind::text ? Cell::txt(sc.text)
                                                       : Cell{});
    for (std::size_t f = 0; f < k; ++f) row.push_back(score_cell(a, r, f));
    ss.line(std::move(row));
  }
  ss.column_widths.assign(1 + a.id_names.size() + k, 4200);
  return ss;
}

}  // namespace lode::addin::report
