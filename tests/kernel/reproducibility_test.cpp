// Same model and seed: identical bits. Different seed: different spikes.
#include <catch2/catch.hpp>
#include <cstring>

#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "support_spike_collector.hpp"

using namespace nvsyn;

namespace {

constexpr const char* kNetwork = R"(
[simulation]
duration = "300 ms"
seed = 11

[population.exc]
size = 200
v_init = { dist = "uniform", low = "-65 mV", high = "-52 mV" }

[population.inh]
size = 50

[input.drive]
kind = "poisson"
size = 100
rate = "20 Hz"

[pathway.drive_exc]
from = "drive"
to = "exc"
wiring = "random"
p = 0.2
weight = { dist = "normal", mean = "0.4 nA", sd = "0.1 nA" }
delay = { dist = "uniform", low = "1 ms", high = "2 ms" }

[pathway.exc_inh]
from = "exc"
to = "inh"
wiring = "in_degree"
in_degree = 20
weight = "0.3 nA"
delay = "1.2 ms"

[pathway.inh_exc]
from = "inh"
to = "exc"
receptor = "inhibitory"
wiring = "random"
p = 0.3
weight = "-0.5 nA"
delay = "1.1 ms"

[record.trace.v]
population = "exc"
neurons = [0, 5]
interval = "1 ms"
)";

test::SpikeCollector run_once(std::optional<std::uint64_t> seed = std::nullopt) {
  Model model = read_model_text(kNetwork, "net.toml");
  BuildOptions options;
  options.seed = seed;
  Simulation sim = Simulation::build(model, options);
  test::SpikeCollector c;
  sim.run(c);
  return c;
}

}  // namespace

TEST_CASE("the same seed gives bit-identical spikes and traces", "[kernel]") {
  const auto a = run_once(), b = run_once();
  REQUIRE(a.spikes.size() > 100);
  REQUIRE(a.spikes.size() == b.spikes.size());
  CHECK(std::memcmp(a.spikes.data(), b.spikes.data(), a.spikes.size() * sizeof(a.spikes[0])) == 0);
  REQUIRE(a.samples.size() == b.samples.size());
  for (std::size_t i = 0; i < a.samples.size(); ++i)
    REQUIRE(std::memcmp(a.samples[i].values.data(), b.samples[i].values.data(), 2 * sizeof(double)) == 0);
  const auto c = run_once(12);
  CHECK(c.spikes.size() != a.spikes.size());
}

TEST_CASE("recorded spikes are ascending in time within each population", "[kernel]") {
  const auto a = run_once();
  double last[2] = {-1, -1};
  for (const auto& s : a.spikes) {
    REQUIRE(s.time >= last[s.population]);
    last[s.population] = s.time;
  }
}
