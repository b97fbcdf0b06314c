#pragma once
// The interface between the event kernel and a neuron model.
//
// A NeuronBank holds the state of all neurons of one population as structure of
// arrays. The kernel hands it, neuron by neuron, the inputs that arrive at that
// neuron inside one window [t_begin, t_end), sorted by (time, kind, source, sequence).
// The model advances the neuron exactly from event to event, locates threshold
// crossings in between to within 1e-9 s, and reports spike times. Each model also
// predicts, from a neuron's present state, the earliest time at which it could reach
// threshold without further input (earliest_threshold_time); the kernel keeps these
// times in a wake-up calendar and visits a neuron only in windows where it has input
// or its wake-up time has come: idle neurons, and neurons that are charging up
// towards a spike still far away, cost nothing.
#include <cstdint>
#include <limits>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "core/units.hpp"

namespace nvsyn {

enum class Receptor : std::uint8_t { excitatory = 0, inhibitory = 1 };

// Order of kinds at equal times: current changes, then synaptic input, then samples.
enum class InputKind : std::uint8_t { current_change = 0, synaptic = 1, sample = 2 };

// One input of one neuron: 32 bytes. The same record is the kernel's pending event,
// so that a neuron's inputs are handed over where the kernel grouped them, without
// a copy; `target` and `order` are the kernel's (models ignore them).
struct NeuronInput {
  double time = 0.0;  // s
  union {
    double amount = 0.0;     // A: change of injected current; for synaptic input see SpikeHooks
    std::uint64_t synapse;   // synaptic input from the kernel: index within its pathway
  };
  std::uint32_t target = 0;  // kernel: group-global id of the target neuron
  union {
    std::uint32_t order = 0;  // kernel: group-global id of the emitting source (synaptic input)
    std::uint32_t slot;       // samples: row of the sample buffer to fill
  };
  std::uint32_t pathway = 0;  // synaptic: pathway index; kernel: sequence number of a current change
  InputKind kind = InputKind::synaptic;
  Receptor receptor = Receptor::excitatory;
};
static_assert(sizeof(NeuronInput) == 32, "the kernel copies and sorts these records: keep them small");

// How a neuron model talks back to the kernel while it works through a window, in
// time order: the amplitude of a synaptic input is asked for at the moment it is
// applied (so plasticity caused by an earlier spike of the same window is seen), and
// each spike is announced as soon as it is found (so learning rules see it before
// any later input).
class SpikeHooks {
 public:
  virtual ~SpikeHooks() = default;
  // Current jump (A) of a synaptic input at its arrival time.
  virtual double synaptic_amount(std::uint32_t neuron, const NeuronInput& in) = 0;
  // The neuron fired at time t.
  virtual void on_spike(std::uint32_t neuron, double t) = 0;
};

// Hooks for a neuron used on its own: inputs carry their amplitude in `amount`.
class PlainInputs final : public SpikeHooks {
 public:
  double synaptic_amount(std::uint32_t, const NeuronInput& in) override { return in.amount; }
  void on_spike(std::uint32_t, double) override {}
};

// A variable that can be recorded as a trace.
struct TraceVariable {
  std::string_view name;
  Dimension dimension;
};

class NeuronBank {
 public:
  virtual ~NeuronBank() = default;

  virtual std::string_view model_name() const = 0;
  virtual std::uint32_t size() const = 0;

  // Processes `inputs` (all inside the current window, sorted) and then lets the
  // neuron evolve freely until t_end (exclusive). Appends spike times, ascending,
  // to `spikes`. For each sample input, writes variables() values of the neuron at
  // that time into samples[slot * variables().size() + k].
  // Throws RunFailure (core/run_failure.hpp) naming the neuron, the variable and the
  // time when a state becomes NaN or infinite, checked once per call.
  virtual void process(std::uint32_t neuron, std::span<const NeuronInput> inputs, double t_end,
                       std::vector<double>& spikes, std::span<double> samples, SpikeHooks& hooks) = 0;

  // The earliest time (s) at which the neuron can reach threshold without further
  // input, judged from its present state: exact, or a rigorous lower bound (a visit
  // before the true crossing only costs time, a visit after it would lose the
  // spike); +infinity when it provably never can. A non-finite state must give a
  // finite time, so that the neuron is visited and process() reports it. Called by
  // the kernel after every visit, so it should be cheap (no crossing search).
  virtual double earliest_threshold_time(std::uint32_t neuron) const = 0;

  // False when, without further input, the neuron can provably never reach threshold.
  bool may_fire_without_input(std::uint32_t neuron) const {
    return earliest_threshold_time(neuron) < std::numeric_limits<double>::infinity();
  }

  virtual std::span<const TraceVariable> variables() const = 0;
  virtual std::size_t bytes_per_neuron() const = 0;
};

}  // namespace nvsyn
