// Binary stochastic device: two states, g_min and g_max. A potentiating pulse on
// a low device switches it high with probability p_set; a depressing pulse on a
// high device switches it low with probability p_reset; other pulses do nothing.
// (Stochastic binary synapses: e.g. Senn & Fusi, Neural Comput. 2005; from memory.)
#include "devices/pulse_response.hpp"

namespace nvsyn::device_laws {

double binary_switch(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol, RandomStream& rng) {
  const bool high = g > 0.5 * (p.g_min + v.g_max);
  if (pol == Polarity::potentiate && !high && rng.uniform() < p.p_set) return v.g_max;
  if (pol == Polarity::depress && high && rng.uniform() < p.p_reset) return p.g_min;
  return high ? v.g_max : p.g_min;
}

}  // namespace nvsyn::device_laws
