#pragma once
// The state of many devices of one kind.
//
// Programming changes a device's "programmed" conductance and stamps the time;
// reading applies drift and read noise lazily from the time since programming,
// so a device nobody touches costs nothing. Results do not depend on the order in
// which devices are used, on threads or on processes: every random number a device
// uses is addressed by (seed, purpose, entity, block) with a block fixed by the
// device's own counters:
//   variation, faults   drawn once, entity stream_base + device;
//   programming noise   entity stream_base + device, block 4 x pulse count;
//   read noise          entity stream_base + device / 2 (the device's pair: devices
//                       2j and 2j + 1), block = the device's read count; an even device
//                       takes the first normal of the block's Box-Muller pair, an odd
//                       device the second. A device read alone thus uses a number fixed
//                       by its own count, whatever the other devices did; a pair read
//                       together (read_pair: the two devices of a differential synapse)
//                       takes one block for both, the block of the larger of their two
//                       counts, and leaves both counts one above it. Each number is used
//                       at most once, and the numbers of a pair depend on that pair's
//                       reads only.
//
// Non-idealities (all optional, composable with every kind): cycle-to-cycle
// programming noise, device-to-device variation of g_max, step size and drift
// exponent, white and 1/f read noise, power-law drift, stuck-at-low/high faults,
// finite endurance (after `endurance` pulses a device stops responding) and a
// conductance-dependent energy per pulse.
//
// Layout: one 48-byte record per device holds all of its state (conductance,
// programming time, this device's g_max, step scale and drift exponent, counters,
// energy, health), so a read or a programming request touches one or two cache lines
// instead of one per field (3 bytes of padding: 45 bytes of state).
#include <array>
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

  std::size_t size() const { return state_.size(); }
  const DeviceParameters& parameters() const { return p_; }
  bool continuous() const { return p_.kind == DeviceKind::ideal; }

  // Applies `count` pulses at time t; returns the change of the programmed conductance (S).
  double pulse(std::size_t d, Polarity pol, std::uint32_t count, double t);
  // Abrupt reset to the low state (phase-change: a draw from the reset distribution;
  // other kinds: g_min). Counts as one pulse.
  void reset(std::size_t d, double t);
  // Continuous write, for ideal devices only (clamped to the range). Returns the change.
  double set_exact(std::size_t d, double g, double t);

  double programmed(std::size_t d) const { return state_[d].g; }
  double programmed_at(std::size_t d) const { return state_[d].t_programmed; }
  // Conductance at time t with drift, without read noise.
  double read_mean(std::size_t d, double t) const;
  // One noisy read at time t (drift and read noise); advances the device's read count
  // when it draws noise.
  double read(std::size_t d, double t);
  // Noisy reads of devices d and d + 1 at time t, meant for the devices of one synapse.
  // When d is even (the two form a pair) and both draw noise, one random block serves
  // both (see the top of this file); when their counts agree the values are those of
  // read(d, t) and read(d + 1, t). Otherwise the same as those two reads.
  std::array<double, 2> read_pair(std::size_t d, double t);
  // Hint that device d will be used soon: starts loading its record into the cache,
  // so that a caller walking scattered synapses can overlap their memory latencies.
  // (Always inlined: GCC 12 finds the out-of-line function free of side effects and
  // drops calls to it.)
  [[gnu::always_inline]] void prefetch(std::size_t d) const { __builtin_prefetch(&state_[d]); }
  // Expected signed change of the next pulse (S); 0 if the device cannot move that way.
  double expected_step(std::size_t d, Polarity pol) const;

  DeviceHealth health(std::size_t d) const { return state_[d].health; }
  bool responsive(std::size_t d) const { return state_[d].health == DeviceHealth::working; }
  double g_max_of(std::size_t d) const { return state_[d].g_max; }
  std::uint32_t pulse_count(std::size_t d) const { return state_[d].pulses; }
  double energy(std::size_t d) const { return state_[d].energy; }

  // Bytes of state per device (for memory estimates).
  static constexpr std::size_t bytes_per_device() { return sizeof(State); }

 private:
  // All of one device's state, in one record.
  struct State {
    double g = 0.0;             // S, programmed conductance
    double t_programmed = 0.0;  // s, time of the last programming
    double g_max = 0.0;         // S, this device's upper bound
    float step_scale = 1.0f;    // this device's step-size factor
    float nu = 0.0f;            // this device's drift exponent
    std::uint32_t pulses = 0;   // pulses applied so far (incl. resets)
    std::uint32_t reads = 0;    // noise numbers used so far (see read noise above)
    float energy = 0.0f;        // J spent on programming
    DeviceHealth health = DeviceHealth::working;
  };
  static_assert(sizeof(State) == 48, "one device record: 3 doubles, 3 floats, 2 counters, health");

  // Drift-corrected mean and relative read-noise sd of one read.
  struct ReadTerms {
    double mean = 0.0;  // S
    double sd = 0.0;    // relative
  };
  ReadTerms read_terms(const State& s, double t) const;
  // The noise normal of device d's next read (its read count), advancing the count.
  double read_noise_normal(std::size_t d);
  DeviceVariation variation(std::size_t d) const { return {state_[d].g_max, state_[d].step_scale}; }
  RandomStream programming_stream(std::size_t d) const;
  void count_pulse(std::size_t d);

  DeviceParameters p_;
  std::uint64_t seed_, stream_base_;
  bool has_read_noise_;  // white or 1/f noise configured: reads draw
  std::vector<State> state_;
};

}  // namespace nvsyn
