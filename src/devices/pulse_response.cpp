#include "devices/pulse_response.hpp"

#include <algorithm>

namespace nvsyn {

double mean_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol) {
  using namespace device_laws;
  switch (p.kind) {
    case DeviceKind::ideal: return 0.0;
    case DeviceKind::linear_levels: return linear_levels_step(p, v, g, pol);
    case DeviceKind::soft_bounds: return soft_bounds_step(p, v, g, pol);
    case DeviceKind::exponential_saturation: return exponential_saturation_step(p, v, g, pol);
    case DeviceKind::phase_change:
      return pol == Polarity::potentiate ? std::min(phase_change_mean_increment(p, v, g), v.g_max - g) : 0.0;
    case DeviceKind::binary_stochastic: {
      const bool high = g > 0.5 * (p.g_min + v.g_max);
      if (pol == Polarity::potentiate) return high ? 0.0 : p.p_set * (v.g_max - p.g_min);
      return high ? -p.p_reset * (v.g_max - p.g_min) : 0.0;
    }
  }
  return 0.0;
}

double apply_pulse(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol, RandomStream& rng) {
  using namespace device_laws;
  double next = g;
  switch (p.kind) {
    case DeviceKind::ideal: return g;
    case DeviceKind::binary_stochastic: return binary_switch(p, v, g, pol, rng);
    case DeviceKind::phase_change: {
      if (pol == Polarity::depress) return g;
      const double increment = phase_change_mean_increment(p, v, g) + phase_change_increment_sd(p, v, g) * rng.normal();
      next = g + increment * (1.0 + p.programming_noise * rng.normal());
      break;
    }
    case DeviceKind::linear_levels:
      if (p.programming_noise == 0.0) return linear_levels_snap(p, v, g + linear_levels_step(p, v, g, pol));
      next = g + linear_levels_step(p, v, g, pol) * (1.0 + p.programming_noise * rng.normal());
      break;
    case DeviceKind::soft_bounds:
    case DeviceKind::exponential_saturation:
      next = g + mean_step(p, v, g, pol) * (1.0 + p.programming_noise * rng.normal());
      break;
  }
  return std::clamp(next, p.g_min, v.g_max);
}

}  // namespace nvsyn
