#include <catch2/catch.hpp>
#include <cmath>

#include "devices/device_array.hpp"
#include "device_test_support.hpp"

using namespace nvsyn;

namespace {
DeviceParameters pcm() {
  DeviceParameters p = test::device_of(DeviceKind::phase_change);
  p.increment_mean = {1.0e-6, -0.95e-6};  // mean increment falls to 5% at g_max
  p.increment_sd = {0.2e-6, 0.0};
  p.reset_mean = 0.3e-6;
  p.reset_sd = 0.05e-6;
  return p;
}
}  // namespace

TEST_CASE("phase-change potentiation saturates", "[devices][pcm]") {
  constexpr int n = 500;
  DeviceArray d(pcm(), n, 5, 0);
  double early = 0, late = 0;
  for (int i = 0; i < n; ++i) {
    early += d.pulse(i, Polarity::potentiate, 1, 0.0);
    d.pulse(i, Polarity::potentiate, 60, 0.0);
    late += d.pulse(i, Polarity::potentiate, 1, 0.0);
    REQUIRE(d.programmed(i) <= d.g_max_of(i));
  }
  CHECK(late / n < 0.15 * early / n);
}

TEST_CASE("a reset returns to the reset distribution", "[devices][pcm]") {
  const DeviceParameters p = pcm();
  constexpr int n = 5000;
  DeviceArray d(p, n, 6, 0);
  double sum = 0, sum_sq = 0;
  for (int i = 0; i < n; ++i) {
    d.pulse(i, Polarity::potentiate, 10, 0.0);
    d.reset(i, 1.0);
    sum += d.programmed(i);
    sum_sq += d.programmed(i) * d.programmed(i);
  }
  const double mean = sum / n, sd = std::sqrt(sum_sq / n - mean * mean);
  CHECK(std::abs(mean - p.reset_mean) < 3 * p.reset_sd / std::sqrt(n));
  // sd of a sample sd is about sd/sqrt(2n) (normal data): 4 of those.
  CHECK(std::abs(sd - p.reset_sd) < 4 * p.reset_sd / std::sqrt(2.0 * n));
}

TEST_CASE("a single phase-change device cannot depress by a pulse", "[devices][pcm]") {
  DeviceArray d(pcm(), 1, 7, 0);
  d.pulse(0, Polarity::potentiate, 10, 0.0);
  const double before = d.programmed(0);
  CHECK(d.expected_step(0, Polarity::depress) == 0.0);
  CHECK(d.pulse(0, Polarity::depress, 5, 0.0) == 0.0);
  CHECK(d.programmed(0) == before);
}
