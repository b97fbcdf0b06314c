#include "cli/progress.hpp"

#include <cstdio>
#include <fmt/format.h>
#include <unistd.h>

namespace nvsyn::cli {

ProgressLine::ProgressLine(double model_duration_s)
    : duration_(model_duration_s),
      enabled_(::isatty(STDERR_FILENO) == 1),
      start_(std::chrono::steady_clock::now()),
      last_draw_(start_) {}

ProgressLine::~ProgressLine() { finish(); }

void ProgressLine::update(double t) {
  if (!enabled_) return;
  const auto now = std::chrono::steady_clock::now();
  if (now - last_draw_ < std::chrono::milliseconds(100)) return;
  last_draw_ = now;
  const double wall = std::chrono::duration<double>(now - start_).count();
  const double fraction = duration_ > 0 ? t / duration_ : 1.0;
  constexpr int kWidth = 30;
  const int filled = static_cast<int>(fraction * kWidth);
  const double speed = wall > 0 ? t / wall : 0.0;
  const double left = speed > 0 ? (duration_ - t) / speed : 0.0;
  fmt::print(stderr, "\r[{:#<{}}{:<{}}] {:5.1f}%  model time {:.3f} s of {:g} s  {:.3g}x real time  {:.0f} s left ",
             "", filled, "", kWidth - filled, 100.0 * fraction, t, duration_, speed, left);
  std::fflush(stderr);
  drawn_ = true;
}

void ProgressLine::finish() {
  if (drawn_) {
    fmt::print(stderr, "\r{:<110}\r", "");
    std::fflush(stderr);
    drawn_ = false;
  }
}

}  // namespace nvsyn::cli
