// A programming policy never asks a device for more than it can still move: a
// request beyond the weight headroom is cut to it before it is turned into pulses.
// (Without the cut, a soft-bounded device near its bound, whose step shrinks towards
// zero, was asked for up to 2^32 pulses by one update: a run then ignored Ctrl-C for
// minutes.)
#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>

#include "device_test_support.hpp"
#include "plasticity/programming_policy.hpp"

using namespace nvsyn;

namespace {

SynapseLayoutParameters single_layout() {
  SynapseLayoutParameters s;
  s.gain = 1e-3;  // V: weight per siemens
  return s;
}

DeviceParameters soft_bounded() {
  DeviceParameters p = test::device_of(DeviceKind::soft_bounds);
  p.alpha_p = 0.04;
  p.alpha_d = 0.06;
  return p;
}

}  // namespace

TEST_CASE("a request beyond the headroom of a soft-bounded device takes a bounded number of pulses",
          "[policy][numerics]") {
  const DeviceParameters p = soft_bounded();
  for (Rounding rounding : {Rounding::nearest, Rounding::stochastic, Rounding::accumulate}) {
    SynapseDevices syn(p, single_layout(), 1, 1, 0);
    PolicyParameters pp;
    pp.rounding = rounding;
    ProgrammingPolicy policy(pp, 1, 1, 0);
    const double w_top = single_layout().gain * p.g_max;
    const auto start = std::chrono::steady_clock::now();
    // Huge requests, as a trace that never decays produces: each update may move the
    // device at most to its bound, which takes about 1 / alpha_p = 25 pulses of steps
    // proportional to the remaining distance.
    for (int u = 0; u < 200; ++u) {
      const UpdateOutcome o = policy.apply(syn, 0, 1e3 * w_top, u * 1e-3);
      INFO("rounding " << rounding_name(rounding) << ", update " << u);
      REQUIRE(o.requested == 1e3 * w_top);
      REQUIRE(o.pulses <= 26);
      REQUIRE(syn.weight_programmed(0) <= w_top);
    }
    const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    CHECK(wall < 1.0);  // 5,200 pulses at most; it used to be up to 2^32 per update
    CHECK(syn.weight_programmed(0) > 0.999 * w_top);
  }
}

TEST_CASE("requests within the headroom are programmed as before", "[policy][numerics]") {
  // The cut only binds when |dw| exceeds the headroom: for a smaller request the pulse
  // count is still round(|dw| / step), the definition of nearest rounding.
  const DeviceParameters p = soft_bounded();
  SynapseDevices syn(p, single_layout(), 1, 1, 0);
  PolicyParameters pp;
  pp.rounding = Rounding::nearest;
  ProgrammingPolicy policy(pp, 1, 1, 0);
  const double step = syn.expected_weight_step(0, Polarity::potentiate);
  const double headroom = syn.weight_headroom(0, Polarity::potentiate);
  REQUIRE(headroom > 10.4 * step);
  CHECK(policy.apply(syn, 0, 10.4 * step, 0.0).pulses == 10);
}

TEST_CASE("the weight headroom is the distance of the programmed device to its bound", "[policy][numerics]") {
  const DeviceParameters p = soft_bounded();
  SynapseDevices single(p, single_layout(), 1, 1, 0);
  const double g = single.devices().programmed(0);
  CHECK(single.weight_headroom(0, Polarity::potentiate) == Approx(1e-3 * (single.devices().g_max_of(0) - g)));
  CHECK(single.weight_headroom(0, Polarity::depress) == Approx(1e-3 * (g - p.g_min)).margin(1e-300));
  // A differential pair moves both ways by potentiating one of its devices.
  SynapseLayoutParameters pair = single_layout();
  pair.layout = SynapseLayout::differential;
  SynapseDevices diff(p, pair, 1, 1, 0);
  CHECK(diff.weight_headroom(0, Polarity::potentiate) ==
        Approx(1e-3 * (diff.devices().g_max_of(0) - diff.devices().programmed(0))));
  CHECK(diff.weight_headroom(0, Polarity::depress) ==
        Approx(1e-3 * (diff.devices().g_max_of(1) - diff.devices().programmed(1))));
}
