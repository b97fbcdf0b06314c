#pragma once
// What the kernel reports while it runs. The run-file writer (src/record) and the
// progress display (src/cli) listen through this interface, so the kernel knows
// nothing about files or terminals.
#include <cstdint>
#include <span>

namespace nvsyn {

class RunObserver {
 public:
  virtual ~RunObserver() = default;
  // Spikes of one recorded population within one window, ascending in time
  // (ties by neuron index). `neurons` are indices within the population.
  virtual void on_spikes(std::uint32_t population, std::span<const double> times,
                         std::span<const std::uint32_t> neurons) = 0;
  // One sample row of trace `trace`: values of its neurons at `time`.
  virtual void on_sample(std::uint32_t trace, double time, std::span<const double> values) = 0;
  // The kernel finished all events before model time `time`.
  virtual void on_progress(double /*time*/) {}
};

}  // namespace nvsyn
