// Comparing two solutions through the C ABI: Tucker's congruence after matching factors.
#include "boundary.hpp"
#include "keys.hpp"
#include "results.hpp"

#include "lode/congruence.hpp"

#include <cmath>

using namespace lode;
using namespace lode::capi;

struct lode_comparison {
  FactorMatch match;
};

namespace {

void require_finite(const Matrix& m, const char* which) {
  for (Index j = 0; j < m.cols(); ++j)
    for (Index i = 0; i < m.rows(); ++i)
      if (!std::isfinite(m(i, j)))
        fail(LODE_E_INVALID_ARGUMENT,
             fmt::format("the {} loading matrix holds a missing or infinite value at row {}, column {}", which, i + 1, j + 1));
}

constexpr HandleNames comparison_handle{"lode_comparison", "lode_comparison", "comparison"};

constexpr MatrixKey<lode_comparison> comparison_matrices[] = {
    {LODE_COMPARISON_CONGRUENCE, [](const lode_comparison& c) -> Matrix { return c.match.congruence; }},
    {LODE_COMPARISON_ORDER, [](const lode_comparison& c) -> Matrix { return vector_of(c.match.order); }},
    {LODE_COMPARISON_SIGNS, [](const lode_comparison& c) -> Matrix { return c.match.signs; }},
    {LODE_COMPARISON_MATCHED_CONGRUENCE, [](const lode_comparison& c) -> Matrix { return c.match.matched_congruence; }},
    {LODE_COMPARISON_ALIGNED, [](const lode_comparison& c) -> Matrix { return c.match.aligned; }},
};

constexpr TextKey<lode_comparison> comparison_texts[] = {
    {LODE_COMPARISON_NOTES, [](const lode_comparison& c) { return join_lines(c.match.notes); }},
};

}  // namespace

extern "C" {

LODE_API int lode_comparison_compute(const double* a, const double* b, int64_t items, int64_t factors,
                                     int64_t a_row_stride, int64_t a_col_stride, int64_t b_row_stride,
                                     int64_t b_col_stride, lode_comparison** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    const Matrix ma = read_matrix(a, items, factors, a_row_stride, a_col_stride, "first loading matrix");
    const Matrix mb = read_matrix(b, items, factors, b_row_stride, b_col_stride, "second loading matrix");
    require_finite(ma, "first");
    require_finite(mb, "second");
    auto c = std::make_unique<lode_comparison>();
    c->match = match_factors(ma, mb);
    *out = c.release();
  });
}

LODE_API void lode_comparison_free(lode_comparison* comparison) { delete comparison; }

LODE_MATRIX_GETTER(lode_comparison, lode_comparison, comparison_handle, comparison_matrices)
LODE_TEXT_GETTER(lode_comparison, lode_comparison, comparison_handle, comparison_texts)

}  // extern "C"
