#pragma once
// Test helper: keeps every spike and sample the kernel reports.
#include <cstdint>
#include <vector>

#include "network/run_observer.hpp"

namespace nvsyn::test {

struct SpikeCollector : RunObserver {
  struct Spike {
    std::uint32_t population;
    std::uint32_t neuron;
    double time;
  };
  struct Sample {
    std::uint32_t trace;
    double time;
    std::vector<double> values;
  };
  std::vector<Spike> spikes;
  std::vector<Sample> samples;
  std::vector<WeightChange> changes;
  std::vector<Sample> weight_samples, snapshots;

  void on_weight_changes(std::uint32_t, std::span<const WeightChange> c) override {
    changes.insert(changes.end(), c.begin(), c.end());
  }
  void on_weight_sample(std::uint32_t r, double time, std::span<const double> w) override {
    weight_samples.push_back({r, time, std::vector<double>(w.begin(), w.end())});
  }
  void on_weight_snapshot(std::uint32_t r, double time, std::span<const double> w) override {
    snapshots.push_back({r, time, std::vector<double>(w.begin(), w.end())});
  }

  void on_spikes(std::uint32_t p, std::span<const double> t, std::span<const std::uint32_t> n) override {
    for (std::size_t i = 0; i < t.size(); ++i) spikes.push_back({p, n[i], t[i]});
  }
  void on_sample(std::uint32_t trace, double time, std::span<const double> v) override {
    samples.push_back({trace, time, std::vector<double>(v.begin(), v.end())});
  }
  std::vector<double> times_of(std::uint32_t population, std::uint32_t neuron) const {
    std::vector<double> out;
    for (const auto& s : spikes)
      if (s.population == population && s.neuron == neuron) out.push_back(s.time);
    return out;
  }
};

}  // namespace nvsyn::test
