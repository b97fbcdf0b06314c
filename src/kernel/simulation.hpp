#pragma once
// The event-driven simulation of a built network.
//
// Time advances in windows of length d_min, the smallest synaptic delay: a spike
// emitted inside a window can only take effect in a later window, so within a
// window every neuron is processed independently (the unit of work for threads
// and of spike exchange between processes). Inside a neuron's window its inputs
// are applied in (time, kind, source, pathway, synapse) order, so ties break the
// same way on every run. Spike times are exact: no global time grid exists.
//
// Which neurons are visited: each population keeps a wake-up calendar
// (kernel/wake_calendar.hpp), a min-heap of (time, neuron) holding for every
// neuron NeuronBank::earliest_threshold_time, the earliest time it could reach
// threshold without further input (a rigorous lower bound; +infinity if never).
// In each segment of a window (windows are cut at global events: rewards,
// normalisation, weight samples) a neuron is processed only if it has input in the
// segment or its wake-up time lies before the segment's end; the two sets are
// merged in neuron index order, and the neuron's wake-up time is read again after
// its visit. Ruling a neuron out therefore costs nothing per window: neurons that
// are idle, or charging towards a spike that is still far away, are not touched.
#include <atomic>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "inputs/current_schedule.hpp"
#include "inputs/spike_source.hpp"
#include "model/model.hpp"
#include "network/network.hpp"
#include "network/run_observer.hpp"

namespace nvsyn {

struct BuildOptions {
  std::optional<std::uint64_t> seed;      // overrides the model's seed
  std::optional<double> duration;         // overrides the model's duration (s)
  // Accept a run beyond the cost limits (kernel/run_cost.hpp), as the model key
  // [simulation] allow_large_run = true does.
  bool allow_large_run = false;
  // Threads of the event loop; 0: every core this process may use. Results do not
  // depend on it (kernel/neuron_blocks.hpp).
  unsigned threads = 0;
};

struct InputChannel {
  std::string name;
  std::unique_ptr<SpikeSource> spikes;  // null for current inputs
};

// One recorded variable of one trace spec: the unit of RunObserver::on_sample.
struct TraceStream {
  std::uint32_t population = 0;
  std::string variable;
  std::uint32_t variable_index = 0;  // into NeuronBank::variables()
  Dimension dimension = Dimension::voltage;
  std::vector<std::uint32_t> neurons;
  double interval = 0.0;  // s
};

// One [record.weights.<name>] recorder, resolved.
struct WeightRecorder {
  std::string name;
  std::uint32_t pathway = 0;
  std::vector<std::uint64_t> synapses;  // the recorded synapses (all of them for "all")
  std::vector<std::int64_t> position;   // per synapse of the pathway: index in `synapses` or -1 (every_change)
  double interval = 0.0;
  bool every_change = false;
  std::vector<double> snapshots;
};

enum class EndReason { complete, interrupted };

struct RunSummary {
  EndReason reason = EndReason::complete;
  double time_reached = 0.0;                   // s of model time
  std::vector<std::uint64_t> spikes;           // per population
  std::uint64_t input_spikes = 0;
  std::uint64_t synaptic_events = 0;           // deliveries to neurons
  std::uint64_t windows = 0;
  double wall_seconds = 0.0;
};

class Simulation {
 public:
  // Builds the network from a checked model. Throws UserError for parameter problems.
  static Simulation build(const Model& model, const BuildOptions& options = {});

  Simulation(Simulation&&) noexcept;
  Simulation& operator=(Simulation&&) noexcept;
  ~Simulation();

  // Runs from the current time to the model duration (or until *stop becomes true,
  // checked between windows and between the neurons of a window, so that a stop is
  // honoured within one neuron's work). Spikes of recorded populations and trace
  // samples go to `observer`. Ends with reason `complete` only when the whole
  // duration was simulated (an InternalError otherwise).
  // A stop inside a window abandons that window: its spikes, trace samples and
  // weight changes never reach the observer (weight samples and snapshots taken at
  // times inside it already have), time_reached is the end of the previous window,
  // and the simulation cannot be run further. Throws RunFailure (core/run_failure.hpp) when a state becomes NaN or
  // infinite, naming population or pathway, neuron or synapse, variable and time;
  // everything up to time_reached() has then been reported to the observer.
  RunSummary run(RunObserver& observer, const std::atomic<bool>* stop = nullptr);
  // Model time up to which every window is complete (s).
  double time_reached() const;

  const Network& network() const;
  const std::vector<InputChannel>& inputs() const;
  const std::vector<TraceStream>& traces() const;
  const std::vector<std::uint32_t>& recorded_populations() const;  // population indices
  const std::vector<WeightRecorder>& weight_recorders() const;
  // Schedules a reward (neuromodulator pulse) of size r at time t for a pathway with
  // a reward-modulated rule; for experiments that decide rewards themselves. Times
  // must not lie in the past of the run. Throws UserError otherwise.
  void add_reward(const std::string& pathway, double t, double r);
  std::uint64_t seed() const;
  unsigned threads() const;  // of the event loop
  double duration() const;
  double window() const;  // s, the d_min window length

  struct State;

 private:
  explicit Simulation(std::unique_ptr<State> state);
  std::unique_ptr<State> state_;
};

}  // namespace nvsyn
