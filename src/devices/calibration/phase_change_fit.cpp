// phase_change calibration. The model (devices/phase_change.cpp): a set pulse at G adds
// an increment ~ N(s mean(x), s sd(x)), x = (G - g_min)/(g_max_d - g_min), with
// polynomials mean(x) = sum m_i x^i and sd(x) = sum s_i x^i, clamped at the device's
// g_max_d; a reset draws G ~ N(reset_mean, reset_sd); there is no gradual depression.
//
//  * g_min = 0 S: the law needs a lower end for x, and 0 is the physical one.
//  * g_max: the median over devices of each device's largest read, the level its set
//    ramps saturate at (the data must contain saturated ramps for this to mean g_max).
//  * mean(x): linear least squares of single-pulse increments on powers of x. Increments
//    that the clamp at g_max may have cut short are left out: first every transition
//    that ends on its device's largest read, then, after a first fit, every transition
//    starting within mean + 3 sd of that read (about 0.13% clamping chance kept).
//  * device-to-device: with 3 or more devices, each device's step scale s and g_max_d
//    are fitted with mean(x) held (Levenberg-Marquardt); mean(x) is then refitted to
//    increments divided by s at the devices' own x. d2d_step and d2d_g_max are the
//    relative spreads of s and g_max_d - g_min.
//  * sd(x): E|r| = sd sqrt(2/pi) for a normal residual r, so sqrt(pi/2)|r|/s is fitted
//    by linear least squares on the same powers of x.
//  * reset_mean, reset_sd: mean and sample sd of the first read of each cycle (pulse 0
//    of a potentiate ramp), standard errors sd/sqrt(n) and sd/sqrt(2(n-1)).
#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <numbers>

#include "devices/calibration/fit_device.hpp"
#include "devices/calibration/least_squares.hpp"
#include "devices/calibration/step_law_fit.hpp"
#include "devices/pulse_response.hpp"

