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

std::string failed_run_message(const std::string& outcome) {
  const std::string prefix = "stopped: ";
  if (outcome.rfind(prefix, 0) != 0) return "";
  if (outcome == stopped_outcome(std::make_exception_ptr(Cancelled{}))) return "";
  return "The analysis stopped: " + outcome.substr(prefix.size()) +
         ".\n\nNothing was written; the workbook is as it was. Change what this names (the range, the items "
         "or an option) and run the analysis again.";
}

std::string already_running_message() {
  return "A Lode analysis is still running; its progress is in the status bar. Wait for it to finish, or end "
         "it with Lode > Stop the running analysis, then start the next one.";
}

std::string unreadable_range_message(const std::string& range_text) {
  return "Lode cannot read the range \"" + range_text +
         "\". Give it as Sheet.A1:H31 or A1:H31 (on the current sheet), or select the answers before opening "
         "the dialog. Nothing was run.";
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
