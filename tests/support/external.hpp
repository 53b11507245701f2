// Live reference computations for the tests: R (Rscript) and Debian's python3 with numpy, scipy,
// statsmodels and scikit-learn. Matrices go in and out through text files at full precision.
//
//   auto out = lode::testing::run_r(R"( emit("u", factanal(covmat = R, factors = 2, n.obs = n)$uniquenesses) )",
//                                   {{"R", r}, {"n", Matrix::Constant(1, 1, 145)}});
//   out.at("u")  // a column vector as an Eigen matrix
//
// In R each input is a numeric matrix named as given; emit(name, x) returns x (a vector becomes a
// column). In Python each input is a 2-D numpy array; emit(name, x) likewise. A missing reference
// tool is a test failure, not a skip: ./lode test installs them.
#pragma once

#include "lode/common.hpp"

#include <map>
#include <string>

namespace lode::testing {

using Matrices = std::map<std::string, Matrix>;

// Runs an R script (R's base packages plus whatever the script loads with library()).
Matrices run_r(const std::string& script, const Matrices& inputs);

// Runs a script under /usr/bin/python3 (Debian's interpreter, where numpy/scipy/statsmodels live).
Matrices run_python(const std::string& script, const Matrices& inputs);

// A matrix holding one number.
Matrix scalar(double value);

// Writes a matrix as text at full precision / reads it back (NaN as "NA" / "nan" both accepted).
void write_matrix(const std::string& path, const Matrix& m);
Matrix read_matrix(const std::string& path);

// The largest absolute difference after matching the sign of each column of `actual` to `expected`
// (factor solutions are unique only up to column signs).
double max_abs_diff_up_to_column_sign(const Matrix& actual, const Matrix& expected);

}  // namespace lode::testing
