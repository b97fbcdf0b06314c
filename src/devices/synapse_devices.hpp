#pragma once
// How the devices of a pathway's synapses make weights (the synapse read-out layer).
//
//   single:       w = gain * G
//   differential: w = gain * (G+ - G-); a potentiating request pulses G+, a
//                 depressing request pulses G- (the "partner"), so devices that
//                 only potentiate (phase-change) can still learn both ways.
//                 Refresh: when G+ or G- passes refresh_threshold * g_max, both are
//                 reset and the difference is written back with program-and-verify;
//                 optionally also at the first update after every refresh_interval.
//   multi:        w = gain * sum_i G_i over N devices; each update programs one
//                 device, chosen round-robin (the next device each update) or by a
//                 counter (the same device until it has taken `counter_limit` pulses).
// gain is a voltage: the synaptic current jump per siemens (w in A, G in S); a file
// may give `weight_max` instead, the weight of a fully programmed synapse.
// The sign of the weight the neuron sees comes from the pathway's receptor.
#include <atomic>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "core/param_table.hpp"
#include "devices/device_array.hpp"
#include "devices/program_verify.hpp"

namespace nvsyn {

enum class SynapseLayout : std::uint8_t { single, differential, multi };
enum class Arbitration : std::uint8_t { round_robin, counter };
std::string_view synapse_layout_name(SynapseLayout l);

struct SynapseLayoutParameters {
  SynapseLayout layout = SynapseLayout::single;
  std::uint32_t devices_per_synapse = 1;  // multi: N
  Arbitration arbitration = Arbitration::round_robin;
  std::uint32_t counter_limit = 16;       // pulses before the counter moves on
  double gain = 1e-3;                     // V (A per S)
  double refresh_threshold = 0.0;         // fraction of g_max; 0: off
  double refresh_interval = 0.0;          // s; 0: off
  VerifyOptions verify;                   // for initial writes and refresh

  static SynapseLayoutParameters from_table(const ParamTable& table, const DeviceParameters& device);
  std::uint32_t devices() const {
    return layout == SynapseLayout::single ? 1 : layout == SynapseLayout::differential ? 2 : devices_per_synapse;
  }
};

// Outcome of writing many target weights with program-and-verify.
struct WriteSummary {
  std::uint64_t written = 0;       // synapses attempted
  std::uint64_t failed = 0;        // verify did not reach its tolerance
  std::uint64_t out_of_range = 0;  // of those: target outside the device range
  std::uint64_t unresponsive = 0;  // of those: stuck or worn-out device
  double sum_abs_error = 0.0;      // A, |programmed - target| summed
  double max_abs_error = 0.0;      // A
  void add(const VerifyResult& r, double weight_error);
};

// Which device a programming request went to.
enum class UpdateRoute : std::uint8_t { none = 0, direct = 1, partner = 2 };
std::string_view update_route_name(UpdateRoute r);

struct PulseOutcome {
  double realised = 0.0;  // A, change of the programmed (drift-free) weight
  std::uint32_t pulses = 0;
  UpdateRoute route = UpdateRoute::none;
  bool refreshed = false;
};

class SynapseDevices {
 public:
  SynapseDevices(const DeviceParameters& device, const SynapseLayoutParameters& layout, std::size_t synapses,
                 std::uint64_t seed, std::uint32_t pathway_id);

  std::size_t size() const { return synapses_; }
  const SynapseLayoutParameters& layout() const { return layout_; }
  const DeviceArray& devices() const { return devices_; }
  DeviceArray& devices() { return devices_; }
  bool continuous() const { return devices_.continuous(); }

  // Weight magnitude the neuron sees at time t (drift and read noise), A.
  double read_weight(std::size_t k, double t);
  // Drift only, no noise.
  double weight_mean(std::size_t k, double t) const;
  // Weight right after the last programming (no drift, no noise).
  double weight_programmed(std::size_t k) const;
  // Expected magnitude of the weight change of one pulse in direction `dir` (A).
  double expected_weight_step(std::size_t k, Polarity dir) const;
  // Largest weight change (A, >= 0) that pulses in direction `dir` can still make:
  // gain times the distance of the device they program to the bound it moves towards.
  double weight_headroom(std::size_t k, Polarity dir) const;
  // Hint that synapse k will be read or programmed soon: starts loading its device
  // records (see DeviceArray::prefetch). Changes nothing.
  [[gnu::always_inline]] void prefetch(std::size_t k) const {
    const std::size_t base = device_index(k, 0);
    devices_.prefetch(base);
    devices_.prefetch(base + layout_.devices() - 1);
  }
  // Applies `count` pulses that move the weight in direction `dir`.
  PulseOutcome pulse(std::size_t k, Polarity dir, std::uint32_t count, double t);
  // Continuous change, for ideal devices only.
  PulseOutcome change_exact(std::size_t k, double dw, double t);
  // Writes a target weight magnitude with program-and-verify; the result of the
  // worst device of the synapse.
  VerifyResult write_weight(std::size_t k, double w, double t);

  // Device index of device j of synapse k.
  std::size_t device_index(std::size_t k, std::uint32_t j) const { return k * layout_.devices() + j; }
  std::uint64_t refresh_count() const { return refreshes_.load(std::memory_order_relaxed); }
  // Per-synapse arrays for the run file.
  std::size_t devices_per_synapse() const { return layout_.devices(); }

 private:
  bool needs_refresh(std::size_t k, double t) const;
  void refresh(std::size_t k, double t);
  // Device of synapse k that the next update programs (0 unless multi).
  std::uint32_t select_device(std::size_t k) const;

  SynapseLayoutParameters layout_;
  std::size_t synapses_;
  DeviceArray devices_;
  std::vector<std::uint32_t> selector_;  // multi: device chosen next / pulses on it
  std::vector<double> last_refresh_;     // differential with refresh_interval: s
  // Atomic: refreshes happen while the kernel's threads process neurons (a count of
  // integers is the same whatever order the threads add to it).
  std::atomic<std::uint64_t> refreshes_{0};
};

}  // namespace nvsyn
