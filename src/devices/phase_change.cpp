// Phase-change (accumulative) device, a statistical model:
//  * a set (potentiating) pulse adds an increment drawn from a normal distribution
//    whose mean and standard deviation are functions of the present conductance,
//    mean(x) = sum m_i x^i, sd(x) = sum s_i x^i with x = (G - g_min)/(g_max - g_min);
//    both are fitted to measured pulse data (nvsyn fit-device --model phase_change).
//    The mean falls towards zero as G rises: potentiation saturates.
//  * there is no gradual depression: a depressing pulse does nothing; only a reset
//    (an abrupt melt-quench) lowers G, to a draw from N(reset_mean, reset_sd).
// Drift and 1/f read noise, which dominate phase-change read-out, are applied by
// DeviceArray at read time (devices/drift.hpp, devices/read_noise.hpp).
#include <algorithm>
#include <cmath>

#include "devices/pulse_response.hpp"

namespace nvsyn::device_laws {
double evaluate_polynomial(const std::vector<double>& c, double x) {
  double y = 0.0;
  for (auto it = c.rbegin(); it != c.rend(); ++it) y = y * x + *it;
  return y;
}

namespace {

double normalised(const DeviceParameters& p, const DeviceVariation& v, double g) {
  return (g - p.g_min) / (v.g_max - p.g_min);
}

}  // namespace

double phase_change_mean_increment(const DeviceParameters& p, const DeviceVariation& v, double g) {
  return v.step_scale * std::max(0.0, evaluate_polynomial(p.increment_mean, normalised(p, v, g)));
}

double phase_change_increment_sd(const DeviceParameters& p, const DeviceVariation& v, double g) {
  return v.step_scale * std::max(0.0, evaluate_polynomial(p.increment_sd, normalised(p, v, g)));
}

double phase_change_reset(const DeviceParameters& p, RandomStream& rng) {
  return std::max(p.g_min, p.reset_mean + p.reset_sd * rng.normal());
}

}  // namespace nvsyn::device_laws
