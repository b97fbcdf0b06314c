#pragma once
// A set of independent Poisson spike trains (one per source) with a constant rate,
// active in [start, stop).
//
// Each source draws its inter-spike intervals (exponential, mean 1/rate) from its
// own stream keyed by (seed, poisson, group, source), so its spike train does not
// depend on window length, thread count or other sources.
#include <cstdint>
#include <utility>
#include <vector>

#include "core/random_stream.hpp"
#include "inputs/spike_source.hpp"

namespace nvsyn {

class PoissonTrains final : public SpikeSource {
 public:
  PoissonTrains(std::uint32_t size, double rate_hz, double start, double stop, std::uint64_t seed,
                std::uint32_t group_id);

  std::uint32_t size() const override { return static_cast<std::uint32_t>(next_.size()); }
  std::string describe() const override;
  double expected_spikes(double t_end) const override;
  double rate() const { return rate_; }

  // Appends the spikes in [t_begin, t_end) of every source; order within the
  // window is by source, then time (the kernel sorts).
  void emit(double t_end, std::vector<SourceSpike>& out) override;

 private:
  double rate_, start_, stop_;
  std::vector<double> next_;  // next spike time per source
  std::vector<RandomStream> rng_;
};

}  // namespace nvsyn
