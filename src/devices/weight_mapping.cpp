#include "devices/weight_mapping.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <limits>

#include "core/error.hpp"

namespace nvsyn {

void WeightMappingOptions::validate() const {
  if (times.empty()) throw UserError({}, "times", "give at least one time after programming, e.g. \"0 s\"");
  for (std::size_t i = 0; i < times.size(); ++i) {
    if (!(times[i] >= 0 && std::isfinite(times[i])))
      throw UserError({}, "times", fmt::format("every time must be a finite time >= 0 s, got {} s", times[i]));
    if (i > 0 && !(times[i] > times[i - 1]))
      throw UserError({}, "times", "times must be given in increasing order, without repeats");
  }
  if (!std::isfinite(tolerance)) throw UserError({}, "tolerance", "must be a finite current");
}

double weight_tolerance_default(const SynapseLayoutParameters& layout) {
  const double per_device = layout.gain * layout.verify.tolerance;
  return layout.layout == SynapseLayout::multi ? per_device * layout.devices() : per_device;
}

WeightErrorSummary summarise_weight_errors(std::span<const double> weights, std::span<const double> targets,
                                           std::span<const std::uint8_t> success, double tolerance, double time) {
  WeightErrorSummary s;
  s.time = time;
  const std::size_t n = weights.size();
  if (n == 0) return s;
  std::vector<double> e(n);
  double sum = 0, sum_sq = 0, kept = 0, wanted = 0;
  std::size_t within = 0;
  for (std::size_t k = 0; k < n; ++k) {
    e[k] = weights[k] - targets[k];
    sum += e[k];
    sum_sq += e[k] * e[k];
    s.max_abs = std::max(s.max_abs, std::abs(e[k]));
    if (std::abs(e[k]) <= tolerance) ++within;
    if (success[k]) {
      kept += std::abs(weights[k]);
      wanted += std::abs(targets[k]);
    }
  }
  const double count = static_cast<double>(n);
  s.mean = sum / count;
  s.rms = std::sqrt(sum_sq / count);
  double spread = 0;  // second pass: no cancellation when |mean| >> sd
  for (double x : e) spread += (x - s.mean) * (x - s.mean);
  s.sd = std::sqrt(spread / count);
  s.within_tolerance = static_cast<double>(within) / count;
  s.weight_ratio = wanted > 0 ? kept / wanted : std::numeric_limits<double>::quiet_NaN();
  std::sort(e.begin(), e.end());
  for (std::size_t i = 0; i < kErrorPercentiles.size(); ++i) {
    const double h = (count - 1.0) * kErrorPercentiles[i];
    const auto lo = static_cast<std::size_t>(std::floor(h));
    const std::size_t hi = std::min(lo + 1, n - 1);
    s.percentiles[i] = e[lo] + (h - static_cast<double>(lo)) * (e[hi] - e[lo]);
  }
  return s;
}

WeightMappingResult map_weights(std::span<const double> weights, const DeviceParameters& device,
                                const SynapseLayoutParameters& layout, const WeightMappingOptions& options,
                                const MappingProgress& progress) {
  options.validate();
  const std::size_t n = weights.size();
  WeightMappingResult r;
  r.target.assign(weights.begin(), weights.end());
  r.programmed.resize(n);
  r.status.resize(n);
  r.pulses.resize(n);
  r.times = options.times;
  r.tolerance = options.tolerance >= 0 ? options.tolerance : weight_tolerance_default(layout);
  const std::size_t times = r.times.size();
  r.read.resize(times * n);
  r.drift_only.resize(times * n);

  SynapseDevices synapses(device, layout, n, options.seed, 0);
  const std::uint64_t total = std::uint64_t{n} * (1 + times);
  std::uint64_t done = 0;
  auto report = [&](std::size_t k) {
    // Every 4096 weights: often enough for a progress line, rare enough to cost nothing.
    if (progress && (k % 4096 == 4095 || k + 1 == n)) progress(done, total);
  };
  std::vector<std::uint8_t> success(n);
  for (std::size_t k = 0; k < n; ++k) {
    const double sign = weights[k] < 0 ? -1.0 : 1.0;
    const VerifyResult v = synapses.write_weight(k, std::abs(weights[k]), 0.0);
    r.programmed[k] = sign * synapses.weight_programmed(k);
    r.status[k] = static_cast<std::uint8_t>(v.status);
    success[k] = v.ok() ? 1 : 0;
    if (v.status == VerifyStatus::not_converged) ++r.not_converged;
    std::uint32_t pulses = 0;
    for (std::uint32_t j = 0; j < synapses.devices_per_synapse(); ++j)
      pulses += synapses.devices().pulse_count(synapses.device_index(k, j));
    r.pulses[k] = pulses;
    r.write.add(v, r.programmed[k] - weights[k]);
    ++done;
    report(k);
  }
  for (std::size_t j = 0; j < times; ++j) {
    const double t = r.times[j];
    for (std::size_t k = 0; k < n; ++k) {
      const double sign = weights[k] < 0 ? -1.0 : 1.0;
      r.drift_only[j * n + k] = sign * synapses.weight_mean(k, t);
      r.read[j * n + k] = sign * synapses.read_weight(k, t);
      ++done;
      report(k);
    }
    const std::span<const double> read(r.read.data() + j * n, n), drift(r.drift_only.data() + j * n, n);
    r.read_summary.push_back(summarise_weight_errors(read, r.target, success, r.tolerance, t));
    r.drift_summary.push_back(summarise_weight_errors(drift, r.target, success, r.tolerance, t));
  }
  return r;
}

}  // namespace nvsyn
