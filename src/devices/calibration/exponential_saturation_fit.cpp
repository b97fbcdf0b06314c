// exponential_saturation calibration. The law (devices/exponential_saturation.cpp) is
// a soft bound towards a point beyond the range, clamped at the range:
//   potentiation: target T_p = g_min + B_p, B_p = (g_max - g_min)/(1 - e^{-P/A_p}),
//                 G_k = min(T_p - (T_p - G) r_p^k, g_max),  r_p = 1 - s (1 - e^{-1/A_p}),
//   depression:   target T_d = g_max - B_d,
//                 G_k = max(T_d + (G - T_d) r_d^k, g_min),  r_d = 1 - s (1 - e^{-1/A_d}),
// (s: the device's step scale). Clamping once after k pulses equals clamping every
// pulse, because the unclamped sequence approaches its target monotonically.
// Identifiability: one-pulse slopes give A_p and A_d, the clamps give g_min and g_max,
// and the two targets over-determine P, so P can be fitted when ramps reach both
// bounds; --full-range-pulses holds it instead.
#include <algorithm>
#include <cmath>
#include <fmt/format.h>

#include "devices/calibration/fit_device.hpp"
#include "devices/calibration/step_law_fit.hpp"

namespace nvsyn::calibration {
namespace {

// Saturation constant A from a one-pulse slope b = e^{-1/A}.
double saturation_from_slope(double b) { return -1.0 / std::log(std::clamp(b, 0.5, 0.999)); }

// P from a target lying `beyond` (> range) past the opposite bound: range = beyond (1 - e^{-P/A}).
double full_range_from_target(double beyond, double range, double a) {
  if (!(beyond > range * 1.0001)) return 3.0 * a;  // target at the bound: the ramp saturates well within P
  return -a * std::log1p(-range / beyond);
}

}  // namespace

FitResult fit_exponential_saturation(const PulseData& data, const TransitionSet& set, const FitOptions& options) {
  const StepLawStart start = step_law_start(set);
  const double range0 = std::max(start.g_high - start.g_low, 1e-30);
  const double a_p0 = saturation_from_slope(start.slope_p), a_d0 = saturation_from_slope(start.slope_d);
  const double target_p = start.slope_p < 1 ? start.intercept_p / (1 - start.slope_p) : start.g_high;
  const double target_d = start.slope_d < 1 ? start.intercept_d / (1 - start.slope_d) : start.g_low;
  const double p0 = std::clamp(0.5 * (full_range_from_target(target_p - start.g_low, range0, a_p0) +
                                      full_range_from_target(start.g_high - target_d, range0, a_d0)),
                               2.0, 1e4);
  const bool fixed_p = options.full_range_pulses.has_value();

  StepLaw law;
  law.kind = DeviceKind::exponential_saturation;
  const double scale = std::max(start.g_high, 1e-30);
  law.parameters = {{"g_min", ParameterRange::any, scale},
                    {"g_max", ParameterRange::any, scale},
                    {"saturation_p", ParameterRange::positive, a_p0},
                    {"saturation_d", ParameterRange::positive, a_d0}};
  law.start = {start.g_low, start.g_high, a_p0, a_d0};
  if (!fixed_p) {
    law.parameters.push_back({"full_range_pulses", ParameterRange::positive, p0});
    law.start.push_back(p0);
  }
  const double given_p = fixed_p ? *options.full_range_pulses : 0.0;
  law.predict = [fixed_p, given_p](std::span<const double> x, double g_max, double s, double, const Transition& t) {
    const double g_min = x[0], range = g_max - g_min;
    const double p = fixed_p ? given_p : x[4];
    if (t.polarity == Polarity::potentiate) {
      const double a = x[2];
      const double target = g_min + range / (-std::expm1(-p / a));
      const double r = 1.0 - s * (-std::expm1(-1.0 / a));
      return std::min(target - (target - t.g_from) * std::pow(r, t.pulses), g_max);
    }
    const double a = x[3];
    const double target = g_max - range / (-std::expm1(-p / a));
    const double r = 1.0 - s * (-std::expm1(-1.0 / a));
    return std::max(target + (t.g_from - target) * std::pow(r, t.pulses), g_min);
  };
  // A common step scale multiplies 1 - e^{-1/A} in both directions.
  law.absorb_scale = [](std::vector<double>& x, double factor) {
    for (std::size_t k : {2, 3}) {
      const double q = std::min(-std::expm1(-1.0 / x[k]) * factor, 1.0 - 1e-12);
      x[k] = -1.0 / std::log1p(-q);
    }
  };

  const StepLawFit f = fit_step_law(law, set, data);
  const auto& x = f.parameters;
  const auto& se = f.standard_errors;

  FitResult r;
  r.kind = DeviceKind::exponential_saturation;
  r.method = "Levenberg-Marquardt fit of the k-pulse closed form to transitions between successive reads of each ramp";
  r.parameters.push_back(nominal_parameter(f, 0, "g_min", Dimension::conductance));
  r.parameters.push_back(nominal_parameter(f, 1, "g_max", Dimension::conductance));
  if (fixed_p)
    r.parameters.push_back(
        {"full_range_pulses", Dimension::dimensionless, {given_p}, {}, false, false, "given with --full-range-pulses"});
  else
    r.parameters.push_back(nominal_parameter(f, 4, "full_range_pulses", Dimension::dimensionless));
  r.parameters.push_back(nominal_parameter(f, 2, "saturation_p", Dimension::dimensionless));
  r.parameters.push_back(nominal_parameter(f, 3, "saturation_d", Dimension::dimensionless));
  r.parameters.push_back(f.programming_noise);
  if (f.per_device) {
    r.parameters.push_back(f.d2d_g_max);
    r.parameters.push_back(f.d2d_step);
  }
  r.fit = assess_fit(f.sample);
  r.notes = f.notes;
  if (!fixed_p && se[4] > 0.5 * x[4])
    r.notes.push_back(
        fmt::format("full_range_pulses is poorly determined ({:.3g} +- {:.2g}): ramps that reach both "
                    "bounds determine it; or give it with --full-range-pulses",
                    x[4], se[4]));
  return r;
}

}  // namespace nvsyn::calibration
