#pragma once
// Injected currents that change at given times (constant currents are one step at 0).
// Each change is an exact event: the neuron's injected current jumps by `delta` at `time`.
#include <cstdint>
#include <vector>

namespace nvsyn {

struct CurrentChange {
  double time = 0.0;        // s
  double delta = 0.0;       // A
  std::uint32_t population = 0;
  std::uint32_t neuron = 0;
  std::uint32_t sequence = 0;  // order of definition, breaks ties deterministically
};

class CurrentSchedule {
 public:
  void add(double time, double delta, std::uint32_t population, std::uint32_t neuron);
  // Sorts the changes; call once after the last add().
  void finalise();
  // Changes with time < t_end not yet taken, in (time, population, neuron, sequence) order.
  template <typename F>
  void take_until(double t_end, F&& f) {
    while (next_ < changes_.size() && changes_[next_].time < t_end) f(changes_[next_++]);
  }
  std::size_t size() const { return changes_.size(); }

 private:
  std::vector<CurrentChange> changes_;
  std::size_t next_ = 0;
};

}  // namespace nvsyn
