#pragma once
// The memory a model will need, estimated from the checked Model before anything
// is allocated, so that a model that cannot fit (10^9 neurons, random wiring with
// 10^13 expected synapses, a list of billions of rows) is refused with a located
// message instead of exhausting the machine or ending in std::bad_alloc.
//
// The figures are the ones `nvsyn check` reports after building (bytes per neuron
// of the neuron model, bytes per synapse of storage, devices, learning rule and
// short-term state), multiplied by the expected counts: population and input sizes,
// and per pathway the expected synapse count of its wiring rule (one_to_one:
// min(N_pre, N_post); all_to_all: N_pre N_post; random: p N_pre N_post; in_degree:
// k N_post; list: the rows of the file). Transient copies made while building and
// while writing the run file are included, because they coexist with the rest.
// Event buffers, which depend on activity, are not.
#include <cstdint>
#include <string>
#include <vector>

#include "core/param_table.hpp"
#include "model/model.hpp"

namespace nvsyn {

struct MemoryItem {
  std::string what;           // "population 'exc'", "pathway 'exc_to_inh'"
  double count = 0.0;         // neurons, sources, expected synapses
  std::string unit;           // "neurons", "expected synapses"
  double bytes_each = 0.0;
  double bytes = 0.0;         // count x bytes_each, plus per-group overheads
  std::string how;            // how the count follows from the model, e.g. "p 0.1 x 1000 x 1000"
  const ParamTable* table = nullptr;  // where the count is stated
  std::string key;                    // ... and under which key
};

struct MemoryEstimate {
  std::vector<MemoryItem> items;  // populations, inputs, pathways, in model order
  double total_bytes = 0.0;
  const MemoryItem* largest() const;
};

// Reads the parameters it needs (neuron, device, layout, rule) from the model's
// tables with the same validation as the builder; throws their UserErrors, and a
// located UserError for counts that their 32-bit storage cannot number
// (injected-current changes).
MemoryEstimate estimate_memory(const Model& model);

// Throws a UserError at the largest item, stating the estimate and the machine's
// physical memory, when the estimate exceeds physical memory.
void check_memory(const MemoryEstimate& estimate);

}  // namespace nvsyn
