// The characterisation bench's statistics against values computed independently
// here, from the device laws (devices/characterisation_statistics.hpp holds the
// definitions). Statistical checks state their tolerance and false-failure rate.
#include <catch2/catch.hpp>
#include <cmath>

#include "core/error.hpp"
#include "device_test_support.hpp"
#include "devices/characterisation.hpp"
#include "devices/characterisation_statistics.hpp"
#include "devices/device_array.hpp"

using namespace nvsyn;

namespace {

CharacterisationProtocol small_protocol(std::uint32_t devices, std::uint32_t cycles, std::uint32_t pulses) {
  CharacterisationProtocol p;
  p.devices = devices;
  p.cycles = cycles;
  p.pulses = pulses;
  p.seed = 11;
  return p;
}

struct Bench {
  CharacterisationCurves curves;
  CharacterisationSummary summary;
};

Bench run(const DeviceParameters& d, const CharacterisationProtocol& p) {
  Bench b{run_characterisation(d, p), {}};
  b.summary = summarise_characterisation(b.curves, d);
  return b;
}

// Largest deviation of y(q) = (1 - r^q) / (1 - r^Q) from the line q / Q on [0, Q]:
// the normalised curve of a soft-bounded ramp crossing a band in Q pulses. Zero of
// the derivative: r^q* = (1 - r^Q) / (-Q ln r).
double soft_bound_deviation(double r, double q_total) {
  const double q = std::log((1.0 - std::pow(r, q_total)) / (-q_total * std::log(r))) / std::log(r);
  return (1.0 - std::pow(r, q)) / (1.0 - std::pow(r, q_total)) - q / q_total;
}

}  // namespace

TEST_CASE("linear levels: N levels, no asymmetry, no nonlinearity, no spread", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.levels = 20;
  const Bench b = run(d, small_protocol(5, 3, 0));
  const CharacterisationSummary& s = b.summary;
  CHECK(b.curves.pulses == 40);  // default: twice the 20 pulses of the range
  CHECK(s.devices_used == 5);
  CHECK(s.g_low == Approx(d.g_min).epsilon(1e-12));
  CHECK(s.g_high == Approx(d.g_max).epsilon(1e-12));
  CHECK(s.on_off_ratio == Approx(d.g_max / d.g_min).epsilon(1e-12));
  CHECK(s.levels == Approx(20.0).epsilon(1e-12));
  CHECK(s.step_up == Approx((d.g_max - d.g_min) / 20).epsilon(1e-12));
  CHECK(std::abs(s.asymmetry) < 1e-12);
  CHECK(s.nonlinearity_up < 1e-12);
  CHECK(s.nonlinearity_down < 1e-12);
  CHECK(s.c2c_step_spread < 1e-12);
  CHECK(s.d2d_g_high_spread < 1e-12);
  CHECK(s.notes.empty());
}

TEST_CASE("soft bounds: asymmetry, levels and nonlinearity follow from the alphas", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::soft_bounds);
  d.alpha_p = 0.05;
  d.alpha_d = 0.08;
  const std::uint32_t cycles = 4, pulses = 60;
  const Bench b = run(d, small_protocol(3, cycles, pulses));
  const CharacterisationSummary& s = b.summary;

  // The ramp ends by iterating the law: dG+ = a+ (g_max - G), dG- = -a- (G - g_min).
  double g = d.g_min, high = 0, low = 0;
  for (std::uint32_t c = 0; c < cycles; ++c) {
    for (std::uint32_t i = 0; i < pulses; ++i) g += d.alpha_p * (d.g_max - g);
    high += g / cycles;
    for (std::uint32_t i = 0; i < pulses; ++i) g -= d.alpha_d * (g - d.g_min);
    low += g / cycles;
  }
  REQUIRE(s.g_high == Approx(high).epsilon(1e-12));
  REQUIRE(s.g_low == Approx(low).epsilon(1e-12));

  // Pulses across the band [a, b] from the closed forms of the two exponential
  // approaches (g_max - G and G - g_min shrink by 1 - alpha per pulse).
  const double a = low + 0.1 * (high - low), bb = low + 0.9 * (high - low);
  const double rp = 1 - d.alpha_p, rd = 1 - d.alpha_d;
  const double n_p = std::log((d.g_max - a) / (d.g_max - bb)) / -std::log(rp);
  const double n_d = std::log((bb - d.g_min) / (a - d.g_min)) / -std::log(rd);
  // Tolerances: the statistics interpolate the curve linearly between whole pulses.
  // For a curve whose distance to its bound shrinks by r per pulse, a chord misplaces
  // a band edge by at most -ln(r)/8 pulses (< 0.011 here), hence: pulses 0.011,
  // levels 0.011/0.8 * 2, asymmetry 2 max(n_p, n_d) 0.011 / (n_p + n_d)^2 < 5e-4, and
  // the nonlinearity, sampled at whole pulses, within 0.5^2 |y''| / 2 + 0.011 / Q < 2e-3.
  CHECK(s.pulses_up == Approx(n_p).margin(0.011));
  CHECK(s.pulses_down == Approx(n_d).margin(0.011));
  CHECK(s.levels == Approx((n_p + n_d) / 1.6).margin(0.03));
  CHECK(s.asymmetry == Approx((n_d - n_p) / (n_d + n_p)).margin(5e-4));
  CHECK(s.asymmetry < 0);  // depression moves faster: alpha_d > alpha_p
  CHECK(s.nonlinearity_up == Approx(soft_bound_deviation(rp, n_p)).margin(2e-3));
  CHECK(s.nonlinearity_down == Approx(soft_bound_deviation(rd, n_d)).margin(2e-3));
}

