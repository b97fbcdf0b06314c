#include "devices/calibration/transitions.hpp"

#include <algorithm>
#include <map>
#include <set>
#include <tuple>

namespace nvsyn::calibration {

std::size_t TransitionSet::count(Polarity pol, std::uint32_t max_pulses) const {
  return static_cast<std::size_t>(std::count_if(transitions.begin(), transitions.end(), [&](const Transition& t) {
    return t.polarity == pol && t.pulses <= max_pulses;
  }));
}

TransitionSet build_transitions(const PulseData& data) {
  TransitionSet set;
  // Ramps ordered by (device, cycle, polarity) so results do not depend on row order.
  std::map<std::tuple<std::uint32_t, std::uint32_t, Polarity>, Ramp> ramps;
  std::set<std::pair<std::uint32_t, std::uint32_t>> cycles;
  for (std::size_t i = 0; i < data.records.size(); ++i) {
    const PulseRecord& r = data.records[i];
    Ramp& ramp = ramps[{r.device, r.cycle, r.polarity}];
    ramp.device = r.device;
    ramp.cycle = r.cycle;
    ramp.polarity = r.polarity;
    // Validated data: pulse numbers never fall within a ramp, and repeats are later reads.
    if (ramp.points.empty() || data.records[ramp.points.back()].pulse != r.pulse) ramp.points.push_back(i);
    cycles.insert({r.device, r.cycle});
  }
  set.cycles = cycles.size();

  std::map<std::uint32_t, std::pair<double, double>> extremes;  // device -> (min, max)
  for (auto& [key, ramp] : ramps) {
    for (std::size_t i : ramp.points) {
      const double g = data.records[i].conductance;
      auto [it, fresh] = extremes.try_emplace(ramp.device, g, g);
      it->second.first = std::min(it->second.first, g);
      it->second.second = std::max(it->second.second, g);
    }
    set.ramps.push_back(std::move(ramp));
  }
  for (const auto& [device, range] : extremes) set.devices.push_back(device);

  for (std::size_t k = 0; k < set.ramps.size(); ++k) {
    const Ramp& ramp = set.ramps[k];
    const auto [g_low, g_high] = extremes.at(ramp.device);
    const std::size_t device_index = static_cast<std::size_t>(
        std::lower_bound(set.devices.begin(), set.devices.end(), ramp.device) - set.devices.begin());
    for (std::size_t j = 1; j < ramp.points.size(); ++j) {
      const PulseRecord& a = data.records[ramp.points[j - 1]];
      const PulseRecord& b = data.records[ramp.points[j]];
      Transition t;
      t.device = ramp.device;
      t.device_index = device_index;
      t.ramp = k;
      t.polarity = ramp.polarity;
      t.pulse_from = a.pulse;
      t.pulses = b.pulse - a.pulse;
      t.g_from = a.conductance;
      t.g_to = b.conductance;
      t.row = b.row;
      const double bound = ramp.polarity == Polarity::potentiate ? g_high : g_low;
      t.at_bound = t.g_from == bound || t.g_to == bound;
      set.transitions.push_back(t);
    }
  }
  return set;
}

}  // namespace nvsyn::calibration
