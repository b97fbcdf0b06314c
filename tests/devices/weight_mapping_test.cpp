// Mapping weight matrices onto devices: exactness on ideal devices, the
// program-and-verify bound on finite levels, power-law drift of the mapped
// weights, failures by cause, and the error statistics against hand values.
#include <catch2/catch.hpp>
#include <cfloat>
#include <cmath>
#include <vector>

#include "core/random_stream.hpp"
#include "device_test_support.hpp"
#include "devices/weight_mapping.hpp"

using namespace nvsyn;

namespace {

SynapseLayoutParameters single_layout(const DeviceParameters& d, double weight_max) {
  SynapseLayoutParameters s;
  s.layout = SynapseLayout::single;
  s.gain = weight_max / d.g_max;
  s.verify.tolerance = 0.5 * d.nominal_step();
  return s;
}

// n weights spread over [low, high] with alternating signs.
std::vector<double> spread_weights(std::size_t n, double low, double high) {
  std::vector<double> w(n);
  RandomStream rng(5, StreamPurpose::weights, 0);
  for (std::size_t k = 0; k < n; ++k) w[k] = (k % 2 ? -1.0 : 1.0) * (low + (high - low) * rng.uniform());
  return w;
}

}  // namespace

TEST_CASE("ideal devices map every weight exactly, at every time", "[devices][mapping]") {
  const DeviceParameters d = test::device_of(DeviceKind::ideal);
  const SynapseLayoutParameters s = single_layout(d, 1e-9);
  const std::vector<double> w = spread_weights(500, 0.02e-9, 1e-9);
  WeightMappingOptions o;
  const WeightMappingResult r = map_weights(w, d, s, o);
  CHECK(r.write.failed == 0);
  for (std::size_t j = 0; j < r.times.size(); ++j)
    for (std::size_t k = 0; k < w.size(); ++k) {
      // w / gain * gain rounds twice: at most a few units in the last place.
      INFO("time " << r.times[j] << " s, weight " << k);
      REQUIRE(std::abs(r.read[j * w.size() + k] - w[k]) <= 4 * DBL_EPSILON * std::abs(w[k]));
      REQUIRE(std::abs(r.drift_only[j * w.size() + k] - w[k]) <= 4 * DBL_EPSILON * std::abs(w[k]));
    }
  CHECK(r.read_summary.back().max_abs <= 4 * DBL_EPSILON * 1e-9);
}

TEST_CASE("finite levels without noise: every in-range weight within half a step", "[devices][mapping]") {
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.levels = 32;
  const double weight_max = 0.2e-9;
  const SynapseLayoutParameters s = single_layout(d, weight_max);
  const double half_step = 0.5 * s.gain * d.nominal_step();
  const std::vector<double> w = spread_weights(1000, s.gain * d.g_min, weight_max);
  const WeightMappingResult r = map_weights(w, d, s, WeightMappingOptions{});
  CHECK(r.write.failed == 0);
  CHECK(r.tolerance == Approx(half_step));
  for (std::size_t k = 0; k < w.size(); ++k) {
    INFO("weight " << k << " = " << w[k] << " A, programmed " << r.programmed[k] << " A");
    REQUIRE(std::abs(r.programmed[k] - w[k]) <= half_step * (1 + 1e-12));
    REQUIRE(std::signbit(r.programmed[k]) == std::signbit(w[k]));
  }
  for (const WeightErrorSummary& e : r.read_summary) CHECK(e.within_tolerance == 1.0);
}

