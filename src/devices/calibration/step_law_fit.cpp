#include "devices/calibration/step_law_fit.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn::calibration {
namespace {

constexpr std::size_t kMinPerPolarity = 3;
constexpr std::size_t kMinTransitions = 10;
constexpr std::size_t kMinDevicesForSpread = 3;
// Transitions whose predicted step is below this fraction of the device's largest step
// in the same direction are left out of the runs test (see the sample below).
constexpr double kSaturatedStep = 0.1;

double max_conductance(const TransitionSet& set) {
  double m = 0;
  for (const Transition& t : set.transitions) m = std::max({m, t.g_from, t.g_to});
  return m;
}

// Straight line y = a + b x by least squares; b = 1, a = 0 when x does not vary.
void line_through(const std::vector<double>& x, const std::vector<double>& y, double& a, double& b) {
  const double n = static_cast<double>(x.size());
  double mx = 0, my = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    mx += x[i];
    my += y[i];
  }
  if (n == 0) return;
  mx /= n;
  my /= n;
  double sxx = 0, sxy = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    sxx += (x[i] - mx) * (x[i] - mx);
    sxy += (x[i] - mx) * (y[i] - my);
  }
  b = sxx > 0 ? sxy / sxx : 1.0;
  a = my - b * mx;
}

}  // namespace

StepLawStart step_law_start(const TransitionSet& set) {
  StepLawStart s;
  s.g_low = set.transitions.empty() ? 0.0 : set.transitions.front().g_from;
  s.g_high = s.g_low;
  std::vector<double> xp, yp, xd, yd, steps;
  for (const Transition& t : set.transitions) {
    s.g_low = std::min({s.g_low, t.g_from, t.g_to});
    s.g_high = std::max({s.g_high, t.g_from, t.g_to});
    if (t.at_bound) continue;
    steps.push_back(std::abs(t.g_to - t.g_from) / t.pulses);
    if (t.pulses != 1) continue;
    (t.polarity == Polarity::potentiate ? xp : xd).push_back(t.g_from);
    (t.polarity == Polarity::potentiate ? yp : yd).push_back(t.g_to);
  }
  line_through(xp, yp, s.intercept_p, s.slope_p);
  line_through(xd, yd, s.intercept_d, s.slope_d);
  if (!steps.empty()) {
    std::nth_element(steps.begin(), steps.begin() + static_cast<std::ptrdiff_t>(steps.size() / 2), steps.end());
    s.median_step = steps[steps.size() / 2];
  }
  return s;
}

FittedParameter nominal_parameter(const StepLawFit& fit, std::size_t k, const std::string& key, Dimension dimension) {
  FittedParameter p;
  p.key = key;
  p.dimension = dimension;
  p.values = {fit.parameters[k]};
  if (fit.held[k]) {
    p.how = fit.held_reason[k];
  } else {
    p.uncertainties = {fit.standard_errors[k]};
    p.how = fit.per_device ? "least squares; nominal device of per-device fits" : "least squares";
  }
  return p;
}

