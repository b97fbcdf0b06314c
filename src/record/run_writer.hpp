#pragma once
// Writes a run file: HDF5, layout "nvsyn-run" version 1 (README.md, "The run file").
//
// Growing datasets (spikes, traces) are chunked, deflate-compressed and appended as
// the run goes: memory stays flat however long the run, and a crash loses at most
// one flush interval. Every dataset holding a quantity has a `units` attribute (SI).
// The root attribute `status` is "running" until finish() writes the final state.
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "core/units.hpp"
#include "network/run_observer.hpp"

namespace nvsyn {

enum class RunStatus { running, complete, interrupted, failed };
std::string_view run_status_name(RunStatus s);

struct RunHeader {
  std::string nvsyn_version;
  std::uint64_t seed = 0;
  double duration = 0.0;   // s, requested model time
  std::string model_text;  // full text of the model file
  std::string model_file;  // path as given
  std::uint32_t threads = 1;  // of the event loop: provenance, results do not depend on it
};

struct PathwayRecord {
  std::string name;
  std::string source;  // population or input name
  std::string target;
  std::string rule;    // learning rule, "none" when static
  std::string device;  // device model, "ideal" when none
  std::string receptor;
  std::span<const std::uint32_t> pre;
  std::span<const std::uint32_t> post;
  std::span<const double> delay;   // s
  std::span<const double> weight;  // A (current-based synapses)
};

// The devices of one pathway at the end of a run (/devices/<path>).
struct DeviceRecord {
  std::string pathway;
  std::string device_model;  // device kind
  std::string layout;        // single | differential | multi
  std::string rounding;      // programming policy
  std::string preset;        // preset name, "" when inline
  std::string preset_text;   // full preset file
  double gain = 0.0;         // V: weight per siemens
  std::uint32_t devices_per_synapse = 1;
  // per device (synapse k owns devices [k * devices_per_synapse, (k+1) * devices_per_synapse))
  std::span<const double> conductance;   // S, at the end time with drift, without read noise
  std::span<const double> programmed;    // S, right after the last programming
  std::span<const std::uint32_t> pulses;
  std::span<const double> energy;        // J
  std::span<const std::uint8_t> health;  // 0 working, 1 stuck low, 2 stuck high, 3 worn out
  // per synapse
  std::span<const double> requested;     // A, requested weight change summed over updates
  std::span<const double> realised;      // A
  std::span<const double> target_weight; // A, weight asked for when the network was built
  std::span<const double> initial_weight;// A, weight programmed by program-and-verify at t = 0
  // initial programming
  std::uint64_t initial_failed = 0, initial_out_of_range = 0, initial_unresponsive = 0;
};

// Learning statistics of one plastic pathway (attributes and datasets of /pathways/<path>).
struct LearningRecord {
  std::string pathway;
  std::string rule;
  std::uint64_t updates = 0, pulses = 0, routed_partner = 0, unrealisable = 0;
  double sum_requested = 0, sum_realised = 0, sum_squared_error = 0;  // A, A, A^2
  std::span<const double> requested;     // A, per synapse, summed over the run
  std::span<const double> realised;      // A
  std::span<const double> final_weight;  // A, effective weight at the end (no read noise)
};

class RunWriter {
 public:
  // Creates (truncates) `path`. Throws UserError naming the path if it cannot.
  RunWriter(const std::string& path, const RunHeader& header);
  ~RunWriter();
  RunWriter(const RunWriter&) = delete;
  RunWriter& operator=(const RunWriter&) = delete;

  void describe_population(const std::string& name, std::uint32_t size, std::string_view neuron_model);
  // Creates /spikes/<population>/{time,neuron}; returns a stream id for append_spikes.
  int open_spikes(const std::string& population);
  void append_spikes(int stream, std::span<const double> times, std::span<const std::uint32_t> neurons);

  void write_pathway(const PathwayRecord& pathway);

  // Creates /devices/<pathway> with the datasets of `record`.
  void write_devices(const DeviceRecord& record);

  // /weights/<pathway>: `synapses` are the recorded synapses (indices within the
  // pathway); returns a recorder id for the append functions.
  int open_weights(const std::string& pathway, std::span<const std::uint64_t> synapses);
  void append_weight_sample(int recorder, double time, std::span<const double> weights);
  void append_weight_changes(int recorder, std::span<const WeightChange> changes);
  void append_weight_snapshot(int recorder, double time, std::span<const double> weights);
  // Learning statistics of a plastic pathway; the pathway must have been written.
  void write_learning(const LearningRecord& record);

  // Creates /traces/<population>/<variable>/{time,value,neuron}; returns a trace id.
  int open_trace(const std::string& population, std::string_view variable, Dimension unit,
                 std::span<const std::uint32_t> neurons);
  void append_trace_row(int trace, double time, std::span<const double> values);

  // Writes buffered rows to the file and flushes HDF5's caches.
  void flush();
  // Final status and model time reached; flushes and closes. Safe to call once.
  // `failure` (for status failed) is stored as the root attribute "failure".
  void finish(RunStatus status, double model_time_reached, std::string_view failure = {});

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace nvsyn
