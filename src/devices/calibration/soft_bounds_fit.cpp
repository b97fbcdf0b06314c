// soft_bounds calibration. The law (devices/soft_bounds.cpp) moves a fixed fraction
// of the remaining range per pulse, so k pulses from G give the closed forms
//   potentiation: G_k = g_max - (g_max - G)(1 - alpha_p)^k,
//   depression:   G_k = g_min + (G - g_min)(1 - alpha_d)^k,
// with the device's step scale s multiplying alpha. For one pulse both are straight
// lines in G (slope 1 - alpha, intercept alpha g_max or alpha g_min), which gives the
// starting values; the fit itself uses every transition, whatever its k.
#include <algorithm>
#include <cmath>

#include "devices/calibration/fit_device.hpp"
#include "devices/calibration/step_law_fit.hpp"

namespace nvsyn::calibration {

FitResult fit_soft_bounds(const PulseData& data, const TransitionSet& set) {
  const StepLawStart start = step_law_start(set);
  const double alpha_p0 = std::clamp(1.0 - start.slope_p, 1e-3, 0.9);
  const double alpha_d0 = std::clamp(1.0 - start.slope_d, 1e-3, 0.9);

  StepLaw law;
  law.kind = DeviceKind::soft_bounds;
  const double scale = std::max(start.g_high, 1e-30);
  law.parameters = {{"g_min", ParameterRange::any, scale},
                    {"g_max", ParameterRange::any, scale},
                    {"alpha_p", ParameterRange::unit_interval, 1.0},
                    {"alpha_d", ParameterRange::unit_interval, 1.0}};
  law.start = {start.g_low, start.g_high, alpha_p0, alpha_d0};
  law.predict = [](std::span<const double> x, double g_max, double s, double, const Transition& t) {
    const double g_min = x[0];
    double g;
    if (t.polarity == Polarity::potentiate)
      g = g_max - (g_max - t.g_from) * std::pow(1.0 - s * x[2], t.pulses);
    else
      g = g_min + (t.g_from - g_min) * std::pow(1.0 - s * x[3], t.pulses);
    return std::clamp(g, g_min, std::max(g_min, g_max));
  };
  law.absorb_scale = [](std::vector<double>& x, double factor) {
    for (std::size_t k : {2, 3}) x[k] = std::min(x[k] * factor, 1.0 - 1e-9);
  };

  const StepLawFit f = fit_step_law(law, set, data);

  FitResult r;
  r.kind = DeviceKind::soft_bounds;
  r.method = "Levenberg-Marquardt fit of the k-pulse closed form to transitions between successive reads of each ramp";
  const char* keys[] = {"g_min", "g_max", "alpha_p", "alpha_d"};
  for (std::size_t k = 0; k < 4; ++k)
    r.parameters.push_back(nominal_parameter(f, k, keys[k], k < 2 ? Dimension::conductance : Dimension::dimensionless));
  r.parameters.push_back(f.programming_noise);
  if (f.per_device) {
    r.parameters.push_back(f.d2d_g_max);
    r.parameters.push_back(f.d2d_step);
  }
  r.fit = assess_fit(f.sample);
  r.notes = f.notes;
  return r;
}

}  // namespace nvsyn::calibration
