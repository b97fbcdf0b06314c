// Power-law drift: G(t) = G(t_p) ((t - t_p)/t0)^(-nu) (Ielmini, Lacaita & Mantegazza,
// IEEE Trans. Electron Devices 54:308, 2007).
#include <catch2/catch.hpp>
#include <cmath>

#include "devices/device_array.hpp"
#include "device_test_support.hpp"

using namespace nvsyn;

namespace {
// Least-squares slope of log G against log (t - t_p).
double log_log_slope(const DeviceArray& d, std::size_t i, double t_p) {
  double sx = 0, sy = 0, sxx = 0, sxy = 0;
  int n = 0;
  for (double dt = 10.0; dt <= 1e7; dt *= 1.5, ++n) {
    const double x = std::log(dt), y = std::log(d.read_mean(i, t_p + dt));
    sx += x; sy += y; sxx += x * x; sxy += x * y;
  }
  return (n * sxy - sx * sy) / (n * sxx - sx * sx);
}
}  // namespace

TEST_CASE("without noise the log-log slope of G(t) is -nu within 1%", "[devices][drift]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  p.drift_nu = 0.1;  // amorphous phase-change value (Ielmini et al. 2007)
  DeviceArray d(p, 1, 1, 0);
  d.pulse(0, Polarity::potentiate, 20, 5.0);
  const double slope = log_log_slope(d, 0, 5.0);
  CHECK(std::abs(slope + p.drift_nu) <= 0.01 * p.drift_nu);
  // Before t0 after programming there is no drift.
  CHECK(d.read_mean(0, 5.0 + 0.5) == d.programmed(0));
}

TEST_CASE("with device-to-device variation the mean slope matches the mean exponent", "[devices][drift]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  p.drift_nu = 0.06;
  p.drift_nu_sd = 0.015;
  constexpr int n = 4000;
  DeviceArray d(p, n, 17, 0);
  double sum = 0, sum_sq = 0;
  for (int i = 0; i < n; ++i) {
    d.pulse(i, Polarity::potentiate, 30, 0.0);
    const double nu = -log_log_slope(d, i, 0.0);
    sum += nu;
    sum_sq += nu * nu;
  }
  const double mean = sum / n, sd = std::sqrt(sum_sq / n - mean * mean);
  // Standard error of the mean: sd/sqrt(n); 3 standard errors (0.3% false failures for a fresh seed).
  CHECK(std::abs(mean - p.drift_nu) < 3 * sd / std::sqrt(n));
  CHECK(sd == Approx(p.drift_nu_sd).epsilon(0.1));
}
