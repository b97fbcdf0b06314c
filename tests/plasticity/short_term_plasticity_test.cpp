// Tsodyks-Markram short-term plasticity against its closed forms.
#include <catch2/catch.hpp>
#include <cmath>

#include "plasticity/short_term_plasticity.hpp"

using namespace nvsyn;

TEST_CASE("depressing synapse: steady state equals the closed form", "[stp]") {
  // Without facilitation the steady state of a regular train with interval D is
  // R_ss = (1 - e^{-D/tau_rec}) / (1 - (1 - U) e^{-D/tau_rec})  (Tsodyks & Markram,
  // PNAS 94:719, 1997); the response is U R_ss. Typical depressing U = 0.5,
  // tau_rec = 800 ms (from memory).
  ShortTermPlasticityParameters p;
  p.u = 0.5;
  p.tau_rec = 0.8;
  p.tau_facil = 0;
  for (double rate : {1.0, 5.0, 10.0, 20.0, 40.0, 100.0}) {
    ShortTermPlasticity stp(p, 1);
    const double d = 1.0 / rate;
    double last = 0;
    for (int n = 0; n < 2000; ++n) last = stp.transmit(0, n * d);
    const double e = std::exp(-d / p.tau_rec);
    const double expected = p.u * (1 - e) / (1 - (1 - p.u) * e);
    INFO("rate " << rate);
    REQUIRE(std::abs(last - expected) <= 1e-9 * expected);
  }
  // At high rates U R_ss -> 1 / (r tau_rec), independent of U (Tsodyks & Markram 1997).
  ShortTermPlasticity fast(p, 1);
  double last = 0;
  for (int n = 0; n < 20000; ++n) last = fast.transmit(0, n * 1e-3);
  CHECK(last == Approx(1.0 / (1000.0 * p.tau_rec)).epsilon(0.01));
}

TEST_CASE("facilitating synapse: transients follow the recursion, steady state its fixed point", "[stp]") {
  ShortTermPlasticityParameters p;
  p.u = 0.1;
  p.tau_rec = 0.1;
  p.tau_facil = 1.0;
  ShortTermPlasticity stp(p, 1);
  const double d = 0.05;
  // Independent evaluation of the event recursion (Tsodyks, Pawelzik & Markram,
  // Neural Comput. 10:821, 1998; event form from memory).
  double u = p.u, r = 1.0;
  for (int n = 0; n < 400; ++n) {
    const double got = stp.transmit(0, n * d);
    REQUIRE(std::abs(got - u * r) <= 1e-12 * u * r);
    const double u_next = p.u + u * (1 - p.u) * std::exp(-d / p.tau_facil);
    r = 1 + (r - u * r - 1) * std::exp(-d / p.tau_rec);
    u = u_next;
  }
  // Fixed point: u_ss = U / (1 - (1 - U) e^{-D/tau_F}), R_ss = (1 - e^{-D/tau_rec}) / (1 - (1 - u_ss) e^{-D/tau_rec}).
  const double u_ss = p.u / (1 - (1 - p.u) * std::exp(-d / p.tau_facil));
  const double e = std::exp(-d / p.tau_rec);
  const double r_ss = (1 - e) / (1 - (1 - u_ss) * e);
  CHECK(std::abs(stp.transmit(0, 400 * d) - u_ss * r_ss) <= 1e-9 * u_ss * r_ss);
  // Facilitation: the second response is larger than the first.
  ShortTermPlasticity fresh(p, 1);
  const double first = fresh.transmit(0, 0.0), second = fresh.transmit(0, 0.02);
  CHECK(second > first);
}

TEST_CASE("U outside (0, 1] is rejected", "[stp]") {
  ParamTable t({"m.toml", 1, 1}, "");
  t.set("u", ParamValue{1.5, SourcePosition{"m.toml", 4, 1}});
  CHECK_THROWS_WITH(ShortTermPlasticityParameters::from_table(t), Catch::Contains("m.toml:4:1") && Catch::Contains("(0, 1]"));
}
