#pragma once
// The state of many devices of one kind, structure of arrays.
//
// Programming changes a device's "programmed" conductance and stamps the time;
// reading applies drift and read noise lazily from the time since programming,
// so a device nobody touches costs nothing. Each device has its own random
// streams keyed by (seed, purpose, stream_base + index), addressed by its pulse
// and read counters: results do not depend on the order in which devices are
// used, on threads or on processes.
//
// Non-idealities (all optional, composable with every kind): cycle-to-cycle
// programming noise, device-to-device variation of g_max, step size and drift
// exponent, white and 1/f read noise, power-law drift, stuck-at-low/high faults,
// finite endurance (after `endurance` pulses a device stops responding) and a
// conductance-dependent energy per pulse.
#include <cstdint>
#include <vector>

#include "devices/device_parameters.hpp"
#include "devices/polarity.hpp"
#include "devices/pulse_response.hpp"

namespace nvsyn {

enum class DeviceHealth : std::uint8_t { working = 0, stuck_low = 1, stuck_high = 2, worn_out = 3 };

class DeviceArray {
 public:
  DeviceArray(DeviceParameters params, std::size_t count, std::uint64_t seed, std::uint64_t stream_base);

  std::size_t size() const { return g_.size(); }
  const DeviceParameters& parameters() const { return p_; }
  bool continuous() const { return p_.kind == DeviceKind::ideal; }

  // Applies `count` pulses at time t; returns the change of the programmed conductance (S).
  double pulse(std::size_t d, Polarity pol, std::uint32_t count, double t);
  // Abrupt reset to the low state (phase-change: a draw from the reset distribution;
  // other kinds: g_min). Counts as one pulse.
  void reset(std::size_t d, double t);
  // Continuous write, for ideal devices only (clamped to the range). Returns the change.
  double set_exact(std::size_t d, double g, double t);

  double programmed(std::size_t d) const { return g_[d]; }
  double programmed_at(std::size_t d) const { return t_programmed_[d]; }
  // Conductance at time t with drift, without read noise.
  double read_mean(std::size_t d, double t) const;
  // One noisy read at time t (drift and read noise); advances the device's read counter.
  double read(std::size_t d, double t);
  // Expected signed change of the next pulse (S); 0 if the device cannot move that way.
  double expected_step(std::size_t d, Polarity pol) const;

  DeviceHealth health(std::size_t d) const { return static_cast<DeviceHealth>(health_[d]); }
  bool responsive(std::size_t d) const { return health_[d] == 0; }
  double g_max_of(std::size_t d) const { return variation(d).g_max; }
  std::uint32_t pulse_count(std::size_t d) const { return pulses_[d]; }
  double energy(std::size_t d) const { return energy_[d]; }

  // Bytes of state per device (for memory estimates).
  static constexpr std::size_t bytes_per_device() {
    return 3 * sizeof(double) + 2 * sizeof(float) + 2 * sizeof(std::uint32_t) + sizeof(float) + sizeof(std::uint8_t);
  }

 private:
  DeviceVariation variation(std::size_t d) const { return {g_max_[d], step_scale_[d]}; }
  RandomStream programming_stream(std::size_t d) const;

  DeviceParameters p_;
  std::uint64_t seed_, stream_base_;
  std::vector<double> g_;             // S, programmed conductance
  std::vector<double> t_programmed_;  // s, time of the last programming
  std::vector<double> g_max_;         // S, per-device upper bound
  std::vector<float> step_scale_;     // per-device step-size factor
  std::vector<float> nu_;             // per-device drift exponent
  std::vector<std::uint32_t> pulses_; // pulses applied so far (incl. resets)
  std::vector<std::uint32_t> reads_;  // noisy reads so far
  std::vector<float> energy_;         // J spent on programming
  std::vector<std::uint8_t> health_;  // DeviceHealth
};

}  // namespace nvsyn