TEST_CASE("mapped weights drift as (t / t0)^-nu", "[devices][mapping]") {
  // Power-law drift G(t) = G(t0) (t/t0)^-nu (Ielmini, Lacaita & Mantegazza, IEEE
  // Trans. Electron Devices 54:308, 2007); a single-device weight is gain * G.
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.levels = 64;
  d.drift_nu = 0.1;
  d.drift_t0 = 1.0;
  const SynapseLayoutParameters s = single_layout(d, 0.2e-9);
  WeightMappingOptions o;
  o.times = {0.0, 0.5, 1.0, 10.0, 3600.0, 365.25 * 86400.0};

  SECTION("one exponent: every weight follows the law exactly") {
    const std::vector<double> w = spread_weights(200, 0.02e-9, 0.2e-9);
    const WeightMappingResult r = map_weights(w, d, s, o);
    REQUIRE(r.write.failed == 0);
    for (std::size_t j = 0; j < o.times.size(); ++j) {
      const double t = o.times[j];
      // DeviceArray keeps each device's exponent as a float: that is the exponent applied.
      const double nu = static_cast<float>(d.drift_nu);
      const double law = t > d.drift_t0 ? std::pow(t / d.drift_t0, -nu) : 1.0;
      for (std::size_t k = 0; k < w.size(); ++k)
        REQUIRE(r.drift_only[j * w.size() + k] / r.programmed[k] == Approx(law).epsilon(1e-12));
      CHECK(r.drift_summary[j].weight_ratio / r.drift_summary[0].weight_ratio == Approx(law).epsilon(1e-12));
    }
  }
  SECTION("exponents spread between devices: the mean follows the lognormal mean") {
    d.drift_nu_sd = 0.02;
    const std::size_t n = 20000;
    const std::vector<double> w = spread_weights(n, 0.02e-9, 0.2e-9);
    const WeightMappingResult r = map_weights(w, d, s, o);
    for (std::size_t j = 3; j < o.times.size(); ++j) {
      // With nu ~ N(mu, sigma) (clipping at 0 is 5 sd away), (t/t0)^-nu = e^{-nu L},
      // L = ln(t/t0), has mean e^{-mu L + sigma^2 L^2 / 2} and variance
      // e^{-2 mu L + 2 sigma^2 L^2} - e^{-2 mu L + sigma^2 L^2}.
      const double L = std::log(o.times[j] / d.drift_t0), mu = d.drift_nu, sigma = d.drift_nu_sd;
      const double mean = std::exp(-mu * L + 0.5 * sigma * sigma * L * L);
      const double sd = std::sqrt(std::exp(-2 * mu * L + 2 * sigma * sigma * L * L) - mean * mean);
      double sum = 0;
      for (std::size_t k = 0; k < n; ++k) sum += r.drift_only[j * n + k] / r.programmed[k];
      // 5 standard errors: false failure < 1e-6 per time.
      INFO("t = " << o.times[j] << " s");
      CHECK(sum / static_cast<double>(n) == Approx(mean).margin(5 * sd / std::sqrt(static_cast<double>(n))));
    }
  }
}

TEST_CASE("failed writes are counted by cause and stay in the statistics", "[devices][mapping]") {
  DeviceParameters d = test::device_of(DeviceKind::linear_levels);
  d.levels = 32;
  const double weight_max = 0.2e-9;
  const SynapseLayoutParameters s = single_layout(d, weight_max);
  SECTION("targets beyond the range") {
    std::vector<double> w = spread_weights(100, s.gain * d.g_min, weight_max);
    w[3] = 2 * weight_max;
    w[40] = -1.5 * weight_max;
    const WeightMappingResult r = map_weights(w, d, s, WeightMappingOptions{});
    CHECK(r.write.failed == 2);
    CHECK(r.write.out_of_range == 2);
    CHECK(r.status[3] == static_cast<std::uint8_t>(VerifyStatus::out_of_range));
    CHECK(r.status[40] == static_cast<std::uint8_t>(VerifyStatus::out_of_range));
    CHECK(r.read_summary[0].within_tolerance == Approx(98.0 / 100.0));
    CHECK(r.read_summary[0].max_abs >= weight_max);  // the failures dominate the worst error
  }
  SECTION("stuck devices") {
    d.stuck_low = 1.0;
    const std::vector<double> w = spread_weights(10, 0.1e-9, weight_max);
    const WeightMappingResult r = map_weights(w, d, s, WeightMappingOptions{});
    CHECK(r.write.unresponsive == 10);
    CHECK(r.write.failed == 10);
  }
}

TEST_CASE("error statistics against hand values", "[devices][mapping]") {
  // Errors -2, -1, 0, 1, 2 (A): mean 0, population sd sqrt(2), rms sqrt(2); percentile
  // q sits at (n - 1) q = 4 q between order statistics.
  const std::vector<double> weights{8, 9, 10, 11, 12}, targets{10, 10, 10, 10, 10};
  const std::vector<std::uint8_t> ok{1, 1, 1, 1, 0};
  const WeightErrorSummary e = summarise_weight_errors(weights, targets, ok, 1.0, 7.0);
  CHECK(e.time == 7.0);
  CHECK(e.mean == Approx(0.0).margin(1e-15));
  CHECK(e.sd == Approx(std::sqrt(2.0)));
  CHECK(e.rms == Approx(std::sqrt(2.0)));
  CHECK(e.max_abs == 2.0);
  CHECK(e.percentiles[0] == Approx(-2 + 0.04));  // q = 0.01: h = 0.04
  CHECK(e.percentiles[3] == Approx(0.0).margin(1e-15));
  CHECK(e.percentiles[4] == Approx(1.0));        // q = 0.75: h = 3
  CHECK(e.within_tolerance == Approx(3.0 / 5.0));
  CHECK(e.weight_ratio == Approx((8.0 + 9 + 10 + 11) / 40.0));  // the failed weight is left out
}

TEST_CASE("mapping options name the field", "[devices][mapping]") {
  WeightMappingOptions o;
  CHECK_NOTHROW(o.validate());  // the defaults validate
  o.times = {3600.0, 0.0};
  REQUIRE_THROWS_WITH(o.validate(), "error: 'times': times must be given in increasing order, without repeats");
  o.times = {};
  REQUIRE_THROWS_WITH(o.validate(), Catch::Contains("'times': give at least one time"));
}
