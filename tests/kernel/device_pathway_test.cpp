// Pathways whose weights live in devices, through the whole kernel.
#include <catch2/catch.hpp>
#include <cmath>

#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "support_spike_collector.hpp"

using namespace nvsyn;

namespace {

std::string model_with(const std::string& synapse) {
  return R"(
[simulation]
duration = "2 s"
seed = 5

[population.cells]
size = 50

[input.drive]
kind = "poisson"
size = 100
rate = "30 Hz"

[pathway.drive_cells]
from = "drive"
to = "cells"
wiring = "random"
p = 0.3
weight = { dist = "uniform", low = "0.05 nA", high = "0.15 nA" }
delay = "1 ms"
)" + synapse;
}

Simulation build(const std::string& text) {
  return Simulation::build(read_model_text(text, std::string(NVSYN_TEST_MODELS) + "/x.toml"));
}

}  // namespace

TEST_CASE("an ideal device holds the requested weights", "[kernel][devices]") {
  Simulation sim = build(model_with("[pathway.drive_cells.synapse]\npreset = \"ideal\"\nweight_max = \"0.4 nA\"\n"));
  const Pathway& p = sim.network().pathways[0];
  REQUIRE(p.devices);
  CHECK(p.initial_write.failed == 0);
  for (std::size_t k = 0; k < p.synapses.size(); ++k)
    REQUIRE(std::abs(p.initial_weight[k] - p.synapses.weight[k]) <= 1e-15 * std::abs(p.synapses.weight[k]));
}

TEST_CASE("finite-level devices quantise the weights to within half a step", "[kernel][devices]") {
  Simulation sim = build(model_with("[pathway.drive_cells.synapse]\npreset = \"finite_levels\"\nweight_max = \"0.32 nA\"\n"));
  const Pathway& p = sim.network().pathways[0];
  // 32 levels over 0.32 nA: a step of 10 pA; program-and-verify stops within half a step.
  const double step = 0.32e-9 / 32;
  CHECK(p.initial_write.failed == 0);
  for (std::size_t k = 0; k < p.synapses.size(); ++k) {
    REQUIRE(std::abs(p.initial_weight[k] - p.synapses.weight[k]) <= 0.5 * step * (1 + 1e-9));
    const double levels = p.initial_weight[k] / step;
    REQUIRE(std::abs(levels - std::round(levels)) < 1e-6);
  }
}

TEST_CASE("drift lowers phase-change weights during a run, lazily at delivery", "[kernel][devices]") {
  Simulation sim = build(model_with(
      "[pathway.drive_cells.synapse]\npreset = \"phase_change\"\nweight_max = \"0.4 nA\"\n"
      "[pathway.drive_cells.synapse.device]\nread_noise = 0.0\nread_noise_q = 0.0\n"));
  test::SpikeCollector spikes;
  sim.run(spikes);
  const Pathway& p = sim.network().pathways[0];
  REQUIRE(p.devices);
  CHECK(p.devices->layout().layout == SynapseLayout::differential);
  // After 2 s every device has drifted: the mean weight is below the programmed one.
  double programmed = 0, later = 0;
  for (std::size_t k = 0; k < p.synapses.size(); ++k) {
    programmed += p.devices->weight_programmed(k);
    later += p.devices->weight_mean(k, 2.0);
  }
  CHECK(later < programmed);
  CHECK_FALSE(spikes.spikes.empty());
}

TEST_CASE("device pathways are reproducible from the seed", "[kernel][devices]") {
  const std::string text =
      model_with("[pathway.drive_cells.synapse]\npreset = \"resistive_bidirectional\"\nweight_max = \"0.4 nA\"\n");
  test::SpikeCollector a, b;
  build(text).run(a);
  build(text).run(b);
  REQUIRE(a.spikes.size() == b.spikes.size());
  for (std::size_t i = 0; i < a.spikes.size(); ++i) REQUIRE(a.spikes[i].time == b.spikes[i].time);
}

TEST_CASE("device and synapse parameters are checked with file, line and key", "[kernel][devices]") {
  CHECK_THROWS_WITH(build(model_with("[pathway.drive_cells.synapse]\npreset = \"ideal\"\n")),
                    Catch::Contains("'gain'") && Catch::Contains("weight_max"));
  CHECK_THROWS_WITH(build(model_with("[pathway.drive_cells.synapse]\npreset = \"phase_change\"\nweight_max = \"0.4 nA\"\n"
                                     "layout = \"single\"\n")),
                    Catch::Contains("'layout'") && Catch::Contains("differential"));
  CHECK_THROWS_WITH(build(model_with("[pathway.drive_cells.synapse]\npreset = \"finite_levels\"\nweight_max = \"0.4 nA\"\n"
                                     "[pathway.drive_cells.synapse.device]\nlevelz = 8\n")),
                    Catch::Contains("x.toml:") && Catch::Contains("did you mean 'levels'"));
  CHECK_THROWS_WITH(build(model_with("[pathway.drive_cells.synapse]\npreset = \"no_such_device\"\nweight_max = \"0.4 nA\"\n")),
                    Catch::Contains("x.toml:22:1") && Catch::Contains("not found"));
}
