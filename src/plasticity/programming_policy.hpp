#pragma once
// Programming policies: the bridge from a requested weight change (what a learning
// rule asks for, in A) to pulses on the synapse's devices.
//
//   nearest     n = round(|dw| / step): updates below half a step are lost
//               (the "vanishing update" effect of low-resolution devices);
//   stochastic  n = floor(x) + Bernoulli(x - floor(x)), x = |dw| / step:
//               unbiased in expectation for a device with uniform steps;
//   accumulate  a high-precision accumulator per synapse gathers requests and
//               whole steps are programmed when it exceeds one step.
// `max_pulses` caps the pulses of one update (0: no cap). The step is the device's
// expected step at its present state, so state-dependent devices are handled.
// |dw| is first cut to the weight headroom of the device being programmed (what it
// can still move in that direction): near a soft bound the step shrinks towards zero,
// and dividing a larger request by it would ask for billions of pulses. Requests that
// fit the headroom are untouched; the ledger keeps the full request.
// Ideal (continuous) devices take every request exactly.
//
// Every update reports requested and realised change; per-synapse totals and
// pathway-wide statistics are kept in the ledger for the run file.
#include <cstdint>
#include <string>
#include <vector>

#include "core/param_table.hpp"
#include "devices/synapse_devices.hpp"

namespace nvsyn {

enum class Rounding : std::uint8_t { nearest, stochastic, accumulate };
std::string_view rounding_name(Rounding r);

struct PolicyParameters {
  Rounding rounding = Rounding::stochastic;
  std::uint32_t max_pulses = 0;
  static PolicyParameters from_table(const ParamTable& table);
};

struct UpdateOutcome {
  double requested = 0.0;  // A
  double realised = 0.0;   // A, change of the programmed weight
  std::uint32_t pulses = 0;
  UpdateRoute route = UpdateRoute::none;
  bool refreshed = false;
};

// Pathway-wide counts and sums of updates. Kept apart from the per-synapse ledger so
// that the kernel's threads can each gather the totals of a fixed block of neurons and
// merge them in block order: a sum of doubles depends on its order, and this keeps
// the order, hence the bits, independent of the thread count.
struct LedgerTotals {
  std::uint64_t updates = 0, pulses = 0, routed_partner = 0, unrealisable = 0;
  double sum_requested = 0, sum_realised = 0, sum_squared_error = 0;

  void add(const UpdateOutcome& o);
  void merge(const LedgerTotals& other);
};

// Per-synapse record of requested versus realised change, and the pathway's totals.
struct UpdateLedger {
  std::vector<double> requested;  // A, per synapse, summed over updates
  std::vector<double> realised;   // A, per synapse
  std::vector<std::uint32_t> updates;
  LedgerTotals totals;

  explicit UpdateLedger(std::size_t synapses = 0)
      : requested(synapses, 0.0), realised(synapses, 0.0), updates(synapses, 0) {}
  // Records an update in the per-synapse arrays only (the caller keeps the totals).
  void add_to_synapse(std::size_t k, const UpdateOutcome& o);
  void add(std::size_t k, const UpdateOutcome& o) {
    add_to_synapse(k, o);
    totals.add(o);
  }
};

class ProgrammingPolicy {
 public:
  ProgrammingPolicy(const PolicyParameters& params, std::size_t synapses, std::uint64_t seed,
                    std::uint32_t pathway_id);

  // Programs a requested change dw (A) of synapse k. The update is recorded in the
  // per-synapse ledger, and its counts and sums in `totals` (the ledger's own totals
  // when null; see LedgerTotals for why a caller keeps its own).
  UpdateOutcome apply(SynapseDevices& synapses, std::size_t k, double dw, double t, LedgerTotals* totals = nullptr);
  // Adds totals gathered by a caller of apply() to the ledger's.
  void merge_totals(const LedgerTotals& totals) { ledger_.totals.merge(totals); }
  // Hint that synapse k will be updated soon: starts loading its ledger entries, so a
  // caller walking scattered synapses (all inputs of a neuron that spikes) can overlap
  // their memory latencies. Changes nothing. (Always inlined, see DeviceArray::prefetch.)
  [[gnu::always_inline]] void prefetch(std::size_t k) const {
    __builtin_prefetch(&ledger_.requested[k]);
    __builtin_prefetch(&ledger_.updates[k]);
  }
  const UpdateLedger& ledger() const { return ledger_; }
  const PolicyParameters& parameters() const { return p_; }
  double accumulator(std::size_t k) const { return accumulator_.empty() ? 0.0 : accumulator_[k]; }
  // Bytes of policy state per synapse: the ledger, plus the accumulator if used.
  static std::size_t bytes_per_synapse(const PolicyParameters& p) {
    return 2 * sizeof(double) + sizeof(std::uint32_t) + (p.rounding == Rounding::accumulate ? sizeof(double) : 0);
  }

 private:
  void record(std::size_t k, const UpdateOutcome& o, LedgerTotals* totals) {
    ledger_.add_to_synapse(k, o);
    (totals ? *totals : ledger_.totals).add(o);
  }
  // The stochastic-rounding uniform of synapse k's next update.
  double rounding_draw(std::size_t k) const;
  // True when a request of x_request steps (|request| / step) certainly gives no pulse;
  // u is the update's rounding draw (stochastic rounding only).
  bool rounds_to_zero(double x_request, double u) const;

  PolicyParameters p_;
  std::uint64_t seed_;
  std::uint32_t pathway_id_;
  std::vector<double> accumulator_;  // A, accumulate mode only
  UpdateLedger ledger_;
};

}  // namespace nvsyn
