#pragma once
// Firing statistics of one population, from its spikes and the model time they cover.
//
// mean_rate_hz = spikes / (neurons * duration)
//   NaN when neurons == 0 or duration <= 0 (a rate over nothing is undefined, not 0).
//
// cv_isi: for each neuron with at least 3 spikes (2 inter-spike intervals), the
//   coefficient of variation of its intervals, CV = sd / mean, with the population
//   standard deviation sd = sqrt(sum (isi - mean)^2 / k) over its k intervals
//   (numpy.std's default, ddof = 0); then the plain mean of those CVs over neurons.
//   A regular train has CV 0, a Poisson train CV near 1. NaN when no neuron
//   qualifies. Neurons whose intervals are all zero (coincident spikes) have no
//   defined CV and are left out.
//   The per-neuron variance uses Welford's running update, so a perfectly regular
//   train gives 0 to rounding, not a cancellation residue of sum-of-squares.
//
// Cost is one pass over the spikes and O(neurons) memory.
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

namespace nvsyn {

struct PopulationSummary {
  std::string name;
  std::uint32_t neurons = 0;
  std::uint64_t spikes = 0;
  double mean_rate_hz = 0.0;
  double cv_isi = 0.0;                // dimensionless; NaN when neurons_with_isi == 0
  std::uint32_t neurons_with_isi = 0;  // neurons with >= 3 spikes that entered cv_isi
};

// Builds one population's summary from its spikes given in consecutive blocks (a run
// file's spikes in the order stored), so memory does not grow with the spike count.
class PopulationSummariser {
 public:
  PopulationSummariser(std::string name, std::uint32_t neuron_count);
  ~PopulationSummariser();
  // The rules of summarise_population apply across blocks.
  void add(std::span<const double> times, std::span<const std::uint32_t> neurons);
  PopulationSummary finish(double duration_s) const;

  // Memory held per neuron of the population (bytes), for checking a size stated
  // by a file before constructing.
  static std::size_t bytes_per_neuron();

 private:
  struct State;
  std::unique_ptr<State> state_;
};

// `times` (s) and `neurons` describe the same spikes; within each neuron the times
// must be non-decreasing (run files store them ascending). Throws UserError naming
// the population when a neuron index is >= `neuron_count`, when the spans differ
// in length, or when a neuron's times go backwards.
PopulationSummary summarise_population(const std::string& name, std::uint32_t neuron_count,
                                       std::span<const double> times, std::span<const std::uint32_t> neurons,
                                       double duration_s);

// One summary per population with recorded spikes, in the order the populations
// were described, over the model time the run reached (attribute time_reached).
// Throws UserError if the file cannot be read or the run never finished (no
// time_reached), since rates would then have no defined duration, and when a
// population's stated size would need more memory than memory_budget_bytes().
// Spikes are read in blocks (RunReader::for_each_spike_block).
std::vector<PopulationSummary> summarise_run(const std::string& path);

}  // namespace nvsyn
