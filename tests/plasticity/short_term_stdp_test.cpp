#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "core/random_stream.hpp"
#include "plasticity/short_term_stdp.hpp"

using namespace nvsyn;

namespace {
ShortTermStdpParameters params() {
  ShortTermStdpParameters p;
  p.pair.w_max = 1e-10;
  p.pair.a_plus = 0.01;
  p.pair.a_minus = 0.012;
  p.st_a_plus = 0.2;
  p.st_a_minus = 0.1;
  p.tau_short = 0.15;
  return p;
}
}  // namespace

TEST_CASE("the short-term component relaxes to the long-term weight with tau_short", "[ststdp]") {
  const ShortTermStdpParameters p = params();
  ShortTermStdp rule(p, 1, 1);
  rule.on_pre(0, 0, 1.0, 0.5e-10);
  rule.on_post(0, 0, 1.005, 0.5e-10);  // potentiating pair: f jumps up
  rule.post_spike_end(0, 1.005);
  const double f0 = rule.short_term_component(0, 1.005);
  CHECK(f0 == Approx(p.st_a_plus * p.pair.w_max * std::exp(-0.005 / p.pair.tau_plus)).epsilon(1e-12));
  for (double later : {0.01, 0.1, 0.5, 2.0})
    CHECK(rule.short_term_component(0, 1.005 + later) == Approx(f0 * std::exp(-later / p.tau_short)).epsilon(1e-12));
}

TEST_CASE("with its short-term amplitudes at zero the rule is exactly pair STDP", "[ststdp]") {
  ShortTermStdpParameters p = params();
  p.st_a_plus = 0;
  p.st_a_minus = 0;
  ShortTermStdp rule(p, 3, 2);
  PairStdp pair(p.pair, 3, 2);
  RandomStream rng(4, StreamPurpose::plasticity, 0);
  double t = 0;
  for (int i = 0; i < 2000; ++i) {
    t += 0.01 * rng.exponential();
    const auto k = rng.below(3);
    const auto post = static_cast<std::uint32_t>(rng.below(2));
    const double w = 0.5e-10;
    if (rng.uniform() < 0.5) {
      REQUIRE(rule.on_pre(k, post, t, w) == pair.on_pre(k, post, t, w));
    } else {
      REQUIRE(rule.on_post(k, post, t, w) == pair.on_post(k, post, t, w));
      rule.post_spike_end(post, t);
      pair.post_spike_end(post, t);
    }
    REQUIRE(rule.short_term_component(k, t) == 0.0);
  }
}
