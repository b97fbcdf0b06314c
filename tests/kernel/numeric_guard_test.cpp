// The kernel's numerical guards and invariants: a state that becomes NaN or infinite
// stops the run with a RunFailure that says where and when; a run is "complete"
// only when it reached its duration; long silences do not poison LIF neurons.
#include <catch2/catch.hpp>
#include <atomic>
#include <chrono>
#include <cmath>
#include <string>
#include <thread>

#include "core/run_failure.hpp"
#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "support_spike_collector.hpp"

using namespace nvsyn;

namespace {

// Pairing protocol (a presynaptic spike, then a driven postsynaptic spike 8 ms later)
// with a potentiation amplitude so large that a_plus * w_max * trace overflows to
// infinity at the first postsynaptic spike. Both values are far outside the plausible
// ranges, hence allow_implausible.
constexpr const char* kOverflowingRule = R"(
[simulation]
duration = "3 s"
seed = 1
allow_implausible = true

[population.post]
size = 1

[input.pre]
kind = "times"
times = ["1 s", "2 s"]

[input.driver]
kind = "times"
times = ["1.008 s", "2.008 s"]

[pathway.drive]
from = "driver"
to = "post"
wiring = "all_to_all"
weight = "1.5 nA"
delay = "1 ms"

[pathway.learn]
from = "pre"
to = "post"
wiring = "all_to_all"
weight = "0.05 nA"
delay = "1 ms"

[pathway.learn.plasticity]
rule = "pair_stdp"
a_plus = 1e300
a_minus = 0.0105
tau_plus = "16.8 ms"
tau_minus = "33.7 ms"
w_max = "1e12 A"
)";

// One synaptic input so large (1e306 A, finite) that V would leave the range of a double.
constexpr const char* kOverflowingCurrent = R"(
[simulation]
duration = "1 s"
seed = 1
allow_implausible = true

[population.cells]
size = 3

[input.pre]
kind = "times"
times = ["0.25 s"]

[pathway.huge]
from = "pre"
to = "cells"
wiring = "all_to_all"
weight = "1e306 A"
delay = "1 ms"
)";

// tau_m = 5 ms below the default tau_inh = 10 ms; one inhibitory input, then silence.
// With the former propagator the state became NaN after about 7.1 s of silence.
std::string silent_after_inhibition(const std::string& duration, const std::string& delay,
                                    const std::string& interval) {
  return R"(
[simulation]
duration = ")" + duration + R"("
seed = 1
allow_implausible = true

[population.cell]
size = 1
tau_m = "5 ms"

[input.pre]
kind = "times"
times = ["10 ms"]

[pathway.inh]
from = "pre"
to = "cell"
receptor = "inhibitory"
wiring = "all_to_all"
weight = "-0.5 nA"
delay = ")" + delay + R"("

[record.trace.cell]
population = "cell"
variables = ["v", "i_inh"]
neurons = [0]
interval = ")" + interval + R"("
)";
}

}  // namespace

TEST_CASE("a requested weight change that overflows stops the run naming pathway, synapse and time",
          "[kernel][numerics]") {
  Simulation sim = Simulation::build(read_model_text(kOverflowingRule, "overflow.toml"));
  test::SpikeCollector seen;
  try {
    sim.run(seen);
    FAIL("the run did not stop");
  } catch (const RunFailure& e) {
    CHECK(e.where() == "pathway 'learn', synapse 0");
    CHECK_THAT(e.problem(), Catch::Contains("requested weight change = inf A"));
    // The postsynaptic spike: driver at 1.008 s + 1 ms delay + the latency to threshold.
    CHECK(e.model_time() > 1.009);
    CHECK(e.model_time() < 1.02);
    CHECK_THAT(std::string(e.what()), Catch::Contains("at model time"));
    // Everything before the failing window was reported, nothing from it.
    CHECK(sim.time_reached() <= e.model_time());
    CHECK(sim.time_reached() > e.model_time() - sim.window());
    CHECK(seen.spikes.empty());
  }
  // The state is partly past time_reached: it cannot be continued.
  CHECK_THROWS_AS(sim.run(seen), InternalError);
}

TEST_CASE("a synaptic current that drives V beyond the range of a double stops the run naming population and neuron",
          "[kernel][numerics]") {
  Simulation sim = Simulation::build(read_model_text(kOverflowingCurrent, "current.toml"));
  test::SpikeCollector seen;
  try {
    sim.run(seen);
    FAIL("the run did not stop");
  } catch (const RunFailure& e) {
    CHECK(e.where() == "population 'cells', neuron 0");
    CHECK_THAT(e.problem(), Catch::Contains("membrane potential overflows"));
    CHECK(e.model_time() == Approx(0.251).epsilon(1e-12));
  }
}