namespace {

// One device's own g_max (and step scale) with the nominal parameters held.
struct DeviceFit {
  bool ok = false;
  double g_max = 0.0, g_max_se = 0.0, scale = 1.0, scale_se = 0.0;
  std::string why;
};

DeviceFit fit_one_device(const StepLaw& law, const std::vector<Transition>& tr, const std::vector<std::size_t>& idx,
                         const std::vector<double>& x, double g_max_start, double scale_start, double unit,
                         double noise) {
  std::vector<ParameterSpec> specs{{"g_max", ParameterRange::any, unit}};
  if (law.has_step_scale) specs.push_back({"step_scale", ParameterRange::positive, 1.0});
  const LeastSquaresFit f = fit_nonlinear(
      specs, idx.size(),
      [&](std::span<const double> v, std::span<double> r) {
        for (std::size_t k = 0; k < idx.size(); ++k)
          r[k] = (tr[idx[k]].g_to - law.predict(x, v[0], law.has_step_scale ? v[1] : 1.0, noise, tr[idx[k]])) / unit;
      },
      law.has_step_scale ? std::vector<double>{g_max_start, scale_start} : std::vector<double>{g_max_start});
  DeviceFit d;
  if (!f.converged || f.rank < specs.size()) {
    d.why = f.converged ? "not determined by its data" : f.stop_reason;
    return d;
  }
  d.ok = true;
  d.g_max = f.parameters[0];
  d.g_max_se = f.standard_errors[0];
  if (law.has_step_scale) {
    d.scale = f.parameters[1];
    d.scale_se = f.standard_errors[1];
  }
  return d;
}

double mean_of(const std::vector<double>& v) {
  double m = 0;
  for (double a : v) m += a;
  return v.empty() ? 0.0 : m / static_cast<double>(v.size());
}

double sd_of(const std::vector<double>& v) {
  if (v.size() < 2) return 0.0;
  const double m = mean_of(v);
  double s = 0;
  for (double a : v) s += (a - m) * (a - m);
  return std::sqrt(s / static_cast<double>(v.size() - 1));
}

StepLawFit fit_with_noise(const StepLaw& law, const TransitionSet& set, const PulseData& data, double noise) {
  const std::string kind(device_kind_name(law.kind));
  const std::size_t np = set.count(Polarity::potentiate), nd = set.count(Polarity::depress);
  if (np < kMinPerPolarity || nd < kMinPerPolarity || np + nd < kMinTransitions)
    throw data.error_at_end("polarity",
                            fmt::format("too few points: {} needs at least {} transitions (two successive reads of one "
                                        "device, cycle and polarity) of each polarity and {} in all; the data have {} "
                                        "potentiate and {} depress",
                                        kind, kMinPerPolarity, kMinTransitions, np, nd));

  const std::vector<Transition>& tr = set.transitions;
  const std::size_t n = tr.size();
  const double unit = max_conductance(set) > 0 ? max_conductance(set) : 1.0;
  const std::size_t p = law.parameters.size();
  const StepLawStart extremes = step_law_start(set);

  // Fits the nominal parameters not marked in `held` (the others keep their values
  // in `x`); each transition is predicted with its device's g_max (when
  // `device_g_max`, else the nominal one) and step scale.
  struct SubsetFit {
    LeastSquaresFit fit;
    std::vector<std::size_t> index;  // nominal index of each fitted parameter
  };
  auto fit_subset = [&](const std::vector<bool>& held, std::vector<double>& x, const std::vector<double>& g_max_of,
                        const std::vector<double>& scale_of, bool device_g_max) {
    SubsetFit out;
    std::vector<ParameterSpec> specs;
    std::vector<double> start;
    for (std::size_t k = 0; k < p; ++k)
      if (!held[k]) {
        specs.push_back(law.parameters[k]);
        start.push_back(x[k]);
        out.index.push_back(k);
      }
    const std::vector<double> base = x;
    out.fit = fit_nonlinear(
        specs, n,
        [&](std::span<const double> v, std::span<double> r) {
          std::vector<double> full = base;
          for (std::size_t j = 0; j < v.size(); ++j) full[out.index[j]] = v[j];
          for (std::size_t i = 0; i < n; ++i) {
            const std::size_t d = tr[i].device_index;
            r[i] = (tr[i].g_to - law.predict(full, device_g_max ? g_max_of[d] : full[1], scale_of[d], noise, tr[i])) /
                   unit;
          }
        },
        start);
    if (!out.fit.converged)
      throw data.error_at_end(
          "conductance",
          fmt::format("the {} fit did not converge: {}; do the data follow this model?", kind, out.fit.stop_reason));
    if (out.fit.rank == specs.size())
      for (std::size_t j = 0; j < specs.size(); ++j) x[out.index[j]] = out.fit.parameters[j];
    return out;
  };
  auto not_determined = [&](const SubsetFit& f) {
    const std::string& weakest = law.parameters[f.index[f.fit.weakest]].name;
    return data.error_at_end(
        "conductance",
        fmt::format("the data do not determine all {} parameters of {} (rank {}; least determined: {}); ramps of "
                    "both polarities must run close to both bounds{}",
                    f.index.size(), kind, f.fit.rank, weakest,
                    weakest == "full_range_pulses"
                        ? ", or hold full_range_pulses with --full-range-pulses (a device that saturates like "
                          "soft_bounds has no finite full range)"
                        : ""));
  };

  // Step 1: one set of parameters for every device. A bound that no ramp comes near
  // leaves g_min or g_max undetermined; it is then held at the extreme read.
  StepLawFit out;
  std::vector<bool> held(p, false);
  std::vector<std::string> held_reason(p);
  std::vector<double> x = law.start;
  const std::vector<double> nominal_g_max(set.devices.size(), 0.0), unit_scale(set.devices.size(), 1.0);
  SubsetFit pooled;
  while (true) {
    pooled = fit_subset(held, x, nominal_g_max, unit_scale, false);
    if (pooled.fit.rank == pooled.index.size()) {
      // A conductance cannot be negative: a g_min that noise pushes below 0 is held there.
      if (held[0] || x[0] >= 0) break;
      out.notes.push_back(fmt::format("g_min came out below 0 ({:.3g} S); held at 0", x[0]));
      held[0] = true;
      held_reason[0] = "held at 0: the fit went below 0";
      x[0] = 0.0;
      for (std::size_t k = 1; k < p; ++k)
        if (!held[k]) x[k] = law.start[k];
      continue;
    }
    const std::size_t weakest = pooled.index[pooled.fit.weakest];
    if (weakest > 1 || held[weakest]) throw not_determined(pooled);
    held[weakest] = true;
    held_reason[weakest] =
        fmt::format("not determined by the data: held at the {} read", weakest == 0 ? "smallest" : "largest");
    x[weakest] = weakest == 0 ? extremes.g_low : extremes.g_high;
    for (std::size_t k = 0; k < p; ++k)
      if (!held[k]) x[k] = law.start[k];
    out.notes.push_back(
        fmt::format("{} is not determined by the data (no ramp approaches that bound); held at the "
                    "{} read",
                    law.parameters[weakest].name, weakest == 0 ? "smallest" : "largest"));
  }
  out.held = held;
  out.held_reason = held_reason;
  out.parameters = x;
  out.standard_errors.assign(p, 0.0);
  for (std::size_t j = 0; j < pooled.index.size(); ++j)
    out.standard_errors[pooled.index[j]] = pooled.fit.standard_errors[j];

  // Step 2: alternate between each device's own g_max and step scale (nominal
  // parameters held) and the nominal parameters (device values held), until the
  // nominal parameters settle. The step scales are normalised to mean 1 and their
  // common factor absorbed into the nominal law, as DeviceArray draws them around 1.
  std::vector<std::vector<std::size_t>> by_device(set.devices.size());
  for (std::size_t i = 0; i < n; ++i) by_device[tr[i].device_index].push_back(i);
  std::vector<std::size_t> eligible;
  for (std::size_t d = 0; d < by_device.size(); ++d) {
    std::size_t up = 0, down = 0;
    for (std::size_t i : by_device[d]) (tr[i].polarity == Polarity::potentiate ? up : down) += 1;
    if (up >= kMinPerPolarity && down >= kMinPerPolarity && up + down >= kMinTransitions) eligible.push_back(d);
  }
  std::vector<double> g_max_of(set.devices.size(), x[1]), scale_of(set.devices.size(), 1.0);
  std::vector<DeviceFit> device_fits(set.devices.size());
  std::vector<std::size_t> refined;
  SubsetFit nominal;
  std::vector<bool> held_with_g_max = held;
  held_with_g_max[1] = true;
  auto refine_devices = [&] {
    refined.clear();
    for (std::size_t d : eligible) {
      device_fits[d] = fit_one_device(law, tr, by_device[d], x, g_max_of[d], scale_of[d], unit, noise);
      if (device_fits[d].ok) refined.push_back(d);
    }
    if (refined.size() < kMinDevicesForSpread) return false;
    std::vector<double> scales, g_maxes;
    for (std::size_t d : refined) {
      scales.push_back(device_fits[d].scale);
      g_maxes.push_back(device_fits[d].g_max);
    }
    const double common = mean_of(scales);
    if (law.has_step_scale) law.absorb_scale(x, common);
    for (std::size_t d : refined) {
      g_max_of[d] = device_fits[d].g_max;
      scale_of[d] = device_fits[d].scale / common;
    }
    x[1] = mean_of(g_maxes);
    for (std::size_t d = 0; d < g_max_of.size(); ++d)
      if (!device_fits[d].ok) g_max_of[d] = x[1];
    return true;
  };
  bool per_device = eligible.size() >= kMinDevicesForSpread && refine_devices();
  for (int iteration = 0; per_device && iteration < 50; ++iteration) {
    const std::vector<double> before = x;
    nominal = fit_subset(held_with_g_max, x, g_max_of, scale_of, true);
    if (nominal.fit.rank < nominal.index.size()) throw not_determined(nominal);
    per_device = refine_devices();
    double change = 0;
    for (std::size_t k = 0; k < p; ++k)
      change = std::max(change, std::abs(x[k] - before[k]) / std::max(std::abs(x[k]), law.parameters[k].scale * 1e-6));
    if (change < 1e-7) break;
  }

  std::size_t extra_parameters = 0;
  out.per_device = per_device;
  if (per_device) {
    std::vector<double> ranges, range_errors, scales, scale_errors, g_maxes;
    for (std::size_t d : refined) {
      ranges.push_back(g_max_of[d] - x[0]);
      range_errors.push_back(device_fits[d].g_max_se);
      scales.push_back(scale_of[d]);
      scale_errors.push_back(device_fits[d].scale_se / (device_fits[d].scale / scale_of[d]));
      g_maxes.push_back(g_max_of[d]);
    }
    extra_parameters = refined.size() * (law.has_step_scale ? 2 : 1);
    const std::string how = fmt::format("device-to-device: spread of {} per-device fits", refined.size());
    out.d2d_g_max = relative_spread("d2d_g_max", ranges, range_errors, how);
    if (law.has_step_scale) out.d2d_step = relative_spread("d2d_step", scales, scale_errors, how);
    // Nominal values are population means over the devices: their errors hold the
    // conditional fit error and the sampling error of the devices' mean.
    const double devices = static_cast<double>(refined.size());
    out.parameters = x;
    out.standard_errors.assign(p, 0.0);
    out.standard_errors[1] = sd_of(g_maxes) / std::sqrt(devices);
    for (std::size_t j = 0; j < nominal.index.size(); ++j) {
      const std::size_t k = nominal.index[j];
      double se2 = nominal.fit.standard_errors[j] * nominal.fit.standard_errors[j];
      if (law.has_step_scale) {
        std::vector<double> nudged = x;
        const double h = 1e-6;
        law.absorb_scale(nudged, 1 + h);
        const double mean_se = (nudged[k] - x[k]) / h * sd_of(scales) / std::sqrt(devices);
        se2 += mean_se * mean_se;
      }
      out.standard_errors[k] = std::sqrt(se2);
    }
  } else {
    std::fill(g_max_of.begin(), g_max_of.end(), x[1]);
    std::fill(scale_of.begin(), scale_of.end(), 1.0);
    x = out.parameters;
    out.notes.push_back(
        fmt::format("device-to-device spreads (d2d_g_max{}) not estimated: they need at least {} "
                    "devices with {} transitions each, {} of each polarity",
                    law.has_step_scale ? ", d2d_step" : "", kMinDevicesForSpread, kMinTransitions, kMinPerPolarity));
  }
  for (std::size_t d : eligible)
    if (!device_fits[d].ok && per_device)
      out.notes.push_back(fmt::format("device {}: its own g_max could not be fitted ({}); it keeps the nominal values",
                                      set.devices[d], device_fits[d].why));

  // Residuals of the most detailed model, and the cycle-to-cycle estimate.
  FitSample& s = out.sample;
  s.parameters = p + extra_parameters;
  std::vector<double> predicted(n), per_pulse(n);
  std::vector<std::array<double, 2>> largest(set.devices.size(), {0.0, 0.0});  // per device and polarity
  for (std::size_t i = 0; i < n; ++i) {
    const Transition& t = tr[i];
    predicted[i] = law.predict(x, g_max_of[t.device_index], scale_of[t.device_index], noise, t);
    per_pulse[i] = std::abs(predicted[i] - t.g_from) / t.pulses;
    double& top = largest[t.device_index][static_cast<std::size_t>(t.polarity)];
    top = std::max(top, per_pulse[i]);
  }
  double sum_r2 = 0, sum_step2 = 0, sum_step4 = 0;
  std::size_t single = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const Transition& t = tr[i];
    const double r = t.g_to - predicted[i];
    s.residuals.push_back(r);
    s.observed.push_back(t.g_to);
    if (i == 0 || t.ramp != tr[i - 1].ramp) s.ordered.emplace_back();
    // Where the step (and the noise, which scales with it) nearly vanishes, the least
    // error of the fitted bound sets the residual's sign: no information on the shape.
    const bool saturated =
        per_pulse[i] < kSaturatedStep * largest[t.device_index][static_cast<std::size_t>(t.polarity)];
    if (!t.at_bound && !saturated) s.ordered.back().push_back(r);
    if (t.pulses == 1 && !t.at_bound) {
      sum_r2 += r * r;
      const double step2 = (predicted[i] - t.g_from) * (predicted[i] - t.g_from);
      sum_step2 += step2;
      sum_step4 += step2 * step2;
      ++single;
    }
  }
  out.programming_noise.key = "programming_noise";
  out.programming_noise.how = fmt::format(
      "cycle-to-cycle: {} single-pulse residuals relative to the predicted step "
      "(includes the measurements' read noise)",
      single);
  if (single > 0 && sum_step2 > 0 && n > s.parameters) {
    const double c2 = sum_r2 / sum_step2 * static_cast<double>(n) / static_cast<double>(n - s.parameters);
    const double c = std::sqrt(c2);
    out.programming_noise.values = {c};
    // r_i = s_i c e_i: var(c^2 estimate) = 2 c^4 sum s^4 / (sum s^2)^2, halved relative for c.
    out.programming_noise.uncertainties = {c * std::sqrt(0.5 * sum_step4) / sum_step2};
  } else {
    out.programming_noise.values = {0.0};
    out.programming_noise.uncertainties = {0.0};
    out.notes.push_back("programming_noise: no single-pulse transitions away from the bounds; set to 0");
  }
  return out;
}

}  // namespace

StepLawFit fit_step_law(const StepLaw& law, const TransitionSet& set, const PulseData& data) {
  StepLawFit fit = fit_with_noise(law, set, data, 0.0);
  for (int round = 0; law.noise_in_mean && round < 10; ++round) {
    const double noise = fit.programming_noise.value();
    try {
      fit = fit_with_noise(law, set, data, noise);
    } catch (const UserError& e) {
      // Data far from the law (a wrong model) can give a noise so large that the
      // corrected mean no longer determines the parameters; the uncorrected fit stands.
      fit.notes.push_back(
          fmt::format("the refit with the clamp's effect on noisy steps failed ({}); the fit without "
                      "it is kept",
                      e.message()));
      break;
    }
    if (std::abs(fit.programming_noise.value() - noise) <= 1e-3 * noise) break;
  }
  return fit;
}

}  // namespace nvsyn::calibration
