// The one set of defaults of Lode's analysis (README, "Defaults", gives the reasons), shared by the
// cells (table.cpp, functions.cpp), the dialog and the report service (option_table.cpp, Options);
// Python (capi/python/lode) states the same values, and tests/office checks that a cell, the service
// and Python give the same loadings with no options. UNO-free.
#pragma once

namespace lode::addin {

namespace defaults {
inline constexpr const char* correlation = "pearson";
inline constexpr const char* missing = "pairwise";
inline constexpr const char* extraction = "ml";
inline constexpr const char* rotation = "oblimin";
inline constexpr const char* scores = "none";
inline constexpr const char* scores_place = "beside";
inline constexpr double salient = 0.40;
}  // namespace defaults

}  // namespace lode::addin
