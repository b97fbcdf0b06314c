// The LIF propagator stays finite and exact however long a neuron is idle, for every
// ordering of tau_m and the synaptic time constants. (The multiprecision comparison
// over the same orderings is lif_closed_form.py; these checks need no Python.)
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "core/run_failure.hpp"
#include "neurons/lif.hpp"

using namespace nvsyn;

namespace {

constexpr double kYear = 365.25 * 86400.0;  // s

LifParameters parameters(double tau_m) {
  LifParameters p;
  p.tau_m = tau_m;
  p.tau_exc = 5e-3;
  p.tau_inh = 10e-3;
  p.capacitance = 250e-12;
  p.v_rest = -65e-3;
  p.v_threshold = -50e-3;
  p.v_reset = -65e-3;
  p.v_init = Distribution::constant(-65e-3);
  return p;
}

// The same with V measured from rest (v_rest = 0), so that V - v_rest is not rounded
// to the absolute precision of -65 mV when the synaptic part has decayed.
LifParameters parameters_from_zero(double tau_m) {
  LifParameters p = parameters(tau_m);
  p.v_rest = p.v_reset = 0.0;
  p.v_threshold = 15e-3;
  p.v_init = Distribution::constant(0.0);
  return p;
}

// Idle times from 1 ms to 100 years, four per decade.
std::vector<double> idle_times() {
  std::vector<double> s;
  for (int k = -12; k <= 38; ++k) s.push_back(std::pow(10.0, k / 4.0));
  s.push_back(100 * kYear);
  return s;
}

// The PSP kernel written directly as a difference of exponentials, in long double:
//   K(s) = (e^{-s/tau_x} - e^{-s/tau_m}) / (1/tau_m - 1/tau_x)
// (Rotter & Diesmann, Biol. Cybern. 81:381-402, 1999, exact integration). Cancellation
// makes it inaccurate for nearly equal time constants, so it is used only where they
// differ by 10 % or more; there its 64-bit mantissa leaves an error far below 1e-13.
long double direct_kernel(long double s, long double tau_m, long double tau_x) {
  return (std::exp(-s / tau_x) - std::exp(-s / tau_m)) / (1.0L / tau_m - 1.0L / tau_x);
}

}  // namespace

TEST_CASE("the LIF state stays finite after any idle time, for every ordering of time constants", "[lif][numerics]") {
  // tau_exc = 5 ms, tau_inh = 10 ms: tau_m below both, equal to either, nearly equal
  // (relative 1e-6 and 1e-10), between, and far above.
  const double tau_ms[] = {1e-6, 1e-4, 5e-3, 5e-3 * (1 + 1e-6), 5e-3 * (1 - 1e-10), 7e-3, 10e-3,
                           10e-3 * (1 + 1e-10), 20e-3, 1.0, 100.0};
  for (double tau_m : tau_ms) {
    const LifParameters p = parameters(tau_m);
    const LifTrajectory traj(p, {-70e-3, 0.4e-9, -1.2e-9}, 0.01e-9);
    CHECK(std::isfinite(traj.kernel_peak(0)));
    CHECK(std::isfinite(traj.kernel_peak(1)));
    for (double s : idle_times()) {
      INFO("tau_m = " << tau_m << " s, idle " << s << " s");
      const LifState x = traj.state_at(s);
      REQUIRE(std::isfinite(x.v));
      REQUIRE(std::isfinite(x.i_exc));
      REQUIRE(std::isfinite(x.i_inh));
      REQUIRE(std::isfinite(traj.v_upper_bound(0.0, s)));
      REQUIRE(traj.v_upper_bound(0.0, s) >= x.v);
    }
    // After 100 years everything has decayed: V is at rest plus R I_bias.
    CHECK(traj.state_at(100 * kYear).v == Approx(p.v_rest + p.resistance() * 0.01e-9).epsilon(1e-12));
  }
}

TEST_CASE("the LIF kernel matches the difference of exponentials where that form is well conditioned",
          "[lif][numerics]") {
  for (double tau_m : {1e-6, 1e-4, 2e-3, 7e-3, 20e-3, 1.0, 100.0}) {
    const LifParameters p = parameters_from_zero(tau_m);
    const double w = 1e-9;
    // One unit of current per channel: V - V_inf is (I/C) K_x(s) plus the decay of V_0 - V_inf = 0.
    for (int channel = 0; channel < 2; ++channel) {
      const LifState start{p.v_rest, channel == 0 ? w : 0.0, channel == 1 ? w : 0.0};
      const LifTrajectory traj(p, start, 0.0);
      const long double tau_x = channel == 0 ? p.tau_exc : p.tau_inh;
      for (double s : idle_times()) {
        const long double ref = w / static_cast<long double>(p.capacitance) * direct_kernel(s, tau_m, tau_x);
        const double got = traj.v_at(s) - p.v_rest;
        INFO("tau_m = " << tau_m << " s, channel " << channel << ", s = " << s << " s");
        // Relative to the reference, with a floor of 1e-280 of the PSP scale w tau / C
        // for values that have decayed by more than 280 decades (subnormal range).
        const long double scale = w * std::max<long double>(tau_m, tau_x) / p.capacitance;
        REQUIRE(std::abs(static_cast<long double>(got) - ref) <= 1e-12L * std::max(std::abs(ref), 1e-280L * scale));
      }
    }
  }
}

