#pragma once
// A one-line progress display for long runs: model time, speed and time left.
// Draws only on an interactive terminal (stderr is a TTY); otherwise silent.
#include <chrono>
#include <string>

namespace nvsyn::cli {

class ProgressLine {
 public:
  explicit ProgressLine(double model_duration_s);
  ~ProgressLine();
  void update(double model_time_s);
  void finish();
  bool enabled() const { return enabled_; }

 private:
  double duration_;
  bool enabled_;
  bool drawn_ = false;
  std::chrono::steady_clock::time_point start_, last_draw_;
};

}  // namespace nvsyn::cli
