#pragma once
// Spike sources that fire at given times: explicit lists per source, or a regular
// train (rate, start, count) shared by all sources. For pairing and frequency
// protocols, and for driving a network with a recorded spike pattern.
#include <vector>

#include "inputs/spike_source.hpp"

namespace nvsyn {

class TimedSpikes final : public SpikeSource {
 public:
  // times[i]: ascending spike times (s) of source i.
  explicit TimedSpikes(std::vector<std::vector<double>> times);
  // `size` sources, each firing `count` times at `rate` from `start`.
  static TimedSpikes regular(std::uint32_t size, double rate_hz, double start, std::uint32_t count);

  std::uint32_t size() const override { return static_cast<std::uint32_t>(times_.size()); }
  void emit(double t_end, std::vector<SourceSpike>& out) override;
  std::string describe() const override;
  double expected_spikes(double t_end) const override;

 private:
  std::vector<std::vector<double>> times_;
  std::vector<std::size_t> next_;
};

}  // namespace nvsyn
