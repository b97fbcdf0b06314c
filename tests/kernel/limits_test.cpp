// Memory and run-cost estimates made before building and running
// (kernel/memory_estimate.hpp, kernel/run_cost.hpp).
#include <catch2/catch.hpp>

#include <fmt/format.h>
#include <string>

#include "core/machine_memory.hpp"
#include "kernel/memory_estimate.hpp"
#include "kernel/run_cost.hpp"
#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"

using namespace nvsyn;

namespace {

struct Settings {
  std::string duration = "1 s";
  std::string simulation_extra;
  int exc = 200, drive = 50;
  std::string rate = "20 Hz";
  std::string drive_wiring = "wiring = \"in_degree\"\nin_degree = 10";
  std::string rec_wiring = "wiring = \"random\"\np = 0.1";
  std::string delay = "1 ms";
  std::string trace_interval = "1 ms";
  std::string weights = "interval = \"10 ms\"";
};

std::string model(const Settings& s) {
  return fmt::format(R"(
[simulation]
duration = "{}"
{}
[population.exc]
size = {}

[input.drive]
kind = "poisson"
size = {}
rate = "{}"

[pathway.drive_exc]
from = "drive"
to = "exc"
{}
weight = "0.1 nA"
delay = "{}"

[pathway.rec]
from = "exc"
to = "exc"
{}
weight = "0.01 nA"
delay = "2 ms"

[pathway.rec.plasticity]
rule = "pair_stdp"
w_max = "0.1 nA"

[record.trace.v]
population = "exc"
neurons = [0, 1, 2]
interval = "{}"

[record.weights.w]
pathway = "rec"
{}
)",
                     s.duration, s.simulation_extra, s.exc, s.drive, s.rate, s.drive_wiring, s.delay, s.rec_wiring,
                     s.trace_interval, s.weights);
}

const MemoryItem& item(const MemoryEstimate& e, const std::string& what) {
  for (const MemoryItem& i : e.items)
    if (i.what == what) return i;
  FAIL("no estimate for " << what);
  throw;
}

}  // namespace

TEST_CASE("the memory estimate counts what the wiring rules build", "[limits]") {
  Settings s;
  const Model m = read_model_text(model(s), "limits.toml");
  const MemoryEstimate e = estimate_memory(m);
  const Simulation sim = Simulation::build(m);
  const auto& paths = sim.network().pathways;
  // in_degree is exact: 10 inputs for each of 200 neurons.
  CHECK(item(e, "pathway 'drive_exc'").count == 2000.0);
  CHECK(paths[0].synapses.size() == 2000);
  // random: p N_pre N_post is the mean of a binomial count with sd sqrt(N p (1 - p)) = 120;
  // 5 sd bound, false-failure rate below 1e-6 (normal approximation).
  CHECK(item(e, "pathway 'rec'").count == Approx(0.1 * 200 * 200));
  CHECK(std::abs(static_cast<double>(paths[1].synapses.size()) - 4000.0) < 5 * 120.0);
  CHECK(item(e, "population 'exc'").count == 200.0);
  // The estimate covers at least the state `nvsyn check` reports after building.
  const double built = static_cast<double>(paths[1].synapses.bytes() + paths[0].synapses.bytes()) +
                       static_cast<double>(paths[1].synapses.size() * paths[1].rule->bytes_per_synapse());
  CHECK(e.total_bytes > built);
  CHECK_NOTHROW(check_memory(e));
}

TEST_CASE("a model that cannot fit into memory is refused before building, at the key that makes it large",
          "[limits]") {
  Settings s;
  s.exc = 2'000'000'000;
  s.rec_wiring = "wiring = \"all_to_all\"";
  const Model m = read_model_text(model(s), "limits.toml");
  CHECK_THROWS_WITH(Simulation::build(m),
                    Catch::Contains("limits.toml:") && Catch::Contains("'wiring'") &&
                        Catch::Contains("pathway 'rec'") && Catch::Contains("physical memory") &&
                        Catch::Contains(format_bytes(static_cast<double>(physical_memory_bytes()))));
}

TEST_CASE("the run cost is estimated from the built simulation", "[limits]") {
  Settings s;
  const Simulation sim = Simulation::build(read_model_text(model(s), "limits.toml"));
  const RunCost c = estimate_run_cost(sim);
  CHECK(c.windows == Approx(1.0 / 1e-3));
  CHECK(c.input_spikes == Approx(20.0 * 50 * 1.0));  // rate x size x duration
  // Each source feeds 2000 / 50 = 40 synapses on average.
  CHECK(c.input_events == Approx(c.input_spikes * 40.0));
  CHECK(c.trace_values == Approx(1001.0 * 3));  // samples at 0, 1 ms, ..., 1 s of 3 neurons
  CHECK(c.weight_values == Approx(101.0 * static_cast<double>(sim.network().pathways[1].synapses.size())));
}

TEST_CASE("runs beyond the cost limits need consent", "[limits]") {
  Settings s;
  s.delay = "1 us";
  s.duration = "2000 s";  // 2e9 windows
  CHECK_THROWS_WITH(Simulation::build(read_model_text(model(s), "limits.toml")),
                    Catch::Contains("limits.toml:3:1") && Catch::Contains("'duration'") &&
                        Catch::Contains("windows") && Catch::Contains("allow_large_run"));
  BuildOptions consent;
  consent.allow_large_run = true;
  CHECK_NOTHROW(Simulation::build(read_model_text(model(s), "limits.toml"), consent));
  s.simulation_extra = "allow_large_run = true";
  CHECK_NOTHROW(Simulation::build(read_model_text(model(s), "limits.toml")));

  Settings traces;
  traces.trace_interval = "1 us";
  traces.duration = "1000 s";  // 1e9 samples x 3 neurons
  CHECK_THROWS_WITH(Simulation::build(read_model_text(model(traces), "limits.toml")),
                    Catch::Contains("'interval'") && Catch::Contains("trace of population 'exc'"));

  Settings inputs;
  inputs.rate = "10 MHz";
  inputs.drive = 2000;
  inputs.duration = "1000 s";  // 2e13 spikes
  CHECK_THROWS_WITH(Simulation::build(read_model_text(model(inputs), "limits.toml")),
                    Catch::Contains("'rate'") && Catch::Contains("input 'drive'"));

  Settings weights;
  weights.weights = "interval = \"1 us\"";  // 1e6 samples of about 4000 synapses
  CHECK_THROWS_WITH(Simulation::build(read_model_text(model(weights), "limits.toml")),
                    Catch::Contains("'interval'") && Catch::Contains("weight recording of pathway 'rec'"));

  // --duration overrides are located at the option.
  BuildOptions longer;
  longer.duration = 1e7;
  CHECK_THROWS_WITH(Simulation::build(read_model_text(model(Settings{}), "limits.toml"), longer),
                    Catch::Contains("'--duration'"));
}

TEST_CASE("a window count beyond 2^53 is refused even with consent", "[limits]") {
  Settings s;
  s.delay = "1 fs";
  s.duration = "1e4 yr";
  s.simulation_extra = "allow_large_run = true\nallow_implausible = true";
  // The event ring for delays from 1 fs to 2 ms does not fit either; refuse it located.
  CHECK_THROWS_WITH(Simulation::build(read_model_text(model(s), "limits.toml")),
                    Catch::Contains("'delay'") && Catch::Contains("event ring"));
  s.delay = "2 ms";
  s.duration = "1e12 yr";
  CHECK_THROWS_WITH(Simulation::build(read_model_text(model(s), "limits.toml")),
                    Catch::Contains("'duration'") && Catch::Contains("2^53"));
}
