// Finite-level linear device: N equal steps of (g_max - g_min)/N between the
// bounds, one step per pulse; N pulses from g_min reach g_max exactly and further
// pulses do nothing (hard bounds).
#include <algorithm>
#include <cmath>

#include "devices/pulse_response.hpp"

namespace nvsyn::device_laws {

double linear_levels_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol) {
  const double step = (v.g_max - p.g_min) / p.levels;
  const double target = pol == Polarity::potentiate ? std::min(g + step, v.g_max) : std::max(g - step, p.g_min);
  return target - g;
}

// Without programming noise the conductance stays on its grid of levels: snapping
// removes the rounding that repeated additions would otherwise accumulate.
double linear_levels_snap(const DeviceParameters& p, const DeviceVariation& v, double g) {
  const double step = (v.g_max - p.g_min) / p.levels;
  const double level = std::round((g - p.g_min) / step);
  if (level >= p.levels) return v.g_max;
  if (level <= 0) return p.g_min;
  return p.g_min + level * step;
}

}  // namespace nvsyn::device_laws
