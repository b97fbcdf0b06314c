#include "devices/calibration/drift_fit.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <map>
#include <tuple>

#include "devices/calibration/spread.hpp"

namespace nvsyn::calibration {
namespace {

struct Series {
  std::uint32_t device = 0;
  std::vector<double> log_t, log_g;
  double first_time = 0.0;
};

struct Slope {
  double nu = 0.0, se = 0.0, rss = 0.0;
};

Slope log_log_slope(const Series& s) {
  const double n = static_cast<double>(s.log_t.size());
  double mx = 0, my = 0;
  for (std::size_t i = 0; i < s.log_t.size(); ++i) {
    mx += s.log_t[i];
    my += s.log_g[i];
  }
  mx /= n;
  my /= n;
  double sxx = 0, sxy = 0;
  for (std::size_t i = 0; i < s.log_t.size(); ++i) {
    sxx += (s.log_t[i] - mx) * (s.log_t[i] - mx);
    sxy += (s.log_t[i] - mx) * (s.log_g[i] - my);
  }
  const double b = sxy / sxx;
  Slope out;
  for (std::size_t i = 0; i < s.log_t.size(); ++i) {
    const double r = s.log_g[i] - (my + b * (s.log_t[i] - mx));
    out.rss += r * r;
  }
  out.nu = -b;
  out.se = std::sqrt(out.rss / (n - 2) / sxx);
  return out;
}

}  // namespace

DriftFit fit_drift(const PulseData& data) {
  DriftFit out;
  if (!data.has_read_time) return out;

  // Reads of one programmed state: same device, cycle, polarity and pulse number.
  std::map<std::tuple<std::uint32_t, std::uint32_t, Polarity, std::uint32_t>, Series> groups;
  for (const PulseRecord& r : data.records) {
    Series& s = groups[{r.device, r.cycle, r.polarity, r.pulse}];
    s.device = r.device;
    if (!(r.read_time > 0) || !(r.conductance > 0)) continue;  // log undefined: no part of a slope
    if (s.log_t.empty()) s.first_time = r.read_time;
    s.log_t.push_back(std::log(r.read_time));
    s.log_g.push_back(std::log(r.conductance));
  }

  std::map<std::uint32_t, std::vector<Slope>> by_device;
  std::vector<double> first_times;
  double rss = 0;
  std::size_t points = 0;
  for (const auto& [key, s] : groups) {
    if (s.log_t.size() < 3) continue;
    const Slope slope = log_log_slope(s);
    by_device[s.device].push_back(slope);
    first_times.push_back(s.first_time);
    rss += slope.rss;
    points += s.log_t.size();
    ++out.series;
  }
  if (out.series == 0) {
    out.notes.push_back("drift not fitted: no state was read at 3 or more positive read times");
    return out;
  }

  std::vector<double> nu, nu_se;
  for (const auto& [device, slopes] : by_device) {
    double m = 0, v = 0;
    for (const Slope& s : slopes) {
      m += s.nu;
      v += s.se * s.se;
    }
    const double k = static_cast<double>(slopes.size());
    nu.push_back(m / k);
    nu_se.push_back(std::sqrt(v) / k);
  }
  const double n = static_cast<double>(nu.size());
  double mean = 0, noise = 0;
  for (std::size_t i = 0; i < nu.size(); ++i) {
    mean += nu[i];
    noise += nu_se[i] * nu_se[i];
  }
  mean /= n;
  noise /= n;
  double var = 0;
  for (double v : nu) var += (v - mean) * (v - mean);
  var = nu.size() > 1 ? var / (n - 1) : 0.0;
  const double mean_se = nu.size() > 1 ? std::sqrt(var / n) : nu_se.front();

  const std::string how = fmt::format("log-log slopes of {} read-time series on {} devices", out.series, nu.size());
  double written = mean;
  if (mean < 0 || mean >= 1) {
    written = std::clamp(mean, 0.0, 0.99);
    out.notes.push_back(fmt::format(
        "the measured drift exponent {:.4g} lies outside the model's [0, 1); written as {:g}", mean, written));
  }
  out.parameters.push_back({"drift_nu", Dimension::dimensionless, {written}, {mean_se}, false, false, how});
  if (nu.size() >= 3) {
    const Spread sd = corrected_spread(nu, nu_se);
    out.parameters.push_back({"drift_nu_sd",
                              Dimension::dimensionless,
                              {sd.value},
                              {sd.error},
                              false,
                              false,
                              "device-to-device: spread of the devices' slopes less their own errors"});
  } else {
    out.notes.push_back("drift_nu_sd not estimated: it needs read-time series on at least 3 devices");
  }
  std::sort(first_times.begin(), first_times.end());
  const double t0 = first_times[first_times.size() / 2];
  out.parameters.push_back({"drift_t0",
                            Dimension::time,
                            {t0},
                            {},
                            false,
                            false,
                            "median first read time: the pulse-response reads count as the programmed state"});
  out.notes.push_back(fmt::format("drift: log-log residual RMS {:.3g} over {} reads",
                                  std::sqrt(rss / static_cast<double>(points)), points));
  return out;
}

}  // namespace nvsyn::calibration
