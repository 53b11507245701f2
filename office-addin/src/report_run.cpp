// The report service's run bookkeeping (see report_run.hpp).
#include "report_run.hpp"

#include "report_model.hpp"

#include <algorithm>
#include <new>
#include <stdexcept>

namespace lode::addin::report {

void RunControl::begin_call() {
  std::lock_guard<std::mutex> lock(mutex_);
  if (!running_ && synchronous_ == 0) cancel_ = false;
  ++synchronous_;
}
void RunControl::end_call(const std::string& outcome) {
  std::lock_guard<std::mutex> lock(mutex_);
  last_outcome_ = outcome;
  --synchronous_;
}
bool RunControl::begin_background() {
  std::lock_guard<std::mutex> lock(mutex_);
  if (running_) return false;
  running_ = true;
  cancel_ = false;
  return true;
}
void RunControl::end_background(const std::string& outcome) {
  std::lock_guard<std::mutex> lock(mutex_);
  last_outcome_ = outcome;
  running_ = false;
}
void RunControl::cancel() {
  std::lock_guard<std::mutex> lock(mutex_);
  if (running_ || synchronous_ > 0) cancel_ = true;
}
bool RunControl::running() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return running_;
}
std::string RunControl::last_outcome() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return last_outcome_;
}

std::string stopped_outcome(const std::exception_ptr& failure) {
  try {
    std::rethrow_exception(failure);
  } catch (const Cancelled&) {
    return "stopped: the analysis was cancelled; the workbook is as it was";
  } catch (const std::invalid_argument& e) {
    return std::string("stopped: ") + e.what();
  } catch (const std::bad_alloc&) {
    return "stopped: not enough memory for this analysis";
  } catch (const std::exception& e) {
    return std::string("stopped: ") + e.what();
  } catch (...) {
    return "stopped: an unexpected failure in Lode";
  }
}

std::vector<std::string> unique_sheet_names(const std::vector<std::string>& bases,
                                            const std::function<bool(const std::string&)>& taken) {
  std::vector<std::string> out;
  for (const std::string& base : bases) {
    std::string n = base;
    for (int k = 2; taken(n) || std::find(out.begin(), out.end(), n) != out.end(); ++k) n = base + " " + std::to_string(k);
    out.push_back(n);
  }
  return out;
}

}  // namespace lode::addin::report
