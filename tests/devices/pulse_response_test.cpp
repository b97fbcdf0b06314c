// Step laws of the bidirectional device kinds against their formulas, evaluated
// independently here.
#include <catch2/catch.hpp>
#include <cmath>

#include "devices/device_array.hpp"
#include "device_test_support.hpp"

using namespace nvsyn;

TEST_CASE("finite-level device: N pulses from g_min reach g_max exactly, then nothing", "[devices]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  p.levels = 37;
  DeviceArray d(p, 1, 1, 0);
  REQUIRE(d.programmed(0) == p.g_min);
  const double step = (p.g_max - p.g_min) / p.levels;
  for (std::uint32_t n = 1; n <= p.levels; ++n) {
    d.pulse(0, Polarity::potentiate, 1, 0.0);
    REQUIRE(std::abs(d.programmed(0) - (p.g_min + n * step)) <= 1e-12 * p.g_max);
  }
  CHECK(d.programmed(0) == p.g_max);
  CHECK(d.pulse(0, Polarity::potentiate, 5, 0.0) == 0.0);
  CHECK(d.programmed(0) == p.g_max);
  d.pulse(0, Polarity::depress, p.levels, 0.0);
  CHECK(d.programmed(0) == p.g_min);
  CHECK(d.pulse(0, Polarity::depress, 1, 0.0) == 0.0);
}

TEST_CASE("soft-bounds steps follow dG+ = a+ (g_max - G), dG- = a- (G - g_min)", "[devices]") {
  DeviceParameters p = test::device_of(DeviceKind::soft_bounds);
  p.alpha_p = 0.07;
  p.alpha_d = 0.03;  // asymmetric
  DeviceArray d(p, 1, 1, 0);
  double g = p.g_min;
  for (int k = 0; k < 50; ++k) {
    const double expected = p.alpha_p * (p.g_max - g);
    const double dg = d.pulse(0, Polarity::potentiate, 1, 0.0);
    REQUIRE(std::abs(dg - expected) <= 1e-12 * expected);
    g += expected;
  }
  for (int k = 0; k < 50; ++k) {
    const double expected = -p.alpha_d * (g - p.g_min);
    const double dg = d.pulse(0, Polarity::depress, 1, 0.0);
    REQUIRE(std::abs(dg - expected) <= 1e-12 * std::abs(expected));
    g += expected;
  }
}

TEST_CASE("exponential-saturation device follows G(p) = g_min + B (1 - e^{-p/A})", "[devices]") {
  // Closed form of the pulse response (Querlioz et al., IEEE Trans. Nanotechnol. 2013; from memory):
  // B = (g_max - g_min) / (1 - e^{-P/A}); P pulses take g_min to g_max.
  DeviceParameters p = test::device_of(DeviceKind::exponential_saturation);
  p.full_range_pulses = 60;
  p.saturation_p = 15;
  p.saturation_d = 40;
  DeviceArray d(p, 1, 1, 0);
  const double range = p.g_max - p.g_min;
  const double b_p = range / (1 - std::exp(-p.full_range_pulses / p.saturation_p));
  for (int n = 1; n <= 60; ++n) {
    d.pulse(0, Polarity::potentiate, 1, 0.0);
    const double expected = p.g_min + b_p * (1 - std::exp(-n / p.saturation_p));
    REQUIRE(std::abs(d.programmed(0) - expected) <= 1e-12 * p.g_max);
  }
  CHECK(std::abs(d.programmed(0) - p.g_max) <= 1e-12 * p.g_max);
  // Depression from g_max: G(q) = g_max - B_d (1 - e^{-q/A_d}).
  const double b_d = range / (1 - std::exp(-p.full_range_pulses / p.saturation_d));
  for (int q = 1; q <= 60; ++q) {
    d.pulse(0, Polarity::depress, 1, 0.0);
    const double expected = p.g_max - b_d * (1 - std::exp(-q / p.saturation_d));
    REQUIRE(std::abs(d.programmed(0) - expected) <= 1e-12 * p.g_max);
  }
}

TEST_CASE("binary stochastic device switches with the stated probability", "[devices]") {
  DeviceParameters p = test::device_of(DeviceKind::binary_stochastic);
  p.p_set = 0.2;
  constexpr int n = 20000;
  DeviceArray d(p, n, 3, 0);
  int switched = 0;
  for (int i = 0; i < n; ++i) {
    d.pulse(i, Polarity::potentiate, 1, 0.0);
    switched += d.programmed(i) == p.g_max;
    REQUIRE((d.programmed(i) == p.g_max || d.programmed(i) == p.g_min));
  }
  // Binomial(n, p_set): 4 standard deviations (false failure ~6e-5 for a fresh seed).
  CHECK(std::abs(switched - n * p.p_set) < 4 * std::sqrt(n * p.p_set * (1 - p.p_set)));
}
