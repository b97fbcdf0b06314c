#pragma once
// Internal state of a Simulation, shared by the builder and the event loop.
#include <vector>

#include "kernel/simulation.hpp"
#include "kernel/neuron_blocks.hpp"
#include "kernel/wake_calendar.hpp"
#include "kernel/worker_team.hpp"

namespace nvsyn {

// An event waiting for delivery to one neuron is the neuron's input record itself
// (neurons/neuron_bank.hpp): the target's population and neuron follow from the
// group-global id (State::group_offset).
using PendingEvent = NeuronInput;

struct Simulation::State {
  Network network;
  std::vector<InputChannel> inputs;
  CurrentSchedule currents;
  std::vector<TraceStream> traces;
  std::vector<std::uint32_t> recorded_populations;
  std::vector<WeightRecorder> weight_recorders;
  // Per pathway: recorders that log every change of its synapses.
  std::vector<std::vector<std::uint32_t>> change_recorders;
  // Per population: pathways onto it that learn (for postsynaptic spikes).
  std::vector<std::vector<std::uint32_t>> learning_inputs;
  std::uint64_t seed = 0;
  double duration = 0.0;
  double window = 0.0;

  // Group-global id offsets: population p's neurons start at group_offset[p];
  // input i's sources at group_offset[P + i].
  std::vector<std::uint32_t> group_offset;
  // Pathway indices leaving each group (populations first, then inputs).
  std::vector<std::vector<std::uint32_t>> outgoing;

  // Event loop state.
  std::uint64_t next_window = 0;
  // True after a run stopped inside a window (a stop request or a RunFailure): the
  // state is then partly ahead of next_window and must not be run further.
  bool unusable = false;
  // One slot per future window; in each, a bucket per producer (thread) of events.
  std::vector<std::vector<std::vector<PendingEvent>>> ring;
  // Fixed blocks of neurons (kernel/neuron_blocks.hpp) and, per block, when its
  // neurons may fire on their own (indices within the block).
  std::vector<NeuronBlock> blocks;
  std::vector<WakeCalendar> block_calendar;
  unsigned threads = 1;
  std::unique_ptr<WorkerTeam> team;  // started by the first run
  std::vector<std::size_t> next_reward;            // per pathway: index into its rewards
  std::vector<std::uint64_t> next_normalisation;   // per pathway: k of the next k * interval
  std::vector<std::uint64_t> next_weight_sample;   // per recorder
  std::vector<std::size_t> next_snapshot;          // per recorder
};

}  // namespace nvsyn
