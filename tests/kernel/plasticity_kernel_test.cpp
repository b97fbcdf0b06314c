// Learning rules through the whole kernel: exact timing, frozen phases, devices.
#include <catch2/catch.hpp>
#include <cmath>
#include <fmt/format.h>

#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "support_spike_collector.hpp"

using namespace nvsyn;

namespace {

// One presynaptic source and one postsynaptic neuron. The neuron is made to fire by
// a second, strong input; the plastic pathway is too weak to make it fire.
// `pairs` pairings 1 s apart: pre at 1 s + n, the driver at 1 s + n + lag.
std::string pairing_model(double lag, int pairs, const std::string& synapse, const std::string& extra = "") {
  std::string pre, drive;
  for (int n = 0; n < pairs; ++n) {
    pre += fmt::format("{}\"{} ms\"", n ? ", " : "", 1000.0 * (1 + n));
    drive += fmt::format("{}\"{} ms\"", n ? ", " : "", 1000.0 * (1 + n) + 1000.0 * lag);
  }
  return fmt::format(R"(
[simulation]
duration = "{} s"
seed = 9

[population.post]
size = 1
refractory = "2 ms"

[input.pre]
kind = "times"
times = [{}]

[input.driver]
kind = "times"
times = [{}]

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
a_plus = 0.01
a_minus = 0.012
tau_plus = "16.8 ms"
tau_minus = "33.7 ms"
w_max = "0.1 nA"
{}
{}
[record.weights.learn]
pathway = "learn"
synapses = [0]
every_change = true
)",
                     pairs + 2, pre, drive, extra, synapse);
}

struct Result {
  test::SpikeCollector collector;
  double final_weight;
  const Pathway* pathway;
  Simulation sim;
};

Simulation run(const std::string& text, test::SpikeCollector& c) {
  Simulation sim = Simulation::build(read_model_text(text, "pairing.toml"));
  sim.run(c);
  return sim;
}

}  // namespace

TEST_CASE("pair STDP through the kernel equals the window summed over the recorded spikes", "[kernel][stdp]") {
  for (double lag : {-0.03, -0.01, 0.004, 0.012, 0.04}) {
    test::SpikeCollector c;
    Simulation sim = run(pairing_model(lag, 5, ""), c);
    const Pathway& p = sim.network().pathways[1];
    // Presynaptic spikes count at their arrival (input time + 1 ms delay).
    std::vector<double> pre;
    for (int n = 0; n < 5; ++n) pre.push_back(1.0 + n + 1e-3);
    const std::vector<double> post = c.times_of(0, 0);
    REQUIRE(post.size() == 5);
    // All-to-all additive rule: every (pre, post) pair contributes its window value.
    double expected = 0;
    for (double tp : pre)
      for (double tq : post) {
        const double dt = tq - tp;
        expected += dt > 0 ? 0.01 * 0.1e-9 * std::exp(-dt / 16.8e-3) : -0.012 * 0.1e-9 * std::exp(dt / 33.7e-3);
      }
    INFO("lag " << lag);
    REQUIRE(std::abs((p.synapses.weight[0] - 0.05e-9) - expected) <= 1e-12 * 0.05e-9);
    // Every change was logged, and they add up.
    double logged = 0;
    for (const auto& ch : c.changes) logged += ch.realised;
    CHECK(logged == Approx(expected).epsilon(1e-9));
  }
}

TEST_CASE("learning can be frozen for a test phase", "[kernel][stdp]") {
  test::SpikeCollector c;
  Simulation sim = run(pairing_model(0.01, 6, "", "active_until = \"3.5 s\""), c);
  REQUIRE_FALSE(c.changes.empty());
  double logged = 0;
  for (const auto& ch : c.changes) {
    CHECK(ch.time < 3.5);
    logged += ch.realised;
  }
  // Pairings at 4, 5 and 6 s changed nothing: the weight is where the last change left it.
  CHECK(sim.network().pathways[1].synapses.weight[0] - 0.05e-9 == Approx(logged).epsilon(1e-9));
}

TEST_CASE("on a finite-level device every realised change is a whole number of steps", "[kernel][devices][stdp]") {
  test::SpikeCollector c;
  const std::string synapse =
      "[pathway.learn.synapse]\npreset = \"finite_levels\"\nweight_max = \"0.32 nA\"\nrounding = \"stochastic\"\n";
  Simulation sim = run(pairing_model(0.005, 400, synapse), c);
  const double step = 0.32e-9 / 32;
  REQUIRE(c.changes.size() > 400);
  INFO("pulses " << sim.network().pathways[1].ledger().totals.pulses << " updates " << sim.network().pathways[1].ledger().totals.updates);
  double requested = 0, realised = 0, realised_sq = 0;
  int n = 0;
  for (const auto& ch : c.changes) {
    const double steps = ch.realised / step;
    REQUIRE(std::abs(steps - std::round(steps)) < 1e-6);
    if (ch.requested > 0) {  // the potentiation at each post spike: identical requests
      requested += ch.requested;
      realised += ch.realised;
      realised_sq += ch.realised * ch.realised;
      ++n;
    }
  }
  // Stochastic rounding: mean realised equals mean requested within 3 standard errors
  // (the weight stays far from the bounds: depression and potentiation nearly balance).
  const double mean = realised / n, sd = std::sqrt(realised_sq / n - mean * mean);
  CHECK(std::abs(mean - requested / n) < 3 * sd / std::sqrt(n));
}