TEST_CASE("equal membrane and synaptic time constants use s e^{-s/tau} at every idle time", "[lif][numerics]") {
  const LifParameters p = parameters_from_zero(5e-3);  // == tau_exc
  const double w = 1e-9;
  const LifTrajectory traj(p, {p.v_rest, w, 0.0}, 0.0);
  for (double s : idle_times()) {
    // Limit of the difference form for tau_x -> tau_m (Rotter & Diesmann 1999).
    const long double ref = w / static_cast<long double>(p.capacitance) * s * std::exp(-s / 5e-3L);
    const long double scale = w * 5e-3L / p.capacitance;
    INFO("s = " << s);
    REQUIRE(std::abs(static_cast<long double>(traj.v_at(s) - p.v_rest) - ref) <=
            1e-12L * std::max(std::abs(ref), 1e-280L * scale));
  }
}

TEST_CASE("a short tau_m neuron idle for years after inhibitory input stays finite", "[lif][numerics]") {
  // The reported case: tau_m = 5 ms below the default tau_inh = 10 ms. The old form
  // e^{-s/tau_m} (1 - e^{-s d}) / d, d = 1/tau_inh - 1/tau_m < 0, gave 0 * inf = NaN
  // once s |d| > 709, i.e. after about 7.1 s of silence.
  LifParameters p = parameters(5e-3);
  p.tau_inh = LifParameters{}.tau_inh;
  LifBank group(1, p, 1, 0);
  PlainInputs hooks;
  std::vector<double> spikes;
  std::vector<double> samples(4 * 4);
  std::vector<NeuronInput> inputs(5);
  inputs[0].amount = -0.5e-9;
  inputs[0].receptor = Receptor::inhibitory;
  const double later[] = {1.0, 8.0, 3600.0, 100 * kYear};
  for (int k = 0; k < 4; ++k) {
    inputs[k + 1].time = later[k];
    inputs[k + 1].kind = InputKind::sample;
    inputs[k + 1].slot = static_cast<std::uint32_t>(k);
  }
  REQUIRE_NOTHROW(group.process(0, inputs, 100 * kYear + 1.0, spikes, samples, hooks));
  CHECK(spikes.empty());
  for (double value : samples) CHECK(std::isfinite(value));
  CHECK(samples[3 * 4] == Approx(p.v_rest).epsilon(1e-12));
  // Each sample splits the idle time; one uninterrupted advance of 100 years too.
  LifBank alone(1, p, 1, 0);
  std::vector<NeuronInput> two(2);
  two[0] = inputs[0];
  two[1] = inputs[4];
  two[1].slot = 0;
  REQUIRE_NOTHROW(alone.process(0, two, 100 * kYear + 1.0, spikes, samples, hooks));
  CHECK(samples[0] == Approx(p.v_rest).epsilon(1e-12));
}

TEST_CASE("a non-finite LIF state stops with a RunFailure naming the neuron, variable and time", "[lif][numerics]") {
  LifParameters p = parameters(20e-3);
  LifBank group(3, p, 1, 0);
  PlainInputs hooks;
  std::vector<double> spikes, samples(4);
  std::vector<NeuronInput> inputs(1);
  inputs[0].time = 0.25;
  inputs[0].amount = std::numeric_limits<double>::infinity();
  CHECK_THROWS_MATCHES(group.process(2, inputs, 0.5, spikes, samples, hooks), RunFailure,
                       Catch::Matchers::Predicate<RunFailure>(
                           [](const RunFailure& e) {
                             return e.where() == "neuron 2" && e.model_time() == 0.25 &&
                                    e.problem().find("i_exc = inf A") != std::string::npos;
                           },
                           "names neuron 2, i_exc and t = 0.25 s"));
  // A NaN input current must not send the crossing search into an endless split
  // (it used to subdivide down to 1e-13 s everywhere): it is reported instead.
  LifBank other(1, p, 1, 0);
  inputs[0].amount = std::nan("");
  CHECK_THROWS_AS(other.process(0, inputs, 0.5, spikes, samples, hooks), RunFailure);
  // Finite currents so large that V leaves the range of a double are reported too.
  LifBank huge(1, p, 1, 0);
  inputs[0].amount = 1e306;
  CHECK_THROWS_WITH(huge.process(0, inputs, 0.5, spikes, samples, hooks), Catch::Contains("overflows"));
}
