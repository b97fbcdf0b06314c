#include "inputs/current_schedule.hpp"

#include <algorithm>
#include <tuple>

namespace nvsyn {

void CurrentSchedule::add(double time, double delta, std::uint32_t population, std::uint32_t neuron) {
  changes_.push_back({time, delta, population, neuron, static_cast<std::uint32_t>(changes_.size())});
}

void CurrentSchedule::finalise() {
  std::sort(changes_.begin(), changes_.end(), [](const CurrentChange& a, const CurrentChange& b) {
    return std::tie(a.time, a.population, a.neuron, a.sequence) <
           std::tie(b.time, b.population, b.neuron, b.sequence);
  });
  next_ = 0;
}

}  // namespace nvsyn
