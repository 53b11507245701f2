// What the files of the report's analysis share (report_analysis.cpp, report_analysis_confirm.cpp): the
// report's reading of a C ABI status, progress from the C ABI into the run's callback, matrix results as
// vectors, and the run's fit options. UNO-free; defined in report_analysis.cpp.
#pragma once

#include "capi.hpp"
#include "report_model.hpp"

#include <cstdint>
#include <string>
#include <vector>

namespace lode::addin::report {

// Cancelled runs stop, bad input is the person's to fix (std::invalid_argument, shown with its reason),
// anything else is a failure of the run.
void report_check(int status, const char* what);

// Progress from the C ABI into the run's callback (which may cancel), mapped onto [from, to].
struct ProgressBridge {
  const Progress* progress;
  std::string phase;
  double from, to;
  static int call(void* user, std::int64_t done, std::int64_t total);
};

// The C ABI's matrix results as plain vectors.
template <class H, class Getter>
std::vector<double> vec(const H* h, int key, Getter g, const char* what, StatusCheck on = report_check) {
  return read_matrix(h, key, g, what, on).values;
}

// The run's extraction and rotation options for lode_model_compute (and the calls that refit the same
// way: the bootstrap, replication, the hold-out check). Not copyable: fo.rotation points into the same object.
struct FitSetup {
  lode_model_options fo;
  lode_rotation_options ro;
  std::string rotation_used;  // which rotation is applied, in the option's word
  FitSetup(const Options& o, int factors);
  FitSetup(const FitSetup&) = delete;
  FitSetup& operator=(const FitSetup&) = delete;
};

struct ReplicationResult;
struct HoldoutResult;
// Split-half replication of the run's analysis with `factors` factors (report_analysis_confirm.cpp):
// progress over [from, to]; a failure is the result's reason.
ReplicationResult replicate_halves(const lode_correlation* corr, const Options& o, int factors,
                                   const Progress& progress, double from, double to);
// The confirmatory check on held-out respondents (report_analysis_confirm.cpp). A share the data cannot
// split is a bad option (std::invalid_argument naming the workable shares); other failures are the reason.
HoldoutResult holdout_check(const lode_correlation* corr, const Options& o, int factors);

}  // namespace lode::addin::report
