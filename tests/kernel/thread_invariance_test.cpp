// Spikes, samples and every weight are the same bits for any thread count: a plastic
// network with Poisson input, pair STDP on phase-change devices (programming noise,
// drift, read noise), short-term plasticity, reward-modulated STDP with rewards,
// normalisation and weight recorders, run with 1, 2 and 3 threads. The populations
// span several neuron blocks (kernel/neuron_blocks.hpp), so that the threads share
// the work of every window.
#include <catch2/catch.hpp>
#include <cstring>
#include <string>
#include <vector>

#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "support_spike_collector.hpp"

using namespace nvsyn;

namespace {

constexpr const char* kNetwork = R"(
[simulation]
duration = "600 ms"
seed = 41

[population.exc]
size = 1100
v_init = { dist = "uniform", low = "-65 mV", high = "-50.5 mV" }

[population.inh]
size = 300
v_init = { dist = "uniform", low = "-65 mV", high = "-50.5 mV" }

[input.drive]
kind = "poisson"
size = 400
rate = "12 Hz"

[pathway.drive_exc]
from = "drive"
to = "exc"
wiring = "in_degree"
in_degree = 40
weight = { dist = "normal", mean = "0.12 nA", sd = "0.02 nA" }
delay = { dist = "uniform", low = "1 ms", high = "2 ms" }

[pathway.drive_exc.synapse]
preset = "phase_change"
weight_max = "0.3 nA"

[pathway.drive_exc.plasticity]
rule = "pair_stdp"
form = "additive"
pairing = "all_to_all"
a_plus = 0.02
a_minus = 0.021
tau_plus = "17 ms"
tau_minus = "34 ms"
w_max = "0.3 nA"
normalise_interval = "150 ms"
normalise_total = "4.8 nA"

[pathway.drive_inh]
from = "drive"
to = "inh"
wiring = "random"
p = 0.1
weight = { dist = "uniform", low = "0.1 nA", high = "0.2 nA" }
delay = "1 ms"

[pathway.drive_inh.plasticity]
rule = "reward_stdp"
a_plus = 0.01
a_minus = 0.0105
tau_plus = "20 ms"
tau_minus = "20 ms"
w_max = "0.3 nA"
tau_eligibility = "200 ms"
learning_rate = 5.0
rewards = [["200 ms", 1.0], ["400 ms", -0.5]]

[pathway.exc_exc]
from = "exc"
to = "exc"
wiring = "in_degree"
in_degree = 30
weight = "0.05 nA"
delay = { dist = "uniform", low = "1.2 ms", high = "3 ms" }

[pathway.exc_exc.short_term]
u = 0.3
tau_rec = "300 ms"
tau_facil = "50 ms"

[pathway.exc_inh]
from = "exc"
to = "inh"
wiring = "in_degree"
in_degree = 40
weight = "0.05 nA"
delay = "1.5 ms"

[pathway.inh_exc]
from = "inh"
to = "exc"
receptor = "inhibitory"
wiring = "in_degree"
in_degree = 20
weight = "-0.2 nA"
delay = "1.5 ms"

[record]
spikes = ["exc", "inh"]

[record.trace.v]
population = "exc"
neurons = [0, 255, 256, 700, 1099]
interval = "2 ms"

[record.weights.drive_exc]
pathway = "drive_exc"
synapses = "all"
every_change = true
interval = "100 ms"
snapshots = ["300 ms"]

[record.weights.drive_inh]
pathway = "drive_inh"
synapses = "all"
every_change = true
)";

struct Outcome {
  test::SpikeCollector observed;
  std::vector<std::vector<double>> weights;                // per pathway: recorded weight at the end
  std::vector<std::vector<double>> requested, realised;   // per learning pathway: the per-synapse ledger
  std::vector<LedgerTotals> totals;                       // per learning pathway
  RunSummary summary;
};

