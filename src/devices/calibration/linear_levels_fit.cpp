// linear_levels calibration. The law (devices/linear_levels.cpp): a step of
// (g_max - g_min)/N per pulse, clamped at the bounds, so k pulses from G give
//   potentiation: min(G + k (g_max - g_min)/N, g_max),
//   depression:   max(G - k (g_max - g_min)/N, g_min).
// N is fitted as a continuous number (the level count is not differentiable) and
// rounded for the preset; g_min and g_max are set by where ramps stop moving. With
// programming noise the expected end point near a bound is that of a censored normal
// step (clamped_mean below), fitted with the noise estimated from the residuals.
#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <numbers>

#include "devices/calibration/fit_device.hpp"
#include "devices/calibration/step_law_fit.hpp"

namespace nvsyn::calibration {
namespace {

// Mean of min(X, bound) (upper) or max(X, bound) (lower) for X ~ N(mu, sd^2), the
// mean of a normal variable censored at the bound (textbook): for the upper bound,
// with d = (mu - bound)/sd,
//   E[min(X, b)] = mu - (mu - b) Phi(d) - sd phi(d).
// DeviceArray's noisy linear step is G + s (1 + c N(0, 1)) clamped to the range, where
// s is the noiseless step already cut at the bound (linear_levels.cpp), so near a bound
// a device hovers just inside it rather than sitting on it; k pulses are the one-pulse
// mean applied k times (exact without noise, a close approximation with it).
double clamped_mean(double mu, double sd, double bound, bool upper) {
  if (!(sd > 0)) return upper ? std::min(mu, bound) : std::max(mu, bound);
  const double d = (upper ? mu - bound : bound - mu) / sd;
  const double cdf = 0.5 * std::erfc(-d / std::sqrt(2.0));
  const double pdf = std::exp(-0.5 * d * d) / std::sqrt(2.0 * std::numbers::pi);
  const double excess = (upper ? mu - bound : bound - mu) * cdf + sd * pdf;  // E[(X - b)^+] or E[(b - X)^+]
  return upper ? mu - excess : mu + excess;
}

}  // namespace

FitResult fit_linear_levels(const PulseData& data, const TransitionSet& set) {
  const StepLawStart start = step_law_start(set);
  const double range = std::max(start.g_high - start.g_low, 1e-30);
  const double levels0 = start.median_step > 0 ? std::clamp(range / start.median_step, 1.0, 1e6) : 16.0;

  StepLaw law;
  law.kind = DeviceKind::linear_levels;
  const double scale = std::max(start.g_high, 1e-30);
  law.parameters = {{"g_min", ParameterRange::any, scale},
                    {"g_max", ParameterRange::any, scale},
                    {"levels", ParameterRange::positive, levels0}};
  law.start = {start.g_low, start.g_high, levels0};
  law.has_step_scale = false;  // the step is (g_max - g_min)/N: g_max carries the device's variation
  law.noise_in_mean = true;
  law.predict = [](std::span<const double> x, double g_max, double, double noise, const Transition& t) {
    const double g_min = x[0], step = (g_max - g_min) / x[2];
    double g = t.g_from;
    for (std::uint32_t k = 0; k < t.pulses; ++k) {
      if (t.polarity == Polarity::potentiate) {
        const double taken = std::min(step, g_max - g);
        g = clamped_mean(g + taken, noise * std::abs(taken), g_max, true);
      } else {
        const double taken = std::max(g - step, g_min) - g;
        g = clamped_mean(g + taken, noise * std::abs(taken), g_min, false);
      }
    }
    return g;
  };

  const StepLawFit f = fit_step_law(law, set, data);
  const auto& x = f.parameters;

  FitResult r;
  r.kind = DeviceKind::linear_levels;
  r.method = "Levenberg-Marquardt fit of the k-pulse law to transitions between successive reads of each ramp";
  r.parameters.push_back(nominal_parameter(f, 0, "g_min", Dimension::conductance));
  r.parameters.push_back(nominal_parameter(f, 1, "g_max", Dimension::conductance));
  FittedParameter levels = nominal_parameter(f, 2, "levels", Dimension::dimensionless);
  levels.values = {std::max(1.0, std::round(x[2]))};
  levels.whole_number = true;
  levels.how += fmt::format(", {:.4g} before rounding", x[2]);
  r.parameters.push_back(levels);
  r.parameters.push_back(f.programming_noise);
  if (f.per_device) r.parameters.push_back(f.d2d_g_max);
  r.fit = assess_fit(f.sample);
  r.notes = f.notes;
  return r;
}

}  // namespace nvsyn::calibration
