#include "convert.hpp"
#include "uno_text.hpp"

#include <com/sun/star/lang/IllegalArgumentException.hpp>
#include <com/sun/star/sheet/NoConvergenceException.hpp>
#include <com/sun/star/uno/RuntimeException.hpp>

#include <cmath>
#include <cstdint>
#include <cstring>
#include <string>

namespace css = com::sun::star;
using css::uno::Any;
using css::uno::Sequence;
using rtl::OUString;

namespace lode::addin {
namespace {


bool is_blank(const Any& a) {
  if (!a.hasValue()) return true;
  if (a.getValueTypeClass() == css::uno::TypeClass_STRING) {
    OUString s;
    a >>= s;
    return s.trim().isEmpty();
  }
  return false;
}

bool as_number(const Any& a, double& out) {
  switch (a.getValueTypeClass()) {
    case css::uno::TypeClass_DOUBLE:
    case css::uno::TypeClass_FLOAT:
    case css::uno::TypeClass_LONG:
    case css::uno::TypeClass_SHORT:
    case css::uno::TypeClass_HYPER:
    case css::uno::TypeClass_BYTE:
      return a >>= out;
    case css::uno::TypeClass_BOOLEAN: {
      bool b = false;
      a >>= b;
      out = b ? 1.0 : 0.0;
      return true;
    }
    default:
      return false;
  }
}

std::string cell_name(std::size_t row, std::size_t col) {
  return "row " + std::to_string(row + 1) + ", column " + std::to_string(col + 1) + " of the range";
}

}  // namespace

Arg arg_from_range(const Sequence<Sequence<Any>>& range, std::string_view name) {
  // Trim trailing rows and columns with nothing in them, so a whole-column reference costs only
  // the scan (Calc has already built the values by the time we are called).
  const std::size_t all_rows = static_cast<std::size_t>(range.getLength());
  std::size_t rows = 0, cols = 0;
  for (std::size_t r = 0; r < all_rows; ++r) {
    const Sequence<Any>& row = range[static_cast<sal_Int32>(r)];
    for (sal_Int32 c = row.getLength(); c > 0; --c) {
      if (!is_blank(row[c - 1])) {
        rows = r + 1;
        cols = std::max(cols, static_cast<std::size_t>(c));
        break;
      }
    }
  }
  Arg arg;
  arg.kind = Arg::Kind::grid;
  Grid& g = arg.grid;
  if (rows == 0 || cols == 0) return arg;  // an empty grid: the function says what it needs
  if (cols > kMaxColumns)
    throw CellError(Failure::too_large, "'" + std::string(name) + "' has " + std::to_string(cols) +
                                            " columns; Lode's cell functions take at most " +
                                            std::to_string(kMaxColumns));
  if (rows * cols > kMaxCells)
    throw CellError(Failure::too_large, "'" + std::string(name) + "' has " + std::to_string(rows) + " x " +
                                            std::to_string(cols) + " cells in use; Lode's cell functions take at most " +
                                            std::to_string(kMaxCells));
  g.rows = rows;
  g.cols = cols;
  g.values.assign(rows * cols, kMissing);
  bool first_row_text_only = true;
  std::size_t first_row_texts = 0;
  for (std::size_t r = 0; r < rows; ++r) {
    const Sequence<Any>& row = range[static_cast<sal_Int32>(r)];
    const std::size_t n = std::min(cols, static_cast<std::size_t>(row.getLength()));
    for (std::size_t c = 0; c < n; ++c) {
      const Any& a = row[static_cast<sal_Int32>(c)];
      double v = 0.0;
      if (as_number(a, v)) {
        if (!std::isfinite(v))
          throw CellError(Failure::bad_argument, "'" + std::string(name) + "' holds a value that is not finite at " +
                                                     cell_name(r, c));
        g.values[r * cols + c] = v;
        ++g.number_cells;
        if (r == 0) first_row_text_only = false;
      } else if (!is_blank(a)) {
        if (r == 0) ++first_row_texts;
        OUString t;
        if (a >>= t) g.texts.emplace_back(r * cols + c, utf8(t.trim()));
      }
    }
  }
  // A first row of text only (item names) above numbers: keep the names for messages, drop the row.
  if (rows > 1 && first_row_text_only && first_row_texts > 0) {
    const Sequence<Any>& row = range[0];
    g.header.resize(cols);
    for (std::size_t c = 0; c < cols && c < static_cast<std::size_t>(row.getLength()); ++c) {
      OUString s;
      if (row[static_cast<sal_Int32>(c)] >>= s) g.header[c] = utf8(s.trim());
    }
    g.values.erase(g.values.begin(), g.values.begin() + static_cast<std::ptrdiff_t>(cols));
    --g.rows;
    std::erase_if(g.texts, [cols](const auto& t) { return t.first < cols; });
    for (auto& t : g.texts) t.first -= cols;
  }
  return arg;
}

Arg arg_from_value(const Any& value, std::string_view name) {
  Arg arg;
  if (is_blank(value)) return arg;
  double v = 0.0;
  if (as_number(value, v)) {
    if (!std::isfinite(v))
      throw CellError(Failure::bad_argument, "'" + std::string(name) + "' is not a finite number");
    arg.kind = Arg::Kind::number;
    arg.number = v;
    return arg;
  }
  OUString s;
  if (value >>= s) {
    arg.kind = Arg::Kind::text;
    arg.text = utf8(s.trim());
    return arg;
  }
  Sequence<Sequence<Any>> range;
  if (value >>= range) {
    if (range.getLength() == 1 && range[0].getLength() == 1) return arg_from_value(range[0][0], name);
    return arg_from_range(range, name);
  }
  throw CellError(Failure::bad_argument, "'" + std::string(name) + "' has a type Lode cannot read");
}

Any to_any(const Output& out) {
  if (out.scalar && out.cells.size() == 1) {
    const OutCell& c = out.cells[0];
    if (c.error) return Any(error_value(*c.error));
    if (c.is_text) return Any(ustr(c.text));
    return Any(c.number);
  }
  Sequence<Sequence<Any>> rows(static_cast<sal_Int32>(out.rows));
  auto* row_ptr = rows.getArray();
  for (std::size_t r = 0; r < out.rows; ++r) {
    Sequence<Any> row(static_cast<sal_Int32>(out.cols));
    auto* p = row.getArray();
    for (std::size_t c = 0; c < out.cols; ++c) {
      const OutCell& cell = out.cells[r * out.cols + c];
      if (cell.error)
        p[c] <<= error_value(*cell.error);
      else if (cell.is_text)
        p[c] <<= ustr(cell.text);
      else
        p[c] <<= cell.number;
    }
    row_ptr[r] = row;
  }
  return Any(rows);
}

Any failure_to_any(Failure failure, const std::string& message, css::uno::XInterface& context) {
  const OUString text = ustr("Lode: " + message);
  switch (failure) {
    case Failure::bad_argument:
    case Failure::too_large:
      throw css::lang::IllegalArgumentException(text, css::uno::Reference<css::uno::XInterface>(&context), 0);
    case Failure::not_converged:
      throw css::sheet::NoConvergenceException(text, css::uno::Reference<css::uno::XInterface>(&context));
    case Failure::not_computable:
    case Failure::internal:
      break;
  }
  return Any(error_value(failure));
}

}  // namespace lode::addin
