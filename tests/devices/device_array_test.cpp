#include <catch2/catch.hpp>
#include <cstring>

#include "devices/device_array.hpp"
#include "device_test_support.hpp"

using namespace nvsyn;

namespace {
DeviceParameters noisy() {
  DeviceParameters p = test::device_of(DeviceKind::soft_bounds);
  p.programming_noise = 0.2;
  p.d2d_g_max = 0.1;
  p.d2d_step = 0.2;
  p.read_noise = 0.02;
  p.read_noise_q = 1e-4;
  p.drift_nu = 0.05;
  p.drift_nu_sd = 0.01;
  p.stuck_low = 0.05;
  p.stuck_high = 0.05;
  return p;
}
}  // namespace

TEST_CASE("variability and noise are reproducible and independent of evaluation order", "[devices]") {
  constexpr int n = 300;
  DeviceArray forward(noisy(), n, 42, 7), backward(noisy(), n, 42, 7);
  std::vector<double> reads_f(n), reads_b(n);
  for (int i = 0; i < n; ++i) {
    forward.pulse(i, Polarity::potentiate, 5 + i % 7, 1.0);
    forward.pulse(i, Polarity::depress, 2, 2.0);
    reads_f[i] = forward.read(i, 100.0);
  }
  for (int i = n - 1; i >= 0; --i) {
    backward.pulse(i, Polarity::potentiate, 5 + i % 7, 1.0);
    backward.pulse(i, Polarity::depress, 2, 2.0);
    reads_b[i] = backward.read(i, 100.0);
  }
  CHECK(std::memcmp(reads_f.data(), reads_b.data(), n * sizeof(double)) == 0);
  DeviceArray other_seed(noisy(), n, 43, 7);
  other_seed.pulse(0, Polarity::potentiate, 5, 1.0);
  other_seed.pulse(0, Polarity::depress, 2, 2.0);
  CHECK(other_seed.read(0, 100.0) != reads_f[0]);
}

TEST_CASE("stuck fractions and endurance", "[devices]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  p.stuck_low = 0.1;
  p.stuck_high = 0.2;
  constexpr int n = 20000;
  DeviceArray d(p, n, 5, 0);
  int low = 0, high = 0;
  for (int i = 0; i < n; ++i) {
    low += d.health(i) == DeviceHealth::stuck_low;
    high += d.health(i) == DeviceHealth::stuck_high;
  }
  // Binomial counts: 4 standard deviations.
  CHECK(std::abs(low - 0.1 * n) < 4 * std::sqrt(n * 0.1 * 0.9));
  CHECK(std::abs(high - 0.2 * n) < 4 * std::sqrt(n * 0.2 * 0.8));

  DeviceParameters e = test::device_of(DeviceKind::linear_levels);
  e.endurance = 10;
  DeviceArray worn(e, 1, 5, 0);
  worn.pulse(0, Polarity::potentiate, 10, 0.0);
  const double g = worn.programmed(0);
  CHECK(worn.health(0) == DeviceHealth::worn_out);
  worn.pulse(0, Polarity::potentiate, 10, 0.0);
  CHECK(worn.programmed(0) == g);
}

TEST_CASE("pulse energy grows linearly with conductance", "[devices]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  p.levels = 4;
  p.pulse_energy_low = 1e-12;
  p.pulse_energy_high = 3e-12;
  DeviceArray d(p, 1, 1, 0);
  d.pulse(0, Polarity::potentiate, 4, 0.0);
  // Pulses start at x = 0, 1/4, 2/4, 3/4 of the range.
  CHECK(d.energy(0) == Approx(1e-12 * 4 + 2e-12 * (0 + 0.25 + 0.5 + 0.75)).epsilon(1e-6));
}