Outcome run_with(unsigned threads) {
  const Model model = read_model_text(kNetwork, std::string(NVSYN_TEST_MODELS) + "/threads.toml");
  BuildOptions options;
  options.threads = threads;
  Simulation sim = Simulation::build(model, options);
  Outcome out;
  out.summary = sim.run(out.observed);
  for (const Pathway& p : sim.network().pathways) {
    std::vector<double> w;
    for (std::uint64_t k = 0; k < p.synapses.size(); ++k) w.push_back(p.weight_record(k, sim.duration()));
    out.weights.push_back(std::move(w));
    if (!p.rule) continue;
    out.requested.push_back(p.ledger().requested);
    out.realised.push_back(p.ledger().realised);
    out.totals.push_back(p.ledger().totals);
  }
  return out;
}

template <class T>
bool same_bits(const std::vector<T>& a, const std::vector<T>& b) {
  return a.size() == b.size() && (a.empty() || std::memcmp(a.data(), b.data(), a.size() * sizeof(T)) == 0);
}

bool same_samples(const std::vector<test::SpikeCollector::Sample>& a,
                  const std::vector<test::SpikeCollector::Sample>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i)
    if (a[i].trace != b[i].trace || std::memcmp(&a[i].time, &b[i].time, sizeof(double)) != 0 ||
        !same_bits(a[i].values, b[i].values))
      return false;
  return true;
}

bool same_changes(const std::vector<WeightChange>& a, const std::vector<WeightChange>& b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i)
    if (std::memcmp(&a[i].time, &b[i].time, sizeof(double)) != 0 || a[i].synapse != b[i].synapse ||
        std::memcmp(&a[i].requested, &b[i].requested, sizeof(double)) != 0 ||
        std::memcmp(&a[i].realised, &b[i].realised, sizeof(double)) != 0 || a[i].route != b[i].route)
      return false;
  return true;
}

bool same_totals(const LedgerTotals& a, const LedgerTotals& b) {
  return a.updates == b.updates && a.pulses == b.pulses && a.routed_partner == b.routed_partner &&
         a.unrealisable == b.unrealisable && std::memcmp(&a.sum_requested, &b.sum_requested, sizeof(double)) == 0 &&
         std::memcmp(&a.sum_realised, &b.sum_realised, sizeof(double)) == 0 &&
         std::memcmp(&a.sum_squared_error, &b.sum_squared_error, sizeof(double)) == 0;
}

}  // namespace

TEST_CASE("spikes, samples and weights are identical for 1, 2 and 3 threads", "[kernel][threads]") {
  const Outcome one = run_with(1);
  // The network must exercise what it is meant to: spikes in both populations,
  // device updates that realise pulses, rewards that change weights, recorders.
  REQUIRE(one.observed.spikes.size() > 2000);
  REQUIRE(one.totals.size() == 2);
  REQUIRE(one.totals[0].pulses > 100);
  REQUIRE(one.totals[1].updates > 100);
  REQUIRE(one.totals[1].sum_realised != 0.0);
  REQUIRE(one.observed.changes.size() > 1000);
  REQUIRE(one.observed.weight_samples.size() == 6);  // drive_exc at 0, 100, ..., 500 ms
  REQUIRE(one.observed.snapshots.size() == 1);

  for (unsigned threads : {2u, 3u}) {
    INFO(threads << " threads");
    const Outcome other = run_with(threads);
    REQUIRE(other.observed.spikes.size() == one.observed.spikes.size());
    CHECK(std::memcmp(other.observed.spikes.data(), one.observed.spikes.data(),
                      one.observed.spikes.size() * sizeof(one.observed.spikes[0])) == 0);
    CHECK(same_samples(other.observed.samples, one.observed.samples));
    CHECK(same_samples(other.observed.weight_samples, one.observed.weight_samples));
    CHECK(same_samples(other.observed.snapshots, one.observed.snapshots));
    CHECK(same_changes(other.observed.changes, one.observed.changes));
    REQUIRE(other.weights.size() == one.weights.size());
    for (std::size_t p = 0; p < one.weights.size(); ++p) CHECK(same_bits(other.weights[p], one.weights[p]));
    for (std::size_t p = 0; p < one.totals.size(); ++p) {
      CHECK(same_bits(other.requested[p], one.requested[p]));
      CHECK(same_bits(other.realised[p], one.realised[p]));
      CHECK(same_totals(other.totals[p], one.totals[p]));
    }
    CHECK(other.summary.synaptic_events == one.summary.synaptic_events);
    CHECK(other.summary.input_spikes == one.summary.input_spikes);
  }
}