TEST_CASE("symmetric soft bounds with a symmetric window have no asymmetry", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::soft_bounds);
  d.alpha_p = d.alpha_d = 0.06;
  const Bench b = run(d, small_protocol(2, 3, 80));
  // Equal alphas and ramps long enough that both ends sit equally close to their
  // bounds (0.94^80 < 1e-2): equal pulse counts both ways.
  CHECK(std::abs(b.summary.asymmetry) < 1e-3);
  CHECK(b.summary.nonlinearity_up == Approx(b.summary.nonlinearity_down).margin(1e-3));
}

TEST_CASE("cycle-to-cycle spread matches the programming noise", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.levels = 48;
  d.programming_noise = 0.05;
  const std::uint32_t devices = 200, cycles = 10;
  const Bench b = run(d, small_protocol(devices, cycles, 96));
  const CharacterisationSummary& s = b.summary;
  // Inside the band every step is s (1 + sigma xi): the pooled relative sd estimates
  // sigma from devices x ~78 steps x 9 degrees of freedom (> 1e5): the relative sd
  // of the estimate is below 0.3 %, so 1 % is over 3 sd (false failure < 1e-3; the
  // seed is fixed, so the check is deterministic).
  CHECK(s.c2c_step_spread == Approx(d.programming_noise).epsilon(0.01));
  // Reads after i pulses from a clamped bound have sd s sigma sqrt(i); the band holds
  // i = 5..43 on both ramps (0.1 * 48 = 4.8, 0.9 * 48 = 43.2), mean i = 24, so the
  // pooled sd over the window is sigma sqrt(24) / 48. Treating each device's ramp as
  // 9 degrees of freedom (fully correlated reads, pessimistic): relative sd of the
  // estimate sqrt(2 / 3600) / 2 = 1.2 %; 6 % is 5 sd (false failure < 1e-6).
  CHECK(s.c2c_curve_spread == Approx(d.programming_noise * std::sqrt(24.0) / 48.0).epsilon(0.06));
  CHECK(s.d2d_g_high_spread < 1e-12);  // no device-to-device variation: every device ends at g_max
}

TEST_CASE("device-to-device spread matches d2d_g_max", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.g_min = 0.0;  // g_max of a device is then g_max (1 + sigma xi): relative sd sigma
  d.levels = 16;
  d.d2d_g_max = 0.1;
  const std::uint32_t devices = 10000;
  const Bench b = run(d, small_protocol(devices, 1, 0));
  // Sample sd of 10^4 normal values: relative sd 1 / sqrt(2 (n - 1)) = 0.7 %; 4 % is
  // over 5 sd (false failure < 1e-6). Clipping at 0.05 of the range is 9.5 sd away.
  CHECK(b.summary.d2d_g_high_spread == Approx(d.d2d_g_max).epsilon(0.04));
  CHECK(std::isnan(b.summary.c2c_step_spread));  // one cycle: no cycle-to-cycle spread
}