namespace nvsyn::calibration {
namespace {

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

LeastSquaresFit fit_polynomial(const std::vector<double>& x, const std::vector<double>& y, int degree) {
  Eigen::MatrixXd a(static_cast<Eigen::Index>(x.size()), degree + 1);
  Eigen::VectorXd b(static_cast<Eigen::Index>(x.size()));
  for (std::size_t i = 0; i < x.size(); ++i) {
    const auto row = static_cast<Eigen::Index>(i);
    double p = 1.0;
    for (int k = 0; k <= degree; ++k, p *= x[i]) a(row, k) = p;
    b[row] = y[i];
  }
  return fit_linear(a, b);
}

}  // namespace

FitResult fit_phase_change(const PulseData& data, const TransitionSet& set, const FitOptions& options) {
  const int degree = options.polynomial_degree;
  FitResult r;
  r.kind = DeviceKind::phase_change;
  r.method = fmt::format(
      "linear least squares of single set-pulse increments on a degree-{} polynomial of the "
      "normalised conductance; reset statistics from the first read of each cycle",
      degree);

  // Device maxima over set ramps, and the reads just after each reset.
  std::vector<double> device_max(set.devices.size(), 0.0);
  std::vector<double> resets;
  std::size_t depress_rows = 0;
  for (const Ramp& ramp : set.ramps) {
    if (ramp.polarity == Polarity::depress) {
      depress_rows += ramp.points.size();
      continue;
    }
    const std::size_t d = static_cast<std::size_t>(
        std::lower_bound(set.devices.begin(), set.devices.end(), ramp.device) - set.devices.begin());
    for (std::size_t i : ramp.points) device_max[d] = std::max(device_max[d], data.records[i].conductance);
    const PulseRecord& first = data.records[ramp.points.front()];
    if (first.pulse == 0) resets.push_back(first.conductance);
  }
  if (depress_rows)
    r.notes.push_back(
        fmt::format("{} reads of depress ramps ignored: phase-change cells have no gradual depression "
                    "(a reset starts each cycle)",
                    depress_rows));
  if (resets.size() < 2)
    throw data.error_at_end("pulse", fmt::format("too few points: phase_change needs the read just after the reset "
                                                 "of at least 2 cycles (pulse 0 of a potentiate ramp); found {}",
                                                 resets.size()));

  const double g_min = 0.0;
  std::vector<double> maxima;
  for (double m : device_max)
    if (m > 0) maxima.push_back(m);
  const double g_max = maxima.empty() ? 0.0 : median(maxima);
  if (!(g_max > g_min))
    throw data.error_at_end("conductance", "every conductance of the potentiate ramps is zero; nothing to fit");

  // Single-pulse set transitions that the clamp cannot have touched.
  const std::vector<Transition>& tr = set.transitions;
  std::vector<std::size_t> used;
  for (std::size_t i = 0; i < tr.size(); ++i)
    if (tr[i].polarity == Polarity::potentiate && tr[i].pulses == 1 && !tr[i].at_bound) used.push_back(i);
  const std::size_t min_points = std::max<std::size_t>(10, 4 * static_cast<std::size_t>(degree + 1));
  auto require = [&](std::size_t have) {
    if (have < min_points)
      throw data.error_at_end("pulse", fmt::format("too few points: phase_change needs at least {} single set-pulse "
                                                   "transitions (reads after pulses n and n + 1 of one ramp) below "
                                                   "saturation; found {}",
                                                   min_points, have));
  };
  require(used.size());

  const std::size_t nd = set.devices.size();
  std::vector<double> scale_of(nd, 1.0), g_max_of(nd, g_max);
  auto x_of = [&](const Transition& t) { return (t.g_from - g_min) / (g_max_of[t.device_index] - g_min); };
  auto fit_mean = [&](const std::vector<std::size_t>& idx) {
    std::vector<double> x, y;
    for (std::size_t i : idx) {
      x.push_back(x_of(tr[i]));
      y.push_back((tr[i].g_to - tr[i].g_from) / scale_of[tr[i].device_index]);
    }
    return fit_polynomial(x, y, degree);
  };
  auto fit_sd = [&](const std::vector<std::size_t>& idx, const std::vector<double>& mean) {
    std::vector<double> x, y;
    for (std::size_t i : idx) {
      const double s = scale_of[tr[i].device_index];
      const double res = tr[i].g_to - tr[i].g_from - s * std::max(0.0, device_laws::evaluate_polynomial(mean, x_of(tr[i])));
      x.push_back(x_of(tr[i]));
      y.push_back(std::sqrt(std::numbers::pi / 2) * std::abs(res) / s);
    }
    return fit_polynomial(x, y, degree);
  };

  // First pass, then drop increments that may have been clamped.
  LeastSquaresFit mean = fit_mean(used);
  LeastSquaresFit sd = fit_sd(used, mean.parameters);
  std::vector<std::size_t> kept;
  for (std::size_t i : used) {
    const double x = x_of(tr[i]);
    const double reach =
        std::max(0.0, device_laws::evaluate_polynomial(mean.parameters, x)) + 3 * std::max(0.0, device_laws::evaluate_polynomial(sd.parameters, x));
    if (tr[i].g_from + reach < device_max[tr[i].device_index]) kept.push_back(i);
  }
  if (kept.size() < used.size())
    r.notes.push_back(
        fmt::format("{} set transitions within reach of saturation left out (the clamp at g_max could "
                    "have shortened them)",
                    used.size() - kept.size()));
  used = kept;
  require(used.size());
  mean = fit_mean(used);

  // Device-to-device: each device's step scale and g_max, the polynomial held.
  std::vector<std::vector<std::size_t>> by_device(nd);
  for (std::size_t i : used) by_device[tr[i].device_index].push_back(i);
  std::vector<double> scales, scale_errors, ranges, range_errors;
  std::size_t extra = 0;
  if (nd >= 3) {
    const std::vector<ParameterSpec> specs{{"g_max", ParameterRange::positive, g_max},
                                           {"step_scale", ParameterRange::positive, 1.0}};
    std::vector<double> fitted_scale(nd, 1.0), fitted_g_max(nd, g_max);
    for (std::size_t d = 0; d < nd; ++d) {
      const auto& idx = by_device[d];
      if (idx.size() < 10) continue;
      LeastSquaresFit f =
          fit_nonlinear(specs, idx.size(),
                        [&](std::span<const double> v, std::span<double> res) {
                          for (std::size_t k = 0; k < idx.size(); ++k) {
                            const Transition& t = tr[idx[k]];
                            const double x = (t.g_from - g_min) / (v[0] - g_min);
                            res[k] = (t.g_to - t.g_from - v[1] * std::max(0.0, device_laws::evaluate_polynomial(mean.parameters, x))) / g_max;
                          }
                        },
                        {g_max, 1.0});
      if (!f.converged || f.rank < 2) continue;
      fitted_g_max[d] = f.parameters[0];
      fitted_scale[d] = f.parameters[1];
      ranges.push_back(f.parameters[0] - g_min);
      range_errors.push_back(f.standard_errors[0]);
      scales.push_back(f.parameters[1]);
      scale_errors.push_back(f.standard_errors[1]);
    }
    if (scales.size() >= 3) {
      scale_of = fitted_scale;
      g_max_of = fitted_g_max;
      extra = 2 * scales.size();
      mean = fit_mean(used);  // at the devices' own scale and x
    }
  }
  sd = fit_sd(used, mean.parameters);

  const std::string how = fmt::format("least squares on {} set increments", used.size());
  r.parameters.push_back({"g_min", Dimension::conductance, {g_min}, {}, false, false, "fixed: the physical lower end"});
  double g_max_se = 0;
  if (maxima.size() >= 3) {
    double m = 0, v = 0;
    for (double a : maxima) m += a;
    m /= static_cast<double>(maxima.size());
    for (double a : maxima) v += (a - m) * (a - m);
    g_max_se = 1.2533 * std::sqrt(v / static_cast<double>(maxima.size() - 1) / static_cast<double>(maxima.size()));
  }
  r.parameters.push_back({"g_max",
                          Dimension::conductance,
                          {g_max},
                          {g_max_se},
                          false,
                          false,
                          fmt::format("median of the largest read of {} devices", maxima.size())});
  r.parameters.push_back(
      {"increment_mean", Dimension::conductance, mean.parameters, mean.standard_errors, true, false, how});
  r.parameters.push_back({"increment_sd", Dimension::conductance, sd.parameters, sd.standard_errors, true, false,
                          "least squares of sqrt(pi/2) |residual| on the same powers of x"});

  double rm = 0, rv = 0;
  for (double g : resets) rm += g;
  rm /= static_cast<double>(resets.size());
  for (double g : resets) rv += (g - rm) * (g - rm);
  const double rsd = std::sqrt(rv / static_cast<double>(resets.size() - 1));
  const double n_resets = static_cast<double>(resets.size());
  const std::string reset_how = fmt::format("first read of {} cycles", resets.size());
  r.parameters.push_back(
      {"reset_mean", Dimension::conductance, {rm}, {rsd / std::sqrt(n_resets)}, false, false, reset_how});
  r.parameters.push_back(
      {"reset_sd", Dimension::conductance, {rsd}, {rsd / std::sqrt(2 * (n_resets - 1))}, false, false, reset_how});
  FittedParameter no_noise{"programming_noise",
                           Dimension::dimensionless,
                           {0.0},
                           {},
                           false,
                           false,
                           "0: the increment sd holds the cycle-to-cycle spread"};
  r.parameters.push_back(no_noise);
  if (extra) {
    const std::string d2d_how = fmt::format("device-to-device: spread of {} per-device fits", scales.size());
    r.parameters.push_back(relative_spread("d2d_g_max", ranges, range_errors, d2d_how));
    r.parameters.push_back(relative_spread("d2d_step", scales, scale_errors, d2d_how));
  } else {
    r.notes.push_back(
        "device-to-device spreads (d2d_g_max, d2d_step) not estimated: they need at least 3 devices "
        "with 10 set transitions each below saturation");
  }

  FitSample s;
  s.parameters = static_cast<std::size_t>(degree + 1) + extra;
  std::size_t last_ramp = tr.size();
  for (std::size_t i : used) {
    const Transition& t = tr[i];
    const double predicted = t.g_from + scale_of[t.device_index] * std::max(0.0, device_laws::evaluate_polynomial(mean.parameters, x_of(t)));
    s.residuals.push_back(t.g_to - predicted);
    s.observed.push_back(t.g_to);
    if (t.ramp != last_ramp) s.ordered.emplace_back();
    s.ordered.back().push_back(t.g_to - predicted);
    last_ramp = t.ramp;
  }
  r.fit = assess_fit(s);
  return r;
}

}  // namespace nvsyn::calibration
