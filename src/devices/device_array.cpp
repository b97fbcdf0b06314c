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
      has_read_noise_(p_.read_noise > 0.0 || p_.read_noise_q > 0.0),
      state_(count) {
  const double range = p_.g_max - p_.g_min;
  for (std::size_t d = 0; d < count; ++d) {
    State& s = state_[d];
    RandomStream var(seed_, StreamPurpose::device_variability, stream_base_ + d);
    // Relative spreads are normal, clipped so that a device keeps a usable range.
    const bool d2d_spread_free = p_.d2d_g_max == 0.0;  // keep g_max exact
    const double g_max = p_.g_min + range * std::max(0.05, 1.0 + p_.d2d_g_max * var.normal());
    s.g_max = d2d_spread_free ? p_.g_max : g_max;
    s.step_scale = static_cast<float>(std::max(0.05, 1.0 + p_.d2d_step * var.normal()));
    s.nu = static_cast<float>(std::max(0.0, p_.drift_nu + p_.drift_nu_sd * var.normal()));

    RandomStream fault(seed_, StreamPurpose::device_faults, stream_base_ + d);
    const double u = fault.uniform();
    if (u < p_.stuck_low) s.health = DeviceHealth::stuck_low;
    else if (u < p_.stuck_low + p_.stuck_high) s.health = DeviceHealth::stuck_high;

    if (p_.kind == DeviceKind::phase_change) {
      RandomStream start = programming_stream(d);
      s.g = std::min(device_laws::phase_change_reset(p_, start), s.g_max);
    } else {
      s.g = p_.g_min;
    }
    if (health(d) == DeviceHealth::stuck_low) s.g = p_.g_min;
    if (health(d) == DeviceHealth::stuck_high) s.g = s.g_max;
  }
}

RandomStream DeviceArray::programming_stream(std::size_t d) const {
  RandomStream rng(seed_, StreamPurpose::device_programming_noise, stream_base_ + d);
  // Four blocks (eight uniforms) per pulse: enough for every kind's draws.
  rng.seek_block(std::uint64_t{state_[d].pulses} * 4);
  return rng;
}

void DeviceArray::count_pulse(std::size_t d) {
  ++state_[d].pulses;
  if (p_.endurance > 0 && state_[d].pulses >= p_.endurance && responsive(d))
    state_[d].health = DeviceHealth::worn_out;
}

double DeviceArray::pulse(std::size_t d, Polarity pol, std::uint32_t count, double t) {
  State& s = state_[d];
  const double before = s.g;
  const DeviceVariation v = variation(d);
  for (std::uint32_t k = 0; k < count; ++k) {
    const double range = v.g_max - p_.g_min;
    const double x = range > 0 ? (s.g - p_.g_min) / range : 0.0;
    s.energy += static_cast<float>(p_.pulse_energy_low + (p_.pulse_energy_high - p_.pulse_energy_low) * x);
    if (responsive(d)) {
      RandomStream rng = programming_stream(d);
      s.g = apply_pulse(p_, v, s.g, pol, rng);
    }
    count_pulse(d);
  }
  if (count > 0) s.t_programmed = t;
  return s.g - before;
}

void DeviceArray::reset(std::size_t d, double t) {
  State& s = state_[d];
  if (responsive(d)) {
    if (p_.kind == DeviceKind::phase_change) {
      RandomStream rng = programming_stream(d);
      s.g = std::min(device_laws::phase_change_reset(p_, rng), s.g_max);
    } else {
      s.g = p_.g_min;
    }
  }
  s.energy += static_cast<float>(p_.pulse_energy_high);
  count_pulse(d);
  s.t_programmed = t;
}

double DeviceArray::set_exact(std::size_t d, double g, double t) {
  State& s = state_[d];
  const double before = s.g;
  if (responsive(d)) s.g = std::clamp(g, p_.g_min, s.g_max);
  s.t_programmed = t;
  return s.g - before;
}

double DeviceArray::read_mean(std::size_t d, double t) const {
  const State& s = state_[d];
  return drifted_conductance(s.g, t - s.t_programmed, s.nu, p_.drift_t0);
}

DeviceArray::ReadTerms DeviceArray::read_terms(const State& s, double t) const {
  const double since = t - s.t_programmed;
  ReadTerms r;
  r.mean = drifted_conductance(s.g, since, s.nu, p_.drift_t0);
  if (has_read_noise_) r.sd = relative_read_sd(p_.read_noise, p_.read_noise_q, p_.read_bandwidth, since);
  return r;
}

double DeviceArray::read_noise_normal(std::size_t d) {
  const RandomBlock block =
      random_block(seed_, StreamPurpose::device_read_noise, stream_base_ + d / 2, state_[d].reads++);
  return block_normals(block)[d % 2];
}

namespace {

double noisy(double mean, double sd, double z) { return std::max(0.0, mean * (1.0 + sd * z)); }

}  // namespace

double DeviceArray::read(std::size_t d, double t) {
  const ReadTerms r = read_terms(state_[d], t);
  if (r.sd == 0.0) return r.mean;
  return noisy(r.mean, r.sd, read_noise_normal(d));
}

std::array<double, 2> DeviceArray::read_pair(std::size_t d, double t) {
  if (d % 2 != 0) {  // d and d + 1 belong to different pairs: nothing to share
    const double first = read(d, t);
    return {first, read(d + 1, t)};
  }
  State& a = state_[d];
  State& b = state_[d + 1];
  const ReadTerms ra = read_terms(a, t), rb = read_terms(b, t);
  if (ra.sd == 0.0 || rb.sd == 0.0) {  // at most one of them draws
    return {ra.sd == 0.0 ? ra.mean : noisy(ra.mean, ra.sd, read_noise_normal(d)),
            rb.sd == 0.0 ? rb.mean : noisy(rb.mean, rb.sd, read_noise_normal(d + 1))};
  }
  // One block for both: normal 0 is device d's, normal 1 device d + 1's. If one of
  // them was read alone before (program-and-verify reads one device of a pair), its
  // partner's count is first raised to match: the numbers skipped are never used, and
  // from then on the pair's counts agree, so every later pair read shares its block.
  const std::uint32_t count = std::max(a.reads, b.reads);
  const std::array<double, 2> z =
      block_normals(random_block(seed_, StreamPurpose::device_read_noise, stream_base_ + d / 2, count));
  a.reads = b.reads = count + 1;
  return {noisy(ra.mean, ra.sd, z[0]), noisy(rb.mean, rb.sd, z[1])};
}

double DeviceArray::expected_step(std::size_t d, Polarity pol) const {
  if (!responsive(d)) return 0.0;
  return mean_step(p_, variation(d), state_[d].g, pol);
}

}  // namespace nvsyn
