#include <catch2/catch.hpp>

#include "core/distribution.hpp"
#include "core/param_table.hpp"

using namespace nvsyn;

namespace {
ParamValue text(const std::string& s, int line) { return ParamValue{s, SourcePosition{"m.toml", line, 1}}; }
}  // namespace

TEST_CASE("parameter tables check dimensions and name the key and line", "[params]") {
  ParamTable t({"m.toml", 3, 1}, "population 'exc'");
  t.set("tau_m", text("20 ms", 4));
  t.set("v_rest", text("5 nS", 5));
  t.set("tau_mm", text("3 ms", 6));
  CHECK(t.quantity("tau_m", QuantityKind::time_constant) == Approx(0.02));
  CHECK_THROWS_WITH(t.quantity("v_rest", QuantityKind::voltage),
                    Catch::Contains("m.toml:5:1") && Catch::Contains("'v_rest'") &&
                        Catch::Contains("is a conductance") && Catch::Contains("voltage"));
  CHECK_THROWS_WITH(t.quantity("capacitance", QuantityKind::capacitance),
                    Catch::Contains("m.toml:3:1") && Catch::Contains("missing required key"));
  CHECK_THROWS_WITH(t.reject_unknown_keys(), Catch::Contains("m.toml:6:1") && Catch::Contains("did you mean 'tau_m'"));
}

TEST_CASE("a number without a unit is an error where a quantity is expected", "[params]") {
  ParamTable t({"m.toml", 1, 1}, "");
  t.set("tau_m", ParamValue{20.0, SourcePosition{"m.toml", 2, 1}});
  CHECK_THROWS_WITH(t.quantity("tau_m", QuantityKind::time_constant), Catch::Contains("without a unit"));
}

TEST_CASE("distributions are read, clipped and drawn reproducibly", "[params]") {
  auto inner = std::make_shared<ParamTable>(SourcePosition{"m.toml", 2, 1}, "");
  inner->set("dist", text("normal", 2));
  inner->set("mean", text("1 ms", 2));
  inner->set("sd", text("5 ms", 2));
  inner->set("low", text("0.5 ms", 2));
  ParamTable t({"m.toml", 1, 1}, "");
  t.set("delay", ParamValue{inner, SourcePosition{"m.toml", 2, 1}});
  Distribution d = read_distribution(t, "delay", QuantityKind::delay);
  CHECK(d.min_value() == Approx(0.5e-3));
  RandomStream a(5, StreamPurpose::delays, 1), b(5, StreamPurpose::delays, 1);
  for (int i = 0; i < 1000; ++i) {
    const double x = d.draw(a);
    REQUIRE(x >= 0.5e-3);
    REQUIRE(x == d.draw(b));
  }
}

TEST_CASE("a misspelt required key points at the misspelling", "[params]") {
  ParamTable t({"m.toml", 1, 1}, "");
  t.set("sdd", ParamValue{std::string("1 ms"), SourcePosition{"m.toml", 7, 3}});
  CHECK_THROWS_WITH(t.quantity("sd", QuantityKind::delay),
                    Catch::Contains("m.toml:7:3") && Catch::Contains("'sd'") && Catch::Contains("'sdd'"));
}
