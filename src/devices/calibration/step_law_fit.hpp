#pragma once
// The fit shared by the gradual, bidirectional kinds (linear_levels, soft_bounds,
// exponential_saturation): a step law fitted to transitions, then per-device
// refinement and the cycle-to-cycle noise estimate.
//
// 1. Pooled fit: every transition (G before, k pulses, G after) of every device, by
//    Levenberg-Marquardt on the law's k-pulse closed form.
// 2. Device-to-device: with at least 3 devices of enough transitions each, each
//    device's own g_max (and step scale, where the kind has one) is fitted with the
//    nominal parameters held, as DeviceArray varies them; then the nominal parameters
//    are refitted with the device values held, alternating until they settle. Step
//    scales are normalised to mean 1, the nominal g_max is the devices' mean. The
//    relative spread across devices, less the part explained by each device's own
//    fit uncertainty, estimates d2d_g_max and d2d_step. (A pooled fit alone would be
//    biased by the spread: the law is nonlinear in g_max and the step scale.)
// 3. Cycle-to-cycle: DeviceArray scales each step by (1 + programming_noise N(0,1)),
//    so over single-pulse transitions away from the bounds
//      programming_noise^2 = sum r_i^2 / sum dG_i^2 * n/(n - p)
//    with dG_i the predicted step. Read noise in the measurements adds to it.
// Residuals for the goodness of fit come from the most detailed model fitted (the
// per-device one when it exists), so device-to-device spread is not mistaken for misfit.
#include <functional>
#include <span>
#include <string>
#include <vector>

#include "devices/calibration/fit_result.hpp"
#include "devices/calibration/least_squares.hpp"
#include "devices/calibration/spread.hpp"
#include "devices/calibration/transitions.hpp"
#include "devices/pulse_data.hpp"

namespace nvsyn::calibration {

struct StepLaw {
  DeviceKind kind = DeviceKind::ideal;
  // Nominal parameters; the first two are g_min and g_max (S).
  std::vector<ParameterSpec> parameters;
  std::vector<double> start;
  // Expected conductance after t.pulses pulses from t.g_from in t.polarity, for nominal
  // parameters `x`, one device's g_max and step scale, and the relative step noise
  // (programming_noise; laws whose clamp at a bound cuts the noisy step use it).
  std::function<double(std::span<const double> x, double g_max, double step_scale, double noise, const Transition& t)>
      predict;
  // The expected step depends on the noise (a clamp that a noisy step often reaches):
  // fit, estimate the noise, and refit with it until the estimate settles.
  bool noise_in_mean = false;
  bool has_step_scale = true;  // false: the law has no step size apart from g_max
  // Changes the nominal parameters `x` so that every step is `factor` times larger
  // (what a common step scale of all devices means for this law).
  std::function<void(std::vector<double>& x, double factor)> absorb_scale;
};

struct StepLawFit {
  std::vector<double> parameters, standard_errors;  // nominal, as StepLaw::parameters
  std::vector<bool> held;                           // not fitted (no standard error): held at a bound the data imply
  std::vector<std::string> held_reason;
  bool per_device = false;  // step 2 was possible
  FittedParameter programming_noise, d2d_g_max, d2d_step;
  FitSample sample;
  std::vector<std::string> notes;
};

// Throws UserError (at the end of `data`) when there are too few transitions, when
// the fit does not converge or when the data do not determine every parameter.
StepLawFit fit_step_law(const StepLaw& law, const TransitionSet& set, const PulseData& data);

// Nominal parameter k of a step-law fit as a FittedParameter (no error when held).
FittedParameter nominal_parameter(const StepLawFit& fit, std::size_t k, const std::string& key, Dimension dimension);

// Starting values from data: the extremes of the conductances, and per polarity the
// straight line G_after = a + b G_before through single-pulse transitions away from
// the bounds (the shape every gradual law takes for one pulse).
struct StepLawStart {
  double g_low = 0.0, g_high = 0.0;
  double slope_p = 1.0, intercept_p = 0.0;  // potentiation
  double slope_d = 1.0, intercept_d = 0.0;  // depression
  double median_step = 0.0;                 // median |G_after - G_before| / k
};
StepLawStart step_law_start(const TransitionSet& set);

}  // namespace nvsyn::calibration
