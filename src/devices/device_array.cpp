#include "devices/device_array.hpp"

#include <algorithm>
#include <cmath>

#include "devices/drift.hpp"
#include "devices/read_noise.hpp"

namespace nvsyn {

DeviceArray::DeviceArray(DeviceParameters params, std::size_t count, std::uint64_t seed, std::uint64_t stream_base)
    : p_(std::move(params)),
      seed_(seed),
      stream_base_(stream_base),
      g_(count),
      t_programmed_(count, 0.0),
      g_max_(count),
      step_scale_(count),
      nu_(count),
      pulses_(count, 0),
      reads_(count, 0),
      energy_(count, 0.0f),
      health_(count, 0) {
  const double range = p_.g_max - p_.g_min;
  for (std::size_t d = 0; d < count; ++d) {
    RandomStream var(seed_, StreamPurpose::device_variability, stream_base_ + d);
    // Relative spreads are normal, clipped so that a device keeps a usable range.
    const bool d2d_spread_free = p_.d2d_g_max == 0.0;  // keep g_max exact
    const double g_max = p_.g_min + range * std::max(0.05, 1.0 + p_.d2d_g_max * var.normal());
    g_max_[d] = d2d_spread_free ? p_.g_max : g_max;
    step_scale_[d] = static_cast<float>(std::max(0.05, 1.0 + p_.d2d_step * var.normal()));
    nu_[d] = static_cast<float>(std::max(0.0, p_.drift_nu + p_.drift_nu_sd * var.normal()));

    RandomStream fault(seed_, StreamPurpose::device_faults, stream_base_ + d);
    const double u = fault.uniform();
    if (u < p_.stuck_low) health_[d] = static_cast<std::uint8_t>(DeviceHealth::stuck_low);
    else if (u < p_.stuck_low + p_.stuck_high) health_[d] = static_cast<std::uint8_t>(DeviceHealth::stuck_high);

    if (p_.kind == DeviceKind::phase_change) {
      RandomStream start = programming_stream(d);
      g_[d] = std::min(device_laws::phase_change_reset(p_, start), g_max_[d]);
    } else {
      g_[d] = p_.g_min;
    }
    if (health(d) == DeviceHealth::stuck_low) g_[d] = p_.g_min;
    if (health(d) == DeviceHealth::stuck_high) g_[d] = g_max_[d];
  }
}

RandomStream DeviceArray::programming_stream(std::size_t d) const {
  RandomStream rng(seed_, StreamPurpose::device_programming_noise, stream_base_ + d);
  // Four blocks (eight uniforms) per pulse: enough for every kind's draws.
  rng.seek_block(std::uint64_t{pulses_[d]} * 4);
  return rng;
}

double DeviceArray::pulse(std::size_t d, Polarity pol, std::uint32_t count, double t) {
  const double before = g_[d];
  const DeviceVariation v = variation(d);
  for (std::uint32_t k = 0; k < count; ++k) {
    const double range = v.g_max - p_.g_min;
    const double x = range > 0 ? (g_[d] - p_.g_min) / range : 0.0;
    energy_[d] += static_cast<float>(p_.pulse_energy_low + (p_.pulse_energy_high - p_.pulse_energy_low) * x);
    if (responsive(d)) {
      RandomStream rng = programming_stream(d);
      g_[d] = apply_pulse(p_, v, g_[d], pol, rng);
    }
    ++pulses_[d];
    if (p_.endurance > 0 && pulses_[d] >= p_.endurance && responsive(d))
      health_[d] = static_cast<std::uint8_t>(DeviceHealth::worn_out);
  }
  if (count > 0) t_programmed_[d] = t;
  return g_[d] - before;
}

void DeviceArray::reset(std::size_t d, double t) {
  if (responsive(d)) {
    if (p_.kind == DeviceKind::phase_change) {
      RandomStream rng = programming_stream(d);
      g_[d] = std::min(device_laws::phase_change_reset(p_, rng), g_max_[d]);
    } else {
      g_[d] = p_.g_min;
    }
  }
  energy_[d] += static_cast<float>(p_.pulse_energy_high);
  ++pulses_[d];
  if (p_.endurance > 0 && pulses_[d] >= p_.endurance && responsive(d))
    health_[d] = static_cast<std::uint8_t>(DeviceHealth::worn_out);
  t_programmed_[d] = t;
}

double DeviceArray::set_exact(std::size_t d, double g, double t) {
  const double before = g_[d];
  if (responsive(d)) g_[d] = std::clamp(g, p_.g_min, g_max_[d]);
  t_programmed_[d] = t;
  return g_[d] - before;
}

double DeviceArray::read_mean(std::size_t d, double t) const {
  return drifted_conductance(g_[d], t - t_programmed_[d], nu_[d], p_.drift_t0);
}

double DeviceArray::read(std::size_t d, double t) {
  const double mean = read_mean(d, t);
  const double sd = relative_read_sd(p_.read_noise, p_.read_noise_q, p_.read_bandwidth, t - t_programmed_[d]);
  if (sd == 0.0) return mean;
  RandomStream rng(seed_, StreamPurpose::device_read_noise, stream_base_ + d);
  rng.seek_block(reads_[d]++);
  return std::max(0.0, mean * (1.0 + sd * rng.normal()));
}

double DeviceArray::expected_step(std::size_t d, Polarity pol) const {
  if (!responsive(d)) return 0.0;
  return mean_step(p_, variation(d), g_[d], pol);
}

}  // namespace nvsyn
