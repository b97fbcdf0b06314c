// binary_stochastic calibration. The model (devices/binary_stochastic.cpp): two levels,
// g_min and the device's g_max; a potentiating pulse on a low device switches it high
// with probability p_set, a depressing pulse on a high device switches it low with
// probability p_reset, every other pulse does nothing.
//
//  * Levels: two-means clustering of every read (threshold halfway between the means,
//    repeated until stable); g_min, g_max are the cluster means with standard errors
//    sd/sqrt(n). With 3 or more devices, each device's high level gives d2d_g_max.
//  * p_set, p_reset: the fraction of single pulses that switch a device from the state
//    they can act on, with binomial standard errors sqrt(p (1 - p) / n).
//  * Residuals: each read minus its level. Reads of a two-state device scatter about
//    two values; intermediate reads of a gradual device leave long runs of one sign.
#include <algorithm>
#include <cmath>
#include <fmt/format.h>

#include "devices/calibration/fit_device.hpp"
#include "devices/calibration/step_law_fit.hpp"

namespace nvsyn::calibration {
namespace {

constexpr std::size_t kMinTrials = 10;

struct Levels {
  double low = 0.0, high = 0.0, low_se = 0.0, high_se = 0.0;
  std::size_t n_low = 0, n_high = 0;
};

Levels two_means(const std::vector<double>& g) {
  Levels l;
  l.low = *std::min_element(g.begin(), g.end());
  l.high = *std::max_element(g.begin(), g.end());
  for (int iteration = 0; iteration < 100; ++iteration) {
    const double threshold = 0.5 * (l.low + l.high);
    double sl = 0, sh = 0;
    std::size_t nl = 0, nh = 0;
    for (double v : g) {
      if (v > threshold) {
        sh += v;
        ++nh;
      } else {
        sl += v;
        ++nl;
      }
    }
    const Levels before = l;
    l.n_low = nl;
    l.n_high = nh;
    if (nl) l.low = sl / static_cast<double>(nl);
    if (nh) l.high = sh / static_cast<double>(nh);
    if (l.low == before.low && l.high == before.high) break;
  }
  const double threshold = 0.5 * (l.low + l.high);
  double vl = 0, vh = 0;
  for (double v : g) {
    if (v > threshold)
      vh += (v - l.high) * (v - l.high);
    else
      vl += (v - l.low) * (v - l.low);
  }
  if (l.n_low > 1) l.low_se = std::sqrt(vl / static_cast<double>(l.n_low - 1) / static_cast<double>(l.n_low));
  if (l.n_high > 1) l.high_se = std::sqrt(vh / static_cast<double>(l.n_high - 1) / static_cast<double>(l.n_high));
  return l;
}

}  // namespace

FitResult fit_binary_stochastic(const PulseData& data, const TransitionSet& set) {
  FitResult r;
  r.kind = DeviceKind::binary_stochastic;
  r.method = "two-level clustering of the reads; switching fractions of single pulses";

  std::vector<double> all;
  for (const Ramp& ramp : set.ramps)
    for (std::size_t i : ramp.points) all.push_back(data.records[i].conductance);
  const Levels pooled = two_means(all);
  if (pooled.n_low == 0 || pooled.n_high == 0 || pooled.high == pooled.low)
    throw data.error_at_end("conductance",
                            "binary_stochastic needs reads in both states; every read has the same value");

  // Per-device high levels (the model varies g_max between devices, not g_min).
  const std::size_t nd = set.devices.size();
  std::vector<double> high_of(nd, pooled.high);
  std::vector<double> ranges, range_errors;
  if (nd >= 3) {
    std::vector<std::vector<double>> highs(nd);
    const double threshold = 0.5 * (pooled.low + pooled.high);
    for (const Ramp& ramp : set.ramps) {
      const std::size_t d = static_cast<std::size_t>(
          std::lower_bound(set.devices.begin(), set.devices.end(), ramp.device) - set.devices.begin());
      for (std::size_t i : ramp.points)
        if (data.records[i].conductance > threshold) highs[d].push_back(data.records[i].conductance);
    }
    std::vector<double> levels(nd, pooled.high);
    for (std::size_t d = 0; d < nd; ++d) {
      if (highs[d].size() < 2) continue;
      double m = 0, v = 0;
      for (double g : highs[d]) m += g;
      m /= static_cast<double>(highs[d].size());
      for (double g : highs[d]) v += (g - m) * (g - m);
      levels[d] = m;
      ranges.push_back(m - pooled.low);
      range_errors.push_back(
          std::sqrt(v / static_cast<double>(highs[d].size() - 1) / static_cast<double>(highs[d].size())));
    }
    if (ranges.size() >= 3) high_of = levels;
  }
  const bool per_device = ranges.size() >= 3;

  // Switching fractions over single pulses from the state a pulse can act on.
  std::size_t set_trials = 0, set_switches = 0, reset_trials = 0, reset_switches = 0, contrary = 0;
  for (const Transition& t : set.transitions) {
    if (t.pulses != 1) continue;
    const double threshold = 0.5 * (pooled.low + high_of[t.device_index]);
    const bool was_high = t.g_from > threshold, is_high = t.g_to > threshold;
    if (t.polarity == Polarity::potentiate) {
      if (!was_high) {
        ++set_trials;
        set_switches += is_high;
      } else if (!is_high) {
        ++contrary;
      }
    } else {
      if (was_high) {
        ++reset_trials;
        reset_switches += !is_high;
      } else if (is_high) {
        ++contrary;
      }
    }
  }
  if (set_trials < kMinTrials || reset_trials < kMinTrials)
    throw data.error_at_end(
        "polarity", fmt::format("too few points: binary_stochastic needs at least {} single potentiating pulses on a "
                                "low device and {} single depressing pulses on a high device; the data have {} and {}",
                                kMinTrials, kMinTrials, set_trials, reset_trials));
  if (contrary)
    r.notes.push_back(
        fmt::format("{} single pulses moved a device against their polarity; the model has no such "
                    "transitions (read noise near the threshold, or not a binary device)",
                    contrary));

  auto fraction = [](const char* key, std::size_t k, std::size_t n) {
    const double p = static_cast<double>(k) / static_cast<double>(n);
    return FittedParameter{key,
                           Dimension::dimensionless,
                           {p},
                           {std::sqrt(p * (1 - p) / static_cast<double>(n))},
                           false,
                           false,
                           fmt::format("switching fraction, {} of {} pulses", k, n)};
  };
  r.parameters.push_back({"g_min",
                          Dimension::conductance,
                          {pooled.low},
                          {pooled.low_se},
                          false,
                          false,
                          fmt::format("mean of {} low reads", pooled.n_low)});
  r.parameters.push_back({"g_max",
                          Dimension::conductance,
                          {pooled.high},
                          {pooled.high_se},
                          false,
                          false,
                          fmt::format("mean of {} high reads", pooled.n_high)});
  r.parameters.push_back(fraction("p_set", set_switches, set_trials));
  r.parameters.push_back(fraction("p_reset", reset_switches, reset_trials));
  if (per_device)
    r.parameters.push_back(
        relative_spread("d2d_g_max", ranges, range_errors,
                        fmt::format("device-to-device: spread of {} devices' high levels", ranges.size())));
  else
    r.notes.push_back(
        "device-to-device spread (d2d_g_max) not estimated: it needs at least 3 devices with 2 high reads each");

  FitSample s;
  s.parameters = 2 + (per_device ? ranges.size() : 0);
  for (const Ramp& ramp : set.ramps) {
    s.ordered.emplace_back();
    const std::size_t d = static_cast<std::size_t>(
        std::lower_bound(set.devices.begin(), set.devices.end(), ramp.device) - set.devices.begin());
    const double threshold = 0.5 * (pooled.low + high_of[d]);
    for (std::size_t i : ramp.points) {
      const double g = data.records[i].conductance;
      const double res = g - (g > threshold ? high_of[d] : pooled.low);
      s.residuals.push_back(res);
      s.observed.push_back(g);
      s.ordered.back().push_back(res);
    }
  }
  r.fit = assess_fit(s);
  return r;
}

}  // namespace nvsyn::calibration
