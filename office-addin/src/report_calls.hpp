// The report's shared ways of calling the C ABI (report_analysis.cpp defines them; the analysis files
// report_analysis*.cpp use them): the report's reading of a C ABI status, progress from the C ABI into
// the run's callback, matrix results as vectors, the run's fit and correlation options. UNO-free.
#pragma once

#include "capi.hpp"
#include "report_analysis.hpp"

#include <cstdint>
#include <string>
#include <vector>

namespace lode::addin::report {

// The report's reading of a C ABI status: cancelled runs stop (Cancelled), bad input is the person's to
// fix (std::invalid_argument, shown with its reason), anything else is a failure of the run.
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
// The items as a C ABI data handle with their names.
DataHandle make_data(const std::vector<double>& values, std::size_t rows, const std::vector<std::string>& names);

// The run's correlation options (kind, missing rule; one thread, so the office keeps a core).
lode_correlation_options correlation_options(const Options& o);

// report_analysis_structure.cpp: the general factor of an oblique model with at least 3 factors
// (otherwise the reason), and the comparison across the groups of options.group_column.
GeneralResult general_factor(const lode_model* model, const ModelResult& result);
GroupsResult compare_groups(const SourceTable& src, const Items& items, const Options& o, const ModelResult& model,
                            const Progress& progress, double from, double to);

}  // namespace lode::addin::report