TEST_CASE("measured drift exponent matches drift_nu", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.drift_nu = 0.1;  // amorphous phase-change value (Ielmini, Lacaita & Mantegazza 2007)
  // DeviceArray keeps each device's exponent as a float: that is the exponent applied.
  const double stored_nu = static_cast<float>(d.drift_nu);
  SECTION("one exponent: every fit recovers it") {
    const Bench b = run(d, small_protocol(4, 1, 0));
    CHECK(b.summary.drift_fits == 4 * 3);
    CHECK(b.summary.drift_nu_mean == Approx(stored_nu).epsilon(1e-9));
    CHECK(b.summary.drift_nu_sd < 1e-9);
  }
  SECTION("a spread of exponents between devices") {
    d.drift_nu_sd = 0.02;
    const Bench b = run(d, small_protocol(5000, 1, 0));
    // Every level of a device has the same exponent, so the sample holds 5000
    // independent values: sd of the mean 0.02 / sqrt(5000) = 2.8e-4 (5 sd: 1.4e-3);
    // relative sd of the sd 1 %, 5 % is 5 sd (false failure < 1e-6 each).
    CHECK(b.summary.drift_nu_mean == Approx(0.1).margin(1.4e-3));
    CHECK(b.summary.drift_nu_sd == Approx(0.02).epsilon(0.05));
  }
  SECTION("read delays before drift_t0 are left out of the fit") {
    d.drift_t0 = 50.0;
    CharacterisationProtocol p = small_protocol(2, 1, 0);
    p.read_delays = {1.0, 10.0, 100.0, 1000.0};
    const Bench b = run(d, p);
    CHECK(b.summary.drift_nu_mean == Approx(stored_nu).epsilon(1e-9));
  }
}

TEST_CASE("stuck devices are left out and counted", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.levels = 10;
  d.stuck_low = 0.2;
  const Bench b = run(d, small_protocol(200, 2, 0));
  std::uint32_t stuck = 0;
  for (std::uint8_t h : b.curves.health) stuck += h != 0 ? 1 : 0;
  CHECK(stuck > 0);
  CHECK(b.summary.devices_excluded == stuck);
  CHECK(b.summary.devices_used == 200 - stuck);
  // The flat lines of stuck devices do not pull the window in.
  CHECK(b.summary.g_high == Approx(d.g_max).epsilon(1e-12));
  CHECK(b.summary.levels == Approx(10.0).epsilon(1e-12));
}

TEST_CASE("phase-change bench: a reset starts each cycle and there is no down ramp", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::phase_change);
  d.reset_mean = 0.5e-6;  // far enough above g_min that reset draws are never clipped
  const Bench b = run(d, small_protocol(20, 3, 30));
  CHECK(b.curves.down.empty());
  CHECK_FALSE(b.curves.gradual_depression);
  CHECK(std::isnan(b.summary.asymmetry));
  CHECK(b.summary.levels > 0);
  // Each cycle: one reset and 30 set pulses; then program-and-verify for the drift levels.
  for (std::uint32_t n : b.curves.pulse_count) CHECK(n >= 3 * 31);
  // After a reset the first read is a draw from N(reset_mean, reset_sd) (no read
  // noise configured): the mean of 60 draws has sd 0.02 uS / sqrt(60), 0.5 % of
  // reset_mean; 5 % is 10 sd.
  CHECK(b.summary.g_low == Approx(d.reset_mean).epsilon(0.05));
}

TEST_CASE("same seed gives the same curves; another seed does not", "[devices][bench]") {
  DeviceParameters d = test::device_of(DeviceKind::soft_bounds);
  d.programming_noise = 0.1;
  d.read_noise = 0.01;
  CharacterisationProtocol p = small_protocol(3, 2, 20);
  const CharacterisationCurves a = run_characterisation(d, p), again = run_characterisation(d, p);
  p.seed = 12;
  const CharacterisationCurves other = run_characterisation(d, p);
  CHECK(a.up == again.up);
  CHECK(a.drift == again.drift);
  CHECK(a.up != other.up);
}

TEST_CASE("protocol rules name the field", "[devices][bench]") {
  const DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  CharacterisationProtocol p;
  p.read_delays = {10.0, 1.0};
  REQUIRE_THROWS_WITH(p.validate(d), "error: 'read_delays': read delays must be given in increasing order, without repeats");
  p = {};
  p.devices = 0;
  REQUIRE_THROWS_WITH(p.validate(d), "error: 'devices': must be at least 1");
  p = {};
  p.devices = 100000;
  p.cycles = 1000;
  REQUIRE_THROWS_WITH(p.validate(d), Catch::Contains("'pulses': devices x cycles x pulses is too large"));
  CHECK_NOTHROW(CharacterisationProtocol{}.validate(d));  // the defaults validate
}