TEST_CASE("a short-tau_m neuron silent for seconds after inhibition stays finite in the kernel", "[kernel][numerics]") {
  // 30 s of silence in 1 ms windows, sampled every 10 s: each advance spans 10 s,
  // beyond the 7.1 s at which the former propagator overflowed.
  Simulation sim = Simulation::build(read_model_text(silent_after_inhibition("30 s", "1 ms", "10 s"), "quiet.toml"));
  test::SpikeCollector seen;
  const RunSummary summary = sim.run(seen);
  CHECK(summary.reason == EndReason::complete);
  CHECK(summary.time_reached == 30.0);
  REQUIRE(seen.samples.size() == 2 * 3);  // v and i_inh at 0, 10, 20 s
  for (const auto& s : seen.samples) {
    INFO("trace " << s.trace << " at " << s.time << " s");
    REQUIRE(std::isfinite(s.values[0]));
  }
  CHECK(seen.samples.back().values[0] == 0.0);  // i_inh long decayed (trace order: v, then i_inh)
}

TEST_CASE("a short-tau_m neuron silent for 100 years after inhibition stays finite in the kernel",
          "[kernel][numerics]") {
  // 100 years in windows of 10^6 s (a delay far outside the plausible range, so that
  // the run has only about 3,200 windows); sampled every 25 years.
  const std::string model = silent_after_inhibition("3155760000 s", "1e6 s", "788940000 s");
  Simulation sim = Simulation::build(read_model_text(model, "years.toml"));
  test::SpikeCollector seen;
  const RunSummary summary = sim.run(seen);
  CHECK(summary.reason == EndReason::complete);
  CHECK(summary.time_reached == 3155760000.0);
  REQUIRE(seen.samples.size() == 2 * 4);
  for (const auto& s : seen.samples) REQUIRE(std::isfinite(s.values[0]));
  // The inhibitory input arrives at 10 ms + 10^6 s; 25 years later V is back at rest.
  CHECK(seen.samples[2 * 3].values[0] == Approx(-65e-3).epsilon(1e-12));
}

TEST_CASE("a complete run ends exactly at the model duration", "[kernel][numerics]") {
  // Durations that are not whole numbers of windows, including one just above a
  // whole number (the former count dropped that sliver and still said complete).
  for (const char* duration : {"10 ms", "10.5 ms", "1.000000000000001 s", "2.9999999999999996 s"}) {
    INFO("duration " << duration);
    std::string model = silent_after_inhibition(duration, "1 ms", "1 s");
    Simulation sim = Simulation::build(read_model_text(model, "d.toml"));
    test::SpikeCollector seen;
    const RunSummary summary = sim.run(seen);
    CHECK(summary.reason == EndReason::complete);
    CHECK(summary.time_reached == sim.duration());
    CHECK(sim.time_reached() == sim.duration());
  }
}

TEST_CASE("a run stopped before its first window is interrupted at time 0", "[kernel]") {
  Simulation sim = Simulation::build(read_model_text(silent_after_inhibition("1 s", "1 ms", "1 s"), "s.toml"));
  std::atomic<bool> stop{true};
  test::SpikeCollector seen;
  const RunSummary summary = sim.run(seen, &stop);
  CHECK(summary.reason == EndReason::interrupted);
  CHECK(summary.time_reached == 0.0);
  CHECK(summary.windows == 0);
  // Stopped between windows: the run can go on.
  stop = false;
  const RunSummary rest = sim.run(seen, &stop);
  CHECK(rest.reason == EndReason::complete);
  CHECK(rest.time_reached == 1.0);
}

TEST_CASE("a stop request inside a long window ends the run without waiting for the window", "[kernel]") {
  // One window of 100 s (the only delay) in which 1,000 neurons driven above rheobase
  // fire about 18 times a second: the window's work takes seconds, the stop must not.
  const char* model = R"(
[simulation]
duration = "200 s"
seed = 1
allow_implausible = true

[population.cells]
size = 1000
bias = "0.2 nA"

[population.sink]
size = 1000

[pathway.onward]
from = "cells"
to = "sink"
wiring = "one_to_one"
weight = "1 pA"
delay = "100 s"
)";
  Simulation sim = Simulation::build(read_model_text(model, "long_window.toml"));
  REQUIRE(sim.window() == 100.0);
  std::atomic<bool> stop{false};
  std::thread requester([&stop] {
    std::this_thread::sleep_for(std::chrono::milliseconds(200));
    stop = true;
  });
  test::SpikeCollector seen;
  const auto start = std::chrono::steady_clock::now();
  const RunSummary summary = sim.run(seen, &stop);
  const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  requester.join();
  CHECK(summary.reason == EndReason::interrupted);
  CHECK(summary.windows == 0);
  CHECK(summary.time_reached == 0.0);
  CHECK(seen.spikes.empty());  // the abandoned window is not reported
  // The whole window takes seconds (about 3,600 spikes of 1,000 neurons); one
  // neuron's share is milliseconds. 2 s leaves room for a loaded machine.
  CHECK(wall < 2.0);
  CHECK_THROWS_AS(sim.run(seen), InternalError);
}
