#pragma once
// A group of spike sources (an input of a model): the kernel asks it, window by
// window, for the spikes before t_end. Sources keep their own position, so the
// spikes never depend on the window length.
#include <cstdint>
#include <string>
#include <vector>

namespace nvsyn {

struct SourceSpike {
  double time = 0.0;
  std::uint32_t source = 0;
};

class SpikeSource {
 public:
  virtual ~SpikeSource() = default;
  virtual std::uint32_t size() const = 0;
  // Appends every spike with time < t_end not given before (any order; the kernel sorts).
  virtual void emit(double t_end, std::vector<SourceSpike>& out) = 0;
  // One line for `nvsyn check`, e.g. "Poisson sources at 5 Hz".
  virtual std::string describe() const = 0;
  // Expected number of spikes of all sources with time < t_end, from the start of
  // the run (for the run-cost estimate; exact for given times).
  virtual double expected_spikes(double t_end) const = 0;
};

}  // namespace nvsyn
