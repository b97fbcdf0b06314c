// Soft-bounded device: each pulse moves a fixed fraction of the remaining range,
//   dG+ = alpha_p (g_max - G),   dG- = -alpha_d (G - g_min),
// so steps shrink as the conductance nears its bound and the two directions can
// differ (asymmetry alpha_p != alpha_d). Common model of filamentary resistive
// and ferroelectric devices (soft-bound form, e.g. Fusi & Abbott, Nat. Neurosci. 10:485, 2007; from memory).
#include "devices/pulse_response.hpp"

namespace nvsyn::device_laws {

double soft_bounds_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol) {
  if (pol == Polarity::potentiate) return v.step_scale * p.alpha_p * (v.g_max - g);
  return -v.step_scale * p.alpha_d * (g - p.g_min);
}

}  // namespace nvsyn::device_laws
