#pragma once
// Reads a run file written by RunWriter (layout "nvsyn-run" version 1, LAYOUT.md).
//
// Opening reads only the small things (root attributes, the lists of populations,
// pathways and traces); spike and trace data are read on request, in full (refused
// with a UserError when they would not fit in memory) or, for spikes, in blocks of
// bounded size. Sizes the file states are checked before anything is allocated for
// them (detail/dataset_size.hpp), so a damaged or crafted file cannot exhaust memory.
// A file that is missing, not HDF5, not a run file or of another layout version is a
// UserError naming the file, as is a run file whose content breaks the layout.
// Not thread-safe: use one reader per thread.
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "record/run_writer.hpp"

namespace nvsyn {

// The inverse of run_status_name(); nullopt for a name it never produces.
std::optional<RunStatus> parse_run_status(std::string_view name);

struct RunPopulationInfo {
  std::string name;
  std::uint32_t size = 0;
  std::string neuron_model;
  bool has_spikes = false;  // /spikes/<name> exists
};

struct RunPathwayInfo {
  std::string name;
  std::string source;
  std::string target;
  std::string rule;
  std::string device;
  std::string receptor;
  std::uint64_t synapses = 0;
};

struct RunTraceInfo {
  std::string population;
  std::string variable;
  std::string units;         // SI symbol of the values, "1" when dimensionless
  std::uint64_t samples = 0;  // rows
  std::uint64_t neurons = 0;  // columns
};

struct RunFileInfo {
  std::string path;
  std::string layout;  // always "nvsyn-run" once opened
  int layout_version = 0;
  std::string nvsyn_version;
  std::string created;  // ISO 8601, UTC
  std::uint64_t seed = 0;
  RunStatus status = RunStatus::running;
  double duration = 0.0;               // s, requested model time
  std::optional<double> time_reached;  // s; absent when finish() never ran (crash, or still running)
  std::string model_text;
  std::string model_file;
  std::vector<RunPopulationInfo> populations;  // in the order they were described
  std::vector<RunPathwayInfo> pathways;        // in the order they were written
  std::vector<RunTraceInfo> traces;
};

struct SpikeData {
  std::vector<double> times;            // s, ascending
  std::vector<std::uint32_t> neurons;   // index within the population, same length
};

struct PathwayData {
  std::vector<std::uint32_t> pre;   // source index of each synapse
  std::vector<std::uint32_t> post;  // target index
  std::vector<double> delay;        // s
  std::vector<double> weight;       // A
};

struct TraceData {
  std::vector<double> times;           // s, one per row
  std::vector<std::uint32_t> neurons;  // one per column
  std::vector<double> values;          // row-major, times.size() x neurons.size()
  std::string units;
};

class RunReader {
 public:
  explicit RunReader(const std::string& path);
  ~RunReader();
  RunReader(RunReader&&) noexcept;
  RunReader& operator=(RunReader&&) noexcept;

  const RunFileInfo& info() const;
  // Throws UserError when the population has no recorded spikes.
  SpikeData read_spikes(const std::string& population) const;
  // Calls `block` with consecutive parts of the population's spikes, in file order,
  // each at most kSpikeBlockLength long: memory stays bounded however many spikes
  // the file holds. Throws UserError as read_spikes does.
  static constexpr std::size_t kSpikeBlockLength = std::size_t{1} << 20;
  void for_each_spike_block(
      const std::string& population,
      const std::function<void(std::span<const double> times, std::span<const std::uint32_t> neurons)>& block) const;
  // Throws UserError when no such pathway was written.
  PathwayData read_pathway(const std::string& name) const;
  // Throws UserError when no such trace was recorded.
  TraceData read_trace(const std::string& population, const std::string& variable) const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// Shorthand for RunReader(path).info(): the metadata, with the file closed again.
RunFileInfo read_run_file(const std::string& path);

}  // namespace nvsyn
