#pragma once
// The model as read from a model file: plain structs in SI units.
//
// This module knows the file's structure (simulation, populations, inputs,
// pathways, recording) but not the particular neuron, device or rule models:
// their parameters stay in ParamTables that keep each value's source position,
// and each model validates its own table when the network is built.
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "core/distribution.hpp"
#include "core/param_table.hpp"

namespace nvsyn {

struct SimulationSpec {
  double duration = 1.0;  // s
  std::uint64_t seed = 1;
  bool allow_implausible = false;  // values outside their kind's plausible range warn instead of failing
  bool allow_large_run = false;    // runs beyond the cost limits (kernel/run_cost.hpp) are accepted
  std::shared_ptr<const ParamTable> table;  // the [simulation] table, for messages
};

struct PopulationSpec {
  std::string name;
  std::uint32_t size = 0;
  std::string neuron_model;              // registry name, e.g. "lif"
  std::shared_ptr<const ParamTable> table;  // the whole [population.<name>] table
};

enum class InputKindSpec { poisson, current, times, regular };

struct CurrentStep {
  double time = 0.0;       // s
  double amplitude = 0.0;  // A, held from `time` until the next step
};

struct InputSpec {
  std::string name;
  InputKindSpec kind = InputKindSpec::poisson;
  std::shared_ptr<const ParamTable> table;
  // poisson
  std::uint32_t size = 0;
  double rate = 0.0;  // Hz
  double start = 0.0, stop = 0.0;  // s; stop <= start means "until the end"
  // times: spike times per source (s, ascending); regular: rate, start, count
  std::vector<std::vector<double>> spike_times;
  std::uint32_t count = 0;
  bool emits_spikes() const { return kind != InputKindSpec::current; }
  // current
  std::string target;                   // population
  std::vector<std::uint32_t> neurons;   // empty: every neuron of the target
  std::vector<CurrentStep> steps;       // ascending in time
};

enum class WiringRule { one_to_one, all_to_all, random, in_degree, list };

struct PathwaySpec {
  std::string name;
  std::string from;  // population or input
  std::string to;    // population
  std::string receptor;  // "excitatory" | "inhibitory"
  WiringRule wiring = WiringRule::all_to_all;
  double probability = 0.0;         // random
  std::uint32_t in_degree = 0;      // in_degree
  std::string list_file;            // list: resolved path of the CSV
  bool self_connections = false;    // when from == to
  Distribution weight;              // A
  Distribution delay;               // s
  std::shared_ptr<const ParamTable> table;
  // Device synapses ([pathway.<name>.synapse]); null for plain floating-point weights.
  std::shared_ptr<const ParamTable> synapse;  // layout, gain, policy keys
  std::shared_ptr<const ParamTable> device;   // preset with overrides applied
  std::string device_preset;                  // preset name ("" when given inline)
  std::string device_preset_file;             // resolved path of the preset file ("" when inline)
  std::string device_preset_text;             // full text of the preset file
  // Learning ([pathway.<name>.plasticity]) and short-term plasticity of transmission
  // ([pathway.<name>.short_term]); null when absent. Read when the network is built.
  std::shared_ptr<const ParamTable> plasticity;
  std::shared_ptr<const ParamTable> short_term;
};

struct TraceSpec {
  std::string population;
  std::vector<std::string> variables;
  std::vector<std::uint32_t> neurons;
  double interval = 1e-4;  // s
  std::shared_ptr<const ParamTable> table;
};

// Weight recording of one pathway ([record.weights.<name>]).
struct WeightRecordSpec {
  std::string pathway;
  std::vector<std::uint64_t> synapses;  // empty with all_synapses
  bool all_synapses = false;
  double interval = 0.0;                // s between samples; 0: no sampling
  bool every_change = false;            // log every update of the chosen synapses
  std::vector<double> snapshots;        // s: times of whole-pathway weight snapshots
  std::shared_ptr<const ParamTable> table;
};

struct RecordSpec {
  std::vector<std::string> spike_populations;  // default: every population
  std::vector<TraceSpec> traces;
  bool connectivity = true;  // write pre/post/delay/weight of every pathway
  std::vector<WeightRecordSpec> weights;
};

struct Model {
  std::string file;  // path as given
  std::string text;  // full text, stored in the run file
  SimulationSpec simulation;
  std::vector<PopulationSpec> populations;  // in file order
  std::vector<InputSpec> inputs;            // in file order
  std::vector<PathwaySpec> pathways;        // in file order
  RecordSpec record;
  // How values outside their plausible range were treated while reading, and the
  // warnings about those accepted; shared with every ParamTable of the model, so
  // values read when the network is built are checked the same way.
  std::shared_ptr<RangePolicy> ranges;

  const PopulationSpec* find_population(const std::string& name) const;
  const InputSpec* find_input(const std::string& name) const;
  // Every file the model is read or built from: the model file, then each pathway's
  // connection list and device preset. Outputs must not overwrite any of them.
  std::vector<std::string> input_files() const;
};

std::string_view wiring_rule_name(WiringRule rule);

}  // namespace nvsyn
