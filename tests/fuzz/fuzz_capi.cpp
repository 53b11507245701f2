// libFuzzer target over liblode's data-taking entry points: whatever bytes arrive, every call must
// return a status (no crash, hang, leak or undefined behaviour; ASan and UBSan watch). The bytes
// choose the entry point, the shape, the layout, the options and the values (either raw doubles or
// small Likert-like codes with missing and infinite cells, so that deeper stages are reached too).
#include "lode.h"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <limits>
#include <vector>

namespace {

struct Bytes {
  const uint8_t* p;
  size_t n;
  uint32_t filler = 12345;  // once the input runs out, a fixed pseudo-random sequence fills in
  uint8_t byte() {
    if (n == 0) {
      filler = filler * 1103515245u + 12345u;
      return static_cast<uint8_t>(filler >> 16);
    }
    --n;
    return *p++;
  }
  double real() {
    if (n < 8) return byte();
    double v;
    std::memcpy(&v, p, 8);
    p += 8;
    n -= 8;
    return v;
  }
};

double coded(uint8_t b) {
  if (b == 255) return std::numeric_limits<double>::quiet_NaN();
  if (b == 254) return std::numeric_limits<double>::infinity();
  if (b >= 240) return std::numeric_limits<double>::quiet_NaN();
  return static_cast<double>(b % 5 + 1);
}

// Reads every result of a correlation with several buffer sizes.
void read_correlation(const lode_correlation* c, Bytes& in) {
  static const int matrix_keys[] = {LODE_CORRELATION_MATRIX, LODE_CORRELATION_PAIR_COUNTS, LODE_CORRELATION_EIGENVALUES,
                                    LODE_CORRELATION_REDUCED_EIGENVALUES, LODE_CORRELATION_SMC, 0, 999};
  for (int key : matrix_keys) {
    int64_t rows = 0, cols = 0;
    if (lode_correlation_matrix(c, key, nullptr, 0, &rows, &cols) != LODE_OK) continue;
    const size_t need = static_cast<size_t>(rows * cols);
    std::vector<double> buf(need + 1);
    lode_correlation_matrix(c, key, buf.data(), need - (in.byte() & 1), &rows, &cols);
  }
  for (int key = 118; key < 138; ++key) {
    double v;
    lode_correlation_value(c, key, &v);
  }
  size_t len = 0;
  if (lode_correlation_text(c, LODE_CORRELATION_NOTES, nullptr, 0, &len) == LODE_OK) {
    std::vector<char> text(len + 1);
    lode_correlation_text(c, LODE_CORRELATION_NOTES, text.data(), len + 1 - (in.byte() & 1), &len);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  Bytes in{data, size};
  const uint8_t mode = in.byte();
  const int64_t rows = in.byte() % 48;
  const int64_t cols = in.byte() % 14;
  const uint8_t layout = in.byte();
  const bool likert = (mode & 0x10) == 0;

  // Values laid out with the chosen strides (row-major, column-major, or padded).
  const int64_t pad = layout & 3;
  const bool col_major = (layout & 4) != 0;
  const int64_t row_stride = col_major ? 1 : cols + pad;
  const int64_t col_stride = col_major ? rows + pad : 1;
  const size_t extent = static_cast<size_t>((rows + pad) * (cols + pad) + 1);
  std::vector<double> values(extent, std::numeric_limits<double>::quiet_NaN());
  for (int64_t i = 0; i < rows; ++i)
    for (int64_t j = 0; j < cols; ++j)
      values[static_cast<size_t>(i * row_stride + j * col_stride)] = likert ? coded(in.byte()) : in.real();

  lode_data* d = nullptr;
  int status;
  if (mode % 3 == 0) {
    status = lode_data_from_raw(values.data(), rows, cols, row_stride, col_stride, &d);
  } else {
    // A square matrix (correlation or covariance) of `cols` items in the same layout, symmetric with
    // a unit (correlation) or coded (covariance) diagonal, so it often passes the checks.
    const int64_t p = cols;
    const int64_t rs = col_major ? 1 : p + pad, cs = col_major ? p + pad : 1;
    std::vector<double> r(static_cast<size_t>((p + pad) * (p + pad) + 1), std::numeric_limits<double>::quiet_NaN());
    for (int64_t i = 0; i < p; ++i)
      for (int64_t j = 0; j <= i; ++j) {
        double v;
        if (i == j) v = mode % 3 == 1 ? 1.0 : (likert ? coded(in.byte()) : in.real());
        else v = likert ? (coded(in.byte()) - 3.0) / 2.5 : in.real();
        r[static_cast<size_t>(i * rs + j * cs)] = r[static_cast<size_t>(j * rs + i * cs)] = v;
      }
    status = mode % 3 == 1 ? lode_data_from_correlation(r.data(), p, rs, cs, rows, &d)
                           : lode_data_from_covariance(r.data(), p, rs, cs, rows, &d);
  }
  if (status != LODE_OK) return 0;

  if (in.byte() & 1) {
    const char* names[16] = {"a", nullptr, "", "d\xc3\xa9", "e", "f", "g", "h", "i", "j", "k", "l", "m", "n", "o", "p"};
    lode_data_set_item_names(d, names, cols);
  }
  lode_correlation_options o;
  lode_correlation_options_init(&o, sizeof o);
  const uint8_t flags = in.byte();
  o.kind = flags & 1 ? LODE_SPEARMAN : LODE_PEARSON;
  o.missing = flags & 2 ? LODE_LISTWISE : LODE_PAIRWISE;
  o.smooth = (flags & 4) != 0;
  o.min_eigenvalue = (flags & 8) ? 0.0 : 1e-6;
  if (flags & 16) o.struct_size = offsetof(lode_correlation_options, smooth);
  lode_correlation* c = nullptr;
  if (lode_correlate(d, &o, &c) == LODE_OK) {
    read_correlation(c, in);
    lode_correlation_free(c);
  }
  lode_data_free(d);
  return 0;
}
