#include <catch2/catch.hpp>
#include <cmath>

#include "plasticity/reward_stdp.hpp"

using namespace nvsyn;

namespace {
RewardStdpParameters params() {
  RewardStdpParameters p;
  p.pair.w_max = 1e-10;
  p.pair.a_plus = 0.01;
  p.pair.a_minus = 0.012;
  p.tau_eligibility = 0.5;
  p.learning_rate = 2.0;
  return p;
}
}  // namespace

TEST_CASE("spike pairs alone change no weight", "[reward]") {
  RewardStdp rule(params(), 1, 1);
  CHECK(rule.on_pre(0, 0, 1.0, 0.5e-10) == 0.0);
  CHECK(rule.on_post(0, 0, 1.01, 0.5e-10) == 0.0);
  CHECK(rule.on_reward(0, 1.5, 0.0) == 0.0);  // zero reward: no change either
}

TEST_CASE("the eligibility trace holds the pair update and decays with its time constant", "[reward]") {
  const RewardStdpParameters p = params();
  RewardStdp rule(p, 1, 1);
  rule.on_pre(0, 0, 1.0, 0.5e-10);
  rule.on_post(0, 0, 1.01, 0.5e-10);
  rule.post_spike_end(0, 1.01);
  const double c0 = p.pair.a_plus * p.pair.w_max * std::exp(-0.01 / p.pair.tau_plus);
  CHECK(rule.eligibility(0, 1.01) == Approx(c0).epsilon(1e-12));
  for (double later : {0.1, 0.5, 1.0, 3.0})
    CHECK(rule.eligibility(0, 1.01 + later) == Approx(c0 * std::exp(-later / p.tau_eligibility)).epsilon(1e-12));
  // A reward turns it into a change: dw = learning_rate * r * c(t).
  CHECK(rule.on_reward(0, 1.51, 0.7) == Approx(p.learning_rate * 0.7 * c0 * std::exp(-0.5 / p.tau_eligibility)).epsilon(1e-12));
}

TEST_CASE("a delayed reward changes only the synapses that were eligible", "[reward]") {
  RewardStdp rule(params(), 2, 2);
  // Synapse 0 (onto neuron 0) takes part in a pairing; synapse 1 (onto neuron 1) never.
  rule.on_pre(0, 0, 1.0, 0.5e-10);
  rule.on_post(0, 0, 1.005, 0.5e-10);
  rule.post_spike_end(0, 1.005);
  CHECK(rule.on_reward(0, 2.0, 1.0) > 0.0);
  CHECK(rule.on_reward(1, 2.0, 1.0) == 0.0);
}
