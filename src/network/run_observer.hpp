#pragma once
// What the kernel reports while it runs. The run-file writer (src/record) and the
// progress display (src/cli) listen through this interface, so the kernel knows
// nothing about files or terminals.
#include <cstdint>
#include <span>

namespace nvsyn {

// One weight update of a recorded synapse.
struct WeightChange {
  double time = 0.0;        // s
  std::uint64_t synapse = 0;
  double requested = 0.0;   // A, change of |w| the rule asked for
  double realised = 0.0;    // A, change of |w| the devices (or bounds) allowed
  std::uint8_t route = 0;   // UpdateRoute: 0 none, 1 direct, 2 differential partner
};

class RunObserver {
 public:
  virtual ~RunObserver() = default;
  // Spikes of one recorded population within one window, ascending in time
  // (ties by neuron index). `neurons` are indices within the population.
  virtual void on_spikes(std::uint32_t population, std::span<const double> times,
                         std::span<const std::uint32_t> neurons) = 0;
  // One sample row of trace `trace`: values of its neurons at `time`.
  virtual void on_sample(std::uint32_t trace, double time, std::span<const double> values) = 0;
  // Weight recorder `recorder` ([record.weights.<name>]): effective weights of its
  // synapses at `time` (periodic samples), every change of them (sorted by time within
  // a window), and whole-pathway snapshots.
  virtual void on_weight_sample(std::uint32_t /*recorder*/, double /*time*/, std::span<const double> /*weights*/) {}
  virtual void on_weight_changes(std::uint32_t /*recorder*/, std::span<const WeightChange> /*changes*/) {}
  virtual void on_weight_snapshot(std::uint32_t /*recorder*/, double /*time*/, std::span<const double> /*weights*/) {}
  // The kernel finished all events before model time `time`.
  virtual void on_progress(double /*time*/) {}
};

}  // namespace nvsyn
