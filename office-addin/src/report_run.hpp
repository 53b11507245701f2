// The report service's run bookkeeping, free of UNO (report_uno.cpp adapts it): one background run at
// a time, run() calls on other threads, a cancel that stops only a run in progress, the last
// outcome; the outcome line of a failed run; unique names for the report's sheets.
#pragma once

#include <atomic>
#include <exception>
#include <functional>
#include <mutex>
#include <string>
#include <vector>

namespace lode::addin::report {

class RunControl {
 public:
  // run(): a cancel() made while nothing ran, or aimed at an earlier run, does not stop this one.
  void begin_call();
  void end_call(const std::string& outcome);
  // start(): false (and nothing started) while a background run is in progress.
  bool begin_background();
  void end_background(const std::string& outcome);
  // Stops the run in progress; with nothing running it does nothing, so it never stops a later run.
  void cancel();
  bool cancelled() const { return cancel_.load(); }
  bool running() const;
  std::string last_outcome() const;

 private:
  mutable std::mutex mutex_;
  bool running_ = false;  // a run started by start() is in progress
  int synchronous_ = 0;   // run() calls in progress
  std::atomic<bool> cancel_{false};
  std::string last_outcome_;
};

// The outcome line of a run stopped by `failure` ("stopped: ..."): cancelled, a bad option or data,
// memory, or any other failure.
std::string stopped_outcome(const std::exception_ptr& failure);

// What a dialog run tells the person in a message box (message_box.hpp), in plain words naming what
// to change. failed_run_message: the text for a run that ended with `outcome` ("stopped: ..."), or ""
// when there is nothing to say (it succeeded, or the person cancelled it).
std::string failed_run_message(const std::string& outcome);
std::string already_running_message();
std::string unreadable_range_message(const std::string& range_text);

// The report's sheet names: each base name, else "base 2", "base 3", ... so that none is `taken` in
// the workbook or repeats another.
std::vector<std::string> unique_sheet_names(const std::vector<std::string>& bases,
                                            const std::function<bool(const std::string&)>& taken);

}  // namespace lode::addin::report
