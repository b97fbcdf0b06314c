// Exponential-saturation pulse response of bidirectional resistive devices
// (form used by Querlioz et al., IEEE Trans. Nanotechnol. 12:288, 2013; from memory):
//   potentiation after p pulses from g_min: G(p) = g_min + B_p (1 - e^{-p/A_p}),
//   depression after q pulses from g_max:   G(q) = g_max - B_d (1 - e^{-q/A_d}),
//   B_x = (g_max - g_min) / (1 - e^{-P/A_x}), P = full_range_pulses.
// Eliminating p gives the state-dependent step of one pulse at G:
//   dG+ = (g_min + B_p - G)(1 - e^{-1/A_p}),   dG- = -(G - g_max + B_d)(1 - e^{-1/A_d}),
// a soft bound towards a point beyond the range, clamped at the range.
#include <algorithm>
#include <cmath>

#include "devices/pulse_response.hpp"

namespace nvsyn::device_laws {

double exponential_saturation_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol) {
  const double range = v.g_max - p.g_min;
  if (pol == Polarity::potentiate) {
    const double b = range / (-std::expm1(-p.full_range_pulses / p.saturation_p));
    const double step = v.step_scale * (p.g_min + b - g) * (-std::expm1(-1.0 / p.saturation_p));
    return std::min(step, v.g_max - g);
  }
  const double b = range / (-std::expm1(-p.full_range_pulses / p.saturation_d));
  const double step = v.step_scale * (g - v.g_max + b) * (-std::expm1(-1.0 / p.saturation_d));
  return -std::min(step, g - p.g_min);
}

}  // namespace nvsyn::device_laws
