#pragma once
// A one-line progress display for work counted in steps (devices characterised,
// weights programmed): a bar, the percentage and the time left. Draws only on an
// interactive terminal (stderr is a TTY), at most ten times a second; otherwise silent.
#include <chrono>
#include <cstdint>
#include <string>

namespace nvsyn::cli {

class StepProgress {
 public:
  explicit StepProgress(std::string what);
  ~StepProgress();
  StepProgress(const StepProgress&) = delete;
  StepProgress& operator=(const StepProgress&) = delete;

  void update(std::uint64_t done, std::uint64_t total);
  // Clears the line so the next output starts on a clean line.
  void finish();

 private:
  std::string what_;
  bool enabled_;
  bool drawn_ = false;
  std::chrono::steady_clock::time_point start_, last_draw_;
};

}  // namespace nvsyn::cli
