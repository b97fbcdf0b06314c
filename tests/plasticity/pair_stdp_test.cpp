// Pair STDP against its window formula, evaluated independently here.
#include <catch2/catch.hpp>
#include <cmath>

#include "plasticity/pair_stdp.hpp"

using namespace nvsyn;

namespace {

// Time constants of the order of Bi & Poo's data (Bi & Poo, J. Neurosci. 18:10464, 1998):
// exponential fits tau+ = 16.8 ms, tau- = 33.7 ms (values from memory, as quoted in the
// STDP literature, e.g. Bi & Poo, Annu. Rev. Neurosci. 24:139, 2001).
PairStdpParameters bi_poo() {
  PairStdpParameters p;
  p.a_plus = 0.01;
  p.a_minus = 0.0105;
  p.tau_plus = 16.8e-3;
  p.tau_minus = 33.7e-3;
  p.w_max = 1e-10;
  return p;
}

// Total change of one pairing: pre at t_pre, post at t_post, nothing else.
double one_pairing(const PairStdpParameters& p, double t_pre, double t_post) {
  PairStdp rule(p, 1, 1);
  double dw = 0;
  if (t_pre <= t_post) {
    dw += rule.on_pre(0, 0, t_pre, 0.5e-10);
    dw += rule.on_post(0, 0, t_post, 0.5e-10);
    rule.post_spike_end(0, t_post);
  } else {
    dw += rule.on_post(0, 0, t_post, 0.5e-10);
    rule.post_spike_end(0, t_post);
    dw += rule.on_pre(0, 0, t_pre, 0.5e-10);
  }
  return dw;
}

}  // namespace

TEST_CASE("pair STDP reproduces the exponential window over [-100, 100] ms", "[stdp]") {
  const PairStdpParameters p = bi_poo();
  for (int ms = -100; ms <= 100; ++ms) {
    if (ms == 0) continue;
    const double dt = ms * 1e-3;  // post - pre
    const double t_pre = 1.0, t_post = 1.0 + dt;
    const double expected = dt > 0 ? p.a_plus * p.w_max * std::exp(-dt / p.tau_plus)
                                   : -p.a_minus * p.w_max * std::exp(dt / p.tau_minus);
    INFO("dt = " << ms << " ms");
    REQUIRE(std::abs(one_pairing(p, t_pre, t_post) - expected) <= 1e-9 * std::abs(expected));
  }
}

TEST_CASE("multiplicative STDP scales with the distance to the bounds", "[stdp]") {
  PairStdpParameters p = bi_poo();
  p.multiplicative = true;
  PairStdp rule(p, 1, 1);
  const double w = 0.3e-10, dt = 7e-3;
  rule.on_pre(0, 0, 0.0, w);
  CHECK(rule.on_post(0, 0, dt, w) == Approx(p.a_plus * (p.w_max - w) * std::exp(-dt / p.tau_plus)).epsilon(1e-12));
  rule.post_spike_end(0, dt);
  CHECK(rule.on_pre(0, 0, 2 * dt, w) == Approx(-p.a_minus * w * std::exp(-dt / p.tau_minus)).epsilon(1e-12));
}

TEST_CASE("all-to-all sums over earlier spikes; nearest takes only the last", "[stdp]") {
  PairStdpParameters p = bi_poo();
  const double pre[3] = {0.0, 5e-3, 10e-3}, post = 20e-3;
  double all_sum = 0;
  for (double t : pre) all_sum += std::exp(-(post - t) / p.tau_plus);
  for (bool nearest : {false, true}) {
    p.nearest = nearest;
    PairStdp rule(p, 1, 1);
    for (double t : pre) rule.on_pre(0, 0, t, 0.5e-10);
    const double dw = rule.on_post(0, 0, post, 0.5e-10);
    const double expected = p.a_plus * p.w_max * (nearest ? std::exp(-(post - pre[2]) / p.tau_plus) : all_sum);
    CHECK(dw == Approx(expected).epsilon(1e-12));
  }
}
