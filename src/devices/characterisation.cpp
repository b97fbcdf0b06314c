#include "devices/characterisation.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

#include "core/error.hpp"
#include "devices/device_array.hpp"
#include "devices/program_verify.hpp"

namespace nvsyn {
namespace {

// Curves are held in memory until they are written; this bounds them at 400 MB.
constexpr double kMaxCurveValues = 5e7;

UserError protocol_error(const std::string& key, const std::string& message) { return UserError({}, key, message); }

}  // namespace

std::uint32_t nominal_full_range_pulses(const DeviceParameters& p) {
  const auto whole = [](double x) { return static_cast<std::uint32_t>(std::clamp(std::ceil(x), 1.0, 1e6)); };
  switch (p.kind) {
    case DeviceKind::ideal: return 1;
    case DeviceKind::linear_levels: return p.levels;
    case DeviceKind::soft_bounds: return whole(1.0 / std::min(p.alpha_p, p.alpha_d));
    case DeviceKind::exponential_saturation: return whole(p.full_range_pulses);
    case DeviceKind::phase_change: return whole((p.g_max - p.g_min) / p.increment_mean[0]);
    case DeviceKind::binary_stochastic: {
      const double smaller = p.p_set > 0 && p.p_reset > 0 ? std::min(p.p_set, p.p_reset) : std::max(p.p_set, p.p_reset);
      return whole(1.0 / smaller);
    }
  }
  return 1;
}

std::uint32_t CharacterisationProtocol::pulses_for(const DeviceParameters& device) const {
  return pulses > 0 ? pulses : 2 * nominal_full_range_pulses(device);
}

void CharacterisationProtocol::validate(const DeviceParameters& device) const {
  if (devices < 1) throw protocol_error("devices", "must be at least 1");
  if (cycles < 1) throw protocol_error("cycles", "must be at least 1");
  if (pulses > 1'000'000) throw protocol_error("pulses", fmt::format("must be at most 10^6 per ramp, got {}", pulses));
  if (!(pulse_period > 0 && std::isfinite(pulse_period)))
    throw protocol_error("pulse_period", "must be a positive time");
  if (!(ramp_read_delay >= 0 && ramp_read_delay < pulse_period))
    throw protocol_error("ramp_read_delay", fmt::format("must lie in [0, pulse_period = {} s), got {} s", pulse_period,
                                                        ramp_read_delay));
  for (std::size_t i = 0; i < read_delays.size(); ++i) {
    if (!(read_delays[i] > 0 && std::isfinite(read_delays[i])))
      throw protocol_error("read_delays", fmt::format("every read delay must be a positive time, got {} s", read_delays[i]));
    if (i > 0 && !(read_delays[i] > read_delays[i - 1]))
      throw protocol_error("read_delays", "read delays must be given in increasing order, without repeats");
  }
  for (double f : drift_levels)
    if (!(f > 0 && f <= 1))
      throw protocol_error("drift_levels", fmt::format("each level is a fraction of the range in (0, 1], got {}", f));
  const double values = 2.0 * devices * cycles * (static_cast<double>(pulses_for(device)) + 1.0);
  if (values > kMaxCurveValues)
    throw protocol_error("pulses", fmt::format("devices x cycles x pulses is too large: the curves would hold {:.3g} "
                                               "reads (at most {:.3g}); use fewer devices, cycles or pulses",
                                               values, kMaxCurveValues));
}

std::vector<double> drift_targets(const DeviceParameters& p, const std::vector<double>& fractions) {
  // A phase-change cell's low state is its reset conductance, not g_min.
  const double low = p.kind == DeviceKind::phase_change ? p.reset_mean : p.g_min;
  std::vector<double> targets;
  for (double f : fractions) targets.push_back(low + f * (p.g_max - low));
  return targets;
}

CharacterisationCurves run_characterisation(const DeviceParameters& p, const CharacterisationProtocol& protocol,
                                            const BenchProgress& progress) {
  protocol.validate(p);
  CharacterisationCurves c;
  c.devices = protocol.devices;
  c.cycles = protocol.cycles;
  c.pulses = protocol.pulses_for(p);
  c.gradual_depression = p.bidirectional();
  c.read_delays = protocol.read_delays;
  c.drift_targets = drift_targets(p, protocol.drift_levels);
  const std::size_t levels = c.drift_targets.size(), delays = c.read_delays.size();
  const std::size_t ramp_values = std::size_t{c.devices} * c.cycles * c.reads_per_ramp();
  c.up.resize(ramp_values);
  if (c.gradual_depression) c.down.resize(ramp_values);
  c.health.resize(c.devices);
  c.drift_programmed.resize(levels * c.devices);
  c.drift_verify_status.resize(levels * c.devices);
  c.drift.resize(levels * c.devices * delays);
  c.pulse_count.resize(c.devices);
  c.energy.resize(c.devices);

  // The bench tolerance is the one nvsyn's synapses use for their initial writes.
  VerifyOptions verify;
  verify.tolerance = 0.5 * p.nominal_step();

  DeviceArray array(p, c.devices, protocol.seed, 0);
  const double period = protocol.pulse_period, read_delay = protocol.ramp_read_delay;
  const std::uint64_t work_per_device =
      std::uint64_t{c.cycles} * c.reads_per_ramp() * (c.gradual_depression ? 2 : 1) + levels * delays;
  const std::uint64_t total_work = work_per_device * c.devices;

  for (std::uint32_t d = 0; d < c.devices; ++d) {
    double t = 0.0;  // start of the next time slot of this device
    auto ramp = [&](std::vector<double>& out, std::uint32_t cycle, Polarity pol) {
      for (std::uint32_t i = 0; i <= c.pulses; ++i) {
        if (i > 0) array.pulse(d, pol, 1, t);
        out[c.at(d, cycle, i)] = array.read(d, t + read_delay);
        t += period;
      }
    };
    for (std::uint32_t cycle = 0; cycle < c.cycles; ++cycle) {
      if (!c.gradual_depression) {
        array.reset(d, t);  // the only way down for a set-only device
        t += period;
      }
      ramp(c.up, cycle, Polarity::potentiate);
      if (c.gradual_depression) ramp(c.down, cycle, Polarity::depress);
    }
    c.health[d] = static_cast<std::uint8_t>(array.health(d));

    for (std::size_t level = 0; level < levels; ++level) {
      const VerifyResult r = program_and_verify(array, d, c.drift_targets[level], t, verify);
      // Delays count from the device's last programming, which is `t` unless the
      // device already sat within tolerance of the target and took no pulse.
      const double programmed_at = array.programmed_at(d);
      c.drift_programmed[level * c.devices + d] = array.programmed(d);
      c.drift_verify_status[level * c.devices + d] = static_cast<std::uint8_t>(r.status);
      for (std::size_t k = 0; k < delays; ++k)
        c.drift[c.drift_at(level, d, k)] = array.read(d, programmed_at + c.read_delays[k]);
      t = programmed_at + (delays > 0 ? c.read_delays.back() : 0.0) + period;
    }
    c.pulse_count[d] = array.pulse_count(d);
    c.energy[d] = array.energy(d);
    if (progress) progress(work_per_device * (d + 1), total_work);
  }
  return c;
}

}  // namespace nvsyn
