#pragma once
// One programming pulse: the conductance a device moves to from conductance g.
//
// Each device kind has its own file with its law (linear_levels.cpp, soft_bounds.cpp,
// exponential_saturation.cpp, phase_change.cpp, binary_stochastic.cpp); this header
// dispatches on the kind. `mean_step` is the expected change of one pulse without
// noise (the law itself); `apply_pulse` draws one realisation, adding cycle-to-cycle
// programming noise where the kind has it. Results are clamped to the device's range.
#include "core/random_stream.hpp"
#include "devices/device_parameters.hpp"
#include "devices/polarity.hpp"

namespace nvsyn {

// The parameters of one particular device after device-to-device variation.
struct DeviceVariation {
  double g_max = 0.0;       // S, this device's upper bound
  double step_scale = 1.0;  // multiplies every step size of this device
};

// Expected signed conductance change of one pulse at g (S). Zero where a pulse
// cannot move the device (phase-change depression, a saturated bound).
double mean_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol);

// Conductance after one pulse, with the kind's randomness drawn from `rng`.
double apply_pulse(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol, RandomStream& rng);

namespace device_laws {
double linear_levels_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol);
double linear_levels_snap(const DeviceParameters& p, const DeviceVariation& v, double g);
double soft_bounds_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol);
double exponential_saturation_step(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol);
// sum c_i x^i (Horner); the form of the phase-change increment laws.
double evaluate_polynomial(const std::vector<double>& coefficients, double x);
double phase_change_mean_increment(const DeviceParameters& p, const DeviceVariation& v, double g);
double phase_change_increment_sd(const DeviceParameters& p, const DeviceVariation& v, double g);
double phase_change_reset(const DeviceParameters& p, RandomStream& rng);
double binary_switch(const DeviceParameters& p, const DeviceVariation& v, double g, Polarity pol, RandomStream& rng);
}  // namespace device_laws

}  // namespace nvsyn
