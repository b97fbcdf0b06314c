// Song, Miller & Abbott (Nat. Neurosci. 3:919, 2000): one neuron, 1,000 excitatory
// Poisson inputs at 10 Hz, additive STDP with hard bounds and A-/A+ slightly above 1
// (they used tau+ = tau- = 20 ms, A+ = 0.005 g_max, A-/A+ = 1.05; from memory, as in
// REFERENCES.md). Their results: the weights split into a bimodal distribution
// (most near 0 or near the upper bound), and the output rate is regulated, nearly
// independent of the input rate. Our neuron is current-based LIF rather than their
// conductance-based one, so we test the qualitative findings, not their numbers.
// Learning runs for 1,200 s of model time (a few seconds of computation).
#include <catch2/catch.hpp>
#include <algorithm>
#include <fmt/format.h>

#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "support_spike_collector.hpp"

using namespace nvsyn;

namespace {

std::string model(double input_rate, double duration, bool learn) {
  return fmt::format(R"(
[simulation]
duration = "{} s"
seed = 2000

[population.neuron]
size = 1
tau_m = "20 ms"
capacitance = "250 pF"
v_rest = "-70 mV"
v_threshold = "-54 mV"
v_reset = "-60 mV"
refractory = "1 ms"
tau_exc = "5 ms"
tau_inh = "5 ms"

[input.excitatory]
kind = "poisson"
size = 1000
rate = "{} Hz"

[input.inhibitory]
kind = "poisson"
size = 200
rate = "10 Hz"

[pathway.exc]
from = "excitatory"
to = "neuron"
wiring = "all_to_all"
weight = {{ dist = "uniform", low = "0 pA", high = "12 pA" }}
delay = "1 ms"

[pathway.exc.plasticity]
rule = "pair_stdp"
form = "additive"
a_plus = 0.005
a_minus = 0.00525
tau_plus = "20 ms"
tau_minus = "20 ms"
w_max = "12 pA"
active_until = "{} s"

[pathway.inh]
from = "inhibitory"
to = "neuron"
receptor = "inhibitory"
wiring = "all_to_all"
weight = "-10 pA"
delay = "1 ms"
)",
                     duration, input_rate, learn ? duration : 0.001);
}

struct Outcome {
  double rate_start, rate_end;
  std::vector<double> weights;
};

Outcome run(double input_rate, double duration, bool learn) {
  Simulation sim = Simulation::build(read_model_text(model(input_rate, duration, learn), "sma.toml"));
  test::SpikeCollector c;
  sim.run(c);
  Outcome o{};
  for (const auto& s : c.spikes) {
    if (s.time < 10.0) o.rate_start += 0.1;
    if (s.time >= duration - 20.0) o.rate_end += 0.05;
  }
  o.weights = sim.network().pathways[0].synapses.weight;
  return o;
}

}  // namespace

TEST_CASE("additive STDP splits the weights into two groups and regulates the output rate", "[kernel][stdp][slow]") {
  const double w_max = 12e-12;
  const Outcome learned = run(10.0, 1200.0, true);
  int low = 0, high = 0;
  std::vector<int> histogram(10, 0);
  for (double w : learned.weights) {
    low += w < 0.2 * w_max;
    high += w > 0.8 * w_max;
    ++histogram[std::min(9, static_cast<int>(10 * w / w_max))];
  }
  std::string bins;
  for (int h : histogram) bins += fmt::format(" {}", h);
  WARN("weight histogram, 10 bins from 0 to w_max:" << bins);
  const double n = static_cast<double>(learned.weights.size());
  WARN(fmt::format("Song-Miller-Abbott check: {:.0f}% of weights below 0.2 w_max, {:.0f}% above 0.8 w_max; "
                   "output rate {:.1f} Hz in the first 10 s, {:.1f} Hz in the last 20 s",
                   100 * low / n, 100 * high / n, learned.rate_start, learned.rate_end));
  // Bimodal: most weights near the bounds, both groups populated, and a dip between.
  CHECK((low + high) / n > 0.7);
  CHECK(low / n > 0.1);
  CHECK(high / n > 0.1);
  for (int b = 3; b <= 6; ++b) {
    CHECK(histogram[b] < histogram[0]);
    CHECK(histogram[b] < histogram[9]);
  }

  // Rate regulation: doubling the input rate. Without learning the output rate
  // rises steeply; after learning at each input rate it changes much less.
  const Outcome fixed10 = run(10.0, 30.0, false), fixed20 = run(20.0, 30.0, false);
  const Outcome learned20 = run(20.0, 1200.0, true);
  WARN(fmt::format("output rate with fixed weights: {:.1f} Hz at 10 Hz input, {:.1f} Hz at 20 Hz; after learning: "
                   "{:.1f} Hz at 10 Hz, {:.1f} Hz at 20 Hz",
                   fixed10.rate_end, fixed20.rate_end, learned.rate_end, learned20.rate_end));
  const double ratio_fixed = fixed20.rate_end / fixed10.rate_end;
  const double ratio_learned = learned20.rate_end / learned.rate_end;
  CHECK(ratio_fixed > 2.0);
  CHECK(ratio_learned < 0.5 * ratio_fixed);
}
