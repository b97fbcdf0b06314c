// A chain a -> b -> c with known delays fires at the predicted times.
#include <catch2/catch.hpp>
#include <cmath>

#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "support_spike_collector.hpp"

using namespace nvsyn;

namespace {

constexpr const char* kChain = R"(
[simulation]
duration = "60 ms"
seed = 3

[population.a]
size = 1
tau_m = "20 ms"
capacitance = "250 pF"
v_rest = "-65 mV"
v_threshold = "-50 mV"
v_reset = "-65 mV"
refractory = "2 ms"
tau_exc = "5 ms"

[population.b]
size = 1
tau_m = "20 ms"
capacitance = "250 pF"
v_rest = "-65 mV"
v_threshold = "-50 mV"
tau_exc = "5 ms"

[population.c]
size = 1
tau_m = "20 ms"
capacitance = "250 pF"
v_rest = "-65 mV"
v_threshold = "-50 mV"
tau_exc = "5 ms"

[input.push]
kind = "current"
target = "a"
steps = [["0 ms", "0.25 nA"], ["30 ms", "0 nA"]]

[pathway.ab]
from = "a"
to = "b"
wiring = "one_to_one"
weight = "1.5 nA"
delay = "1.5 ms"

[pathway.bc]
from = "b"
to = "c"
wiring = "one_to_one"
weight = "1.5 nA"
delay = "2.5 ms"
)";

// Latency from a current jump w (at rest) to threshold, by bisection on the
// closed-form PSP (Rotter & Diesmann 1999): independent of the kernel's search.
double latency(double w) {
  const double tau_m = 20e-3, tau_s = 5e-3, c = 250e-12, theta = 15e-3;
  auto psp = [&](double t) {
    return w / c * tau_s * tau_m / (tau_m - tau_s) * (std::exp(-t / tau_m) - std::exp(-t / tau_s));
  };
  double lo = 0, hi = std::log(tau_m / tau_s) * tau_m * tau_s / (tau_m - tau_s);
  for (int k = 0; k < 200; ++k) {
    const double mid = 0.5 * (lo + hi);
    (psp(mid) >= theta ? hi : lo) = mid;
  }
  return hi;
}

}  // namespace

TEST_CASE("spikes travel along a chain with exactly the pathway delays", "[kernel]") {
  Model model = read_model_text(kChain, "chain.toml");
  Simulation sim = Simulation::build(model);
  CHECK(sim.window() == Approx(1.5e-3));
  test::SpikeCollector spikes;
  sim.run(spikes);

  // a: constant 0.25 nA from rest; first spike at tau_m ln(RI / (RI - theta))
  // (Gerstner & Kistler 2002, ch. 4), then refractory 2 ms and a second period.
  const double r = 20e-3 / 250e-12, theta = 15e-3, i = 0.25e-9;
  const double t_a = 20e-3 * std::log(r * i / (r * i - theta));
  const auto a = spikes.times_of(0, 0);
  REQUIRE(a.size() == 1);  // the current stops at 30 ms, before a second spike
  CHECK(std::abs(a[0] - t_a) < 1e-12);

  const auto b = spikes.times_of(1, 0);
  const auto c = spikes.times_of(2, 0);
  REQUIRE(b.size() == 1);
  REQUIRE(c.size() == 1);
  CHECK(std::abs(b[0] - (a[0] + 1.5e-3 + latency(1.5e-9))) < 1e-12);
  CHECK(std::abs(c[0] - (b[0] + 2.5e-3 + latency(1.5e-9))) < 1e-12);
}
