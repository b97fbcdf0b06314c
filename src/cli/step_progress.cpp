#include "cli/step_progress.hpp"

#include <cstdio>
#include <fmt/format.h>
#include <unistd.h>

namespace nvsyn::cli {

StepProgress::StepProgress(std::string what)
    : what_(std::move(what)),
      enabled_(::isatty(STDERR_FILENO) == 1),
      start_(std::chrono::steady_clock::now()),
      last_draw_(start_) {}

StepProgress::~StepProgress() { finish(); }

void StepProgress::update(std::uint64_t done, std::uint64_t total) {
  if (!enabled_ || total == 0) return;
  const auto now = std::chrono::steady_clock::now();
  if (now - last_draw_ < std::chrono::milliseconds(100)) return;
  last_draw_ = now;
  const double fraction = static_cast<double>(done) / static_cast<double>(total);
  const double wall = std::chrono::duration<double>(now - start_).count();
  const double left = fraction > 0 ? wall * (1.0 - fraction) / fraction : 0.0;
  constexpr int kWidth = 30;
  const int filled = static_cast<int>(fraction * kWidth);
  // The first percent says too little about the rate to promise a time.
  const std::string eta = fraction >= 0.01 ? fmt::format("{:.0f} s left", left) : "";
  fmt::print(stderr, "\r[{:#<{}}{:<{}}] {:5.1f}%  {}  {:<14}", "", filled, "", kWidth - filled, 100.0 * fraction,
             what_, eta);
  std::fflush(stderr);
  drawn_ = true;
}

void StepProgress::finish() {
  if (!drawn_) return;
  fmt::print(stderr, "\r{:<90}\r", "");
  std::fflush(stderr);
  drawn_ = false;
}

}  // namespace nvsyn::cli