TEST_CASE("on phase-change devices depression goes through the partner or not at all", "[kernel][devices][stdp]") {
  test::SpikeCollector c;
  const std::string synapse = "[pathway.learn.synapse]\npreset = \"phase_change\"\nweight_max = \"0.4 nA\"\n";
  Simulation sim = run(pairing_model(-0.01, 50, synapse), c);
  int partner = 0;
  for (const auto& ch : c.changes) {
    if (ch.requested >= 0) continue;
    if (ch.realised != 0.0) {
      CHECK(ch.route == static_cast<std::uint8_t>(UpdateRoute::partner));
      CHECK(ch.realised < 0);
      ++partner;
    } else {
      CHECK(ch.route != static_cast<std::uint8_t>(UpdateRoute::direct));
    }
  }
  CHECK(partner > 0);
  CHECK(sim.network().pathways[1].ledger().totals.routed_partner == static_cast<std::uint64_t>(partner));
}

TEST_CASE("reward-modulated STDP through the kernel: no reward, no change", "[kernel][reward]") {
  std::string text = pairing_model(0.01, 5, "");
  text.replace(text.find("rule = \"pair_stdp\""), 18, "rule = \"reward_stdp\"\ntau_eligibility = \"0.5 s\"");
  test::SpikeCollector c;
  Simulation sim = run(text, c);
  const double initial = 0.05 * 1e-9;  // "0.05 nA" as the model reader computes it
  CHECK(sim.network().pathways[1].synapses.weight[0] == initial);
  CHECK(c.changes.empty());
  // With a reward 100 ms after the third pairing the weight moves.
  std::string rewarded = text;
  rewarded.replace(rewarded.find("tau_eligibility"), 0, "rewards = [[\"3.11 s\", 1.0]]\n");
  test::SpikeCollector d;
  Simulation sim2 = run(rewarded, d);
  CHECK(sim2.network().pathways[1].synapses.weight[0] != initial);
  REQUIRE(d.changes.size() == 1);
  CHECK(d.changes[0].time == 3.11);
}

TEST_CASE("normalisation scales each neuron's incoming weights to the stated total", "[kernel][homeostasis]") {
  const std::string text = R"(
[simulation]
duration = "1.05 s"
seed = 4

[population.cells]
size = 5

[input.drive]
kind = "poisson"
size = 40
rate = "20 Hz"

[pathway.learn]
from = "drive"
to = "cells"
wiring = "all_to_all"
weight = { dist = "uniform", low = "0.01 nA", high = "0.1 nA" }
delay = "1 ms"

[pathway.learn.plasticity]
rule = "pair_stdp"
w_max = "0.2 nA"
a_plus = 0.0
a_minus = 0.0
normalise_interval = "1 s"
normalise_total = "2 nA"
)";
  Simulation sim = Simulation::build(read_model_text(text, "norm.toml"));
  test::SpikeCollector c;
  sim.run(c);
  const Pathway& p = sim.network().pathways[0];
  std::vector<double> total(5, 0.0);
  for (std::uint64_t k = 0; k < p.synapses.size(); ++k) total[p.synapses.post[k]] += p.synapses.weight[k];
  for (double t : total) CHECK(t == Approx(2e-9).epsilon(1e-12));
}

TEST_CASE("an experiment can deliver rewards through the C++ interface", "[kernel][reward]") {
  std::string text = pairing_model(0.01, 5, "");
  text.replace(text.find("rule = \"pair_stdp\""), 18, "rule = \"reward_stdp\"\ntau_eligibility = \"0.5 s\"");
  Simulation sim = Simulation::build(read_model_text(text, "pairing.toml"));
  sim.add_reward("learn", 3.11, 1.0);
  sim.add_reward("learn", 5.2, -0.5);
  CHECK_THROWS_WITH(sim.add_reward("nope", 1.0, 1.0), Catch::Contains("no pathway named 'nope'"));
  CHECK_THROWS_WITH(sim.add_reward("drive", 1.0, 1.0), Catch::Contains("no reward-modulated rule"));
  test::SpikeCollector c;
  sim.run(c);
  REQUIRE(c.changes.size() == 2);
  CHECK(c.changes[0].time == 3.11);
  CHECK(c.changes[0].realised > 0);   // pre-before-post pairings: positive eligibility
  CHECK(c.changes[1].time == 5.2);
  CHECK(c.changes[1].realised < 0);   // the negative reward reverses it
}
