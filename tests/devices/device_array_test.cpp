#include <catch2/catch.hpp>
#include <array>
#include <cmath>
#include <cstring>
#include <vector>

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

TEST_CASE("a pair read gives the same bits as two single reads, in any order", "[devices]") {
  constexpr int n = 200;
  DeviceArray pairs(noisy(), n, 11, 3), singles(noisy(), n, 11, 3), backwards(noisy(), n, 11, 3);
  for (DeviceArray* a : {&pairs, &singles, &backwards})
    for (int i = 0; i < n; ++i) a->pulse(i, Polarity::potentiate, 3 + i % 5, 1.0);
  // Put some pairs out of step: device 2j + 1 read alone first (as program-and-verify
  // does). The pair read then raises device 2j's count to match, skipping a number;
  // the single-read arrays skip the same number by a read whose value is dropped.
  for (int i = 1; i < n; i += 6) {
    pairs.read(i, 50.0);
    for (DeviceArray* a : {&singles, &backwards}) {
      a->read(i, 50.0);
      a->read(i - 1, 50.0);
    }
  }
  for (int round = 0; round < 3; ++round) {
    const double t = 100.0 + round;
    for (int i = 0; i < n; i += 2) {
      const std::array<double, 2> r = pairs.read_pair(i, t);
      const double first = singles.read(i, t);
      const double second = singles.read(i + 1, t);
      const double second_first = backwards.read(i + 1, t);
      const double first_last = backwards.read(i, t);
      CHECK(std::memcmp(&r[0], &first, sizeof(double)) == 0);
      CHECK(std::memcmp(&r[1], &second, sizeof(double)) == 0);
      CHECK(std::memcmp(&first_last, &first, sizeof(double)) == 0);
      CHECK(std::memcmp(&second_first, &second, sizeof(double)) == 0);
    }
  }
  // Across pair boundaries (odd first device) nothing is shared: two single reads.
  const std::array<double, 2> r = pairs.read_pair(1, 200.0);
  CHECK(r[0] == singles.read(1, 200.0));
  CHECK(r[1] == singles.read(2, 200.0));
}

TEST_CASE("read noise has the stated relative sd; the devices of a pair are uncorrelated", "[devices]") {
  // Relative read sd: white and 1/f add in variance, sd^2 = w^2 + Q ln(f_max / f_min)
  // with f_max the read bandwidth and f_min = 1 / (time since programming)
  // (devices/read_noise.hpp; integral of a 1/f spectrum over the band).
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  p.read_noise = 0.02;
  p.read_noise_q = 1e-4;
  p.read_bandwidth = 1e6;
  constexpr int n = 40000;
  DeviceArray d(p, n, 99, 0);
  for (int i = 0; i < n; ++i) d.pulse(i, Polarity::potentiate, 20, 0.0);
  const double since = 100.0;
  const double sd = std::sqrt(0.02 * 0.02 + 1e-4 * std::log(1e6 * since));
  // Two reads per device: the pairs (2j, 2j + 1) read together, then every device alone.
  std::vector<double> together(n), alone(n);
  for (int i = 0; i < n; i += 2) {
    const std::array<double, 2> r = d.read_pair(i, since);
    together[i] = r[0] / d.read_mean(i, since) - 1.0;
    together[i + 1] = r[1] / d.read_mean(i + 1, since) - 1.0;
  }
  for (int i = 0; i < n; ++i) alone[i] = d.read(i, since) / d.read_mean(i, since) - 1.0;
  for (const std::vector<double>* sample : {&together, &alone}) {
    double s = 0, ss = 0;
    for (double e : *sample) {
      s += e;
      ss += e * e;
    }
    const double mean = s / n, var = ss / n - mean * mean;
    // Mean within 5 standard errors; the sample variance of n normals has relative sd
    // sqrt(2 / (n - 1)) = 0.7%, 5 of them 3.5% (false failure below 1e-6 each).
    CHECK(std::abs(mean) < 5 * sd / std::sqrt(n));
    CHECK(var == Approx(sd * sd).epsilon(5 * std::sqrt(2.0 / (n - 1))));
  }
  // Correlations of independent normals have standard error 1/sqrt(m); 5 of them.
  double within_pair = 0, between_reads = 0;
  for (int i = 0; i < n; i += 2) within_pair += together[i] * together[i + 1];
  for (int i = 0; i < n; ++i) between_reads += together[i] * alone[i];
  CHECK(std::abs(within_pair / (n / 2) / (sd * sd)) < 5 / std::sqrt(n / 2.0));
  CHECK(std::abs(between_reads / n / (sd * sd)) < 5 / std::sqrt(static_cast<double>(n)));
}
