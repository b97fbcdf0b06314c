#pragma once
// What a built simulation will cost to run, estimated before the first window, and
// the limits beyond which a run needs the user's explicit consent.
//
// A run can be valid and still never end in practice: a tiny delay over a long
// duration (10^12 windows), a trace sampled every microsecond for days, a million
// Poisson sources at 10 MHz. Each estimate below is an expected count; a run whose
// estimate exceeds its limit is refused with the estimate unless the model says
// `[simulation] allow_large_run = true` or the command line `--allow-large-run`.
// A window count that cannot be counted exactly in a double (above 2^53), or is not
// finite, is refused whatever the consent.
#include <string>

#include "kernel/simulation.hpp"

namespace nvsyn {

// Limits chosen so that no ordinary study reaches them (the shipped models stay
// below them by factors of 1000 and more) while runaway settings do; each is
// roughly an hour or more of computing or gigabytes of output. README, "Limits
// and plausible ranges", states them.
struct RunLimits {
  static constexpr double windows = 1e9;          // duration / shortest delay
  static constexpr double input_spikes = 1e10;    // spikes of all inputs in the run
  static constexpr double input_events = 1e11;    // synaptic events those spikes cause
  static constexpr double trace_values = 1e9;     // recorded trace values (8 bytes each)
  static constexpr double weight_values = 1e9;    // recorded weight values (4 bytes each)
  static constexpr double countable_windows = 9007199254740992.0;  // 2^53: never exceeded
};

struct RunCost {
  double duration = 0.0;        // s of model time
  double window = 0.0;          // s, the shortest delay
  double windows = 0.0;         // duration / window
  double input_spikes = 0.0;    // expected
  double input_events = 0.0;    // expected synaptic events caused by input spikes
  double trace_values = 0.0;    // samples x recorded neurons, over all traces
  double weight_values = 0.0;   // periodic samples x recorded synapses + snapshots x synapses
};

// Expected counts of the simulation as built (exact where the inputs are given as
// times). Events caused by the network's own spikes depend on its activity and are
// not included.
RunCost estimate_run_cost(const Simulation& sim);

// Throws a UserError naming the estimate, the limit, the setting that drives it
// (at its file position, or --duration when the options override the duration) and
// the consent that lifts the limit, unless the model or `options` allow a large run;
// refuses uncountable window counts always.
void check_run_cost(const RunCost& cost, const Simulation& sim, const Model& model, const BuildOptions& options);

}  // namespace nvsyn
