#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "core/param_table.hpp"
#include "core/plausible_range.hpp"

using namespace nvsyn;

TEST_CASE("the table of plausible ranges has one sound row per kind", "[ranges]") {
  const auto rows = plausible_ranges();
  REQUIRE_FALSE(rows.empty());
  for (std::size_t k = 0; k < rows.size(); ++k) {
    const PlausibleRange& r = rows[k];
    INFO(r.name);
    CHECK(static_cast<std::size_t>(r.kind) == k);
    CHECK(&plausible_range(r.kind) == &r);
    CHECK(r.min >= 0.0);
    CHECK(r.max > r.min);
    CHECK_FALSE(r.name.empty());
    CHECK_FALSE(r.used_for.empty());
    CHECK_FALSE(r.why.empty());
  }
}

TEST_CASE("zero and magnitudes inside the range are plausible, others are not", "[ranges]") {
  CHECK(is_plausible(0.0, QuantityKind::time_constant));
  CHECK(is_plausible(0.02, QuantityKind::time_constant));
  CHECK(is_plausible(-0.065, QuantityKind::voltage));  // signs are the models' business
  CHECK_FALSE(is_plausible(1e-15, QuantityKind::time_constant));
  CHECK_FALSE(is_plausible(1e300, QuantityKind::time_constant));
  CHECK_FALSE(is_plausible(1e9, QuantityKind::rate));
  CHECK_FALSE(is_plausible(1e-15, QuantityKind::delay));
  CHECK_FALSE(is_plausible(1e-312, QuantityKind::capacitance));
  CHECK_FALSE(is_plausible(1e300, QuantityKind::learning_amplitude));
  CHECK_FALSE(is_plausible(std::numeric_limits<double>::infinity(), QuantityKind::fraction));
  CHECK_FALSE(is_plausible(std::nan(""), QuantityKind::fraction));
  CHECK(is_plausible(1.5, QuantityKind::fraction));  // bounded by the model's own rule, not here
}

TEST_CASE("the ranges admit what real studies use", "[ranges]") {
  // Years of drift, pS..mS devices, MHz inputs, the shipped defaults (from the models' headers).
  CHECK(is_plausible(10 * 365.25 * 86400.0, QuantityKind::time_point));
  CHECK(is_plausible(100 * 365.25 * 86400.0, QuantityKind::duration));
  CHECK(is_plausible(1e-12, QuantityKind::conductance));
  CHECK(is_plausible(1e-3, QuantityKind::conductance));
  CHECK(is_plausible(2e6, QuantityKind::rate));
  CHECK(is_plausible(0.1e-3, QuantityKind::delay));
  CHECK(is_plausible(250e-12, QuantityKind::capacitance));
  CHECK(is_plausible(3e-21, QuantityKind::current));  // a tiny exported weight is harmless
}

TEST_CASE("an implausible value is a located error stating the range and the override", "[ranges]") {
  const SourcePosition at{"m.toml", 7, 1};
  CHECK_THROWS_WITH(check_plausible(1e-15, QuantityKind::time_constant, "\"1 fs\"", at, "tau_m", "population 'a'", nullptr),
                    Catch::Contains("m.toml:7:1") && Catch::Contains("'tau_m'") && Catch::Contains("\"1 fs\"") &&
                        Catch::Contains("1 us to 31.7 yr") && Catch::Contains("(in population 'a')"));
  RangePolicy strict("set allow_implausible = true");
  CHECK_THROWS_WITH(check_plausible(1e9, QuantityKind::rate, "\"1 GHz\"", at, "rate", "", &strict),
                    Catch::Contains("up to 10 MHz") && Catch::Contains("set allow_implausible = true"));
  CHECK(strict.warnings().empty());
}

TEST_CASE("a permissive policy turns range errors into warnings, once each, but never accepts non-finite values",
          "[ranges]") {
  RangePolicy allow("hint", true);
  const SourcePosition at{"m.toml", 3, 5};
  CHECK_NOTHROW(check_plausible(1e-15, QuantityKind::delay, "\"1 fs\"", at, "delay", "", &allow));
  CHECK_NOTHROW(check_plausible(1e-15, QuantityKind::delay, "\"1 fs\"", at, "delay", "", &allow));
  REQUIRE(allow.warnings().size() == 1);
  CHECK_THAT(allow.warnings()[0], Catch::StartsWith("m.toml:3:5: warning: 'delay': \"1 fs\" is outside"));
  CHECK_THROWS_WITH(check_plausible(std::numeric_limits<double>::infinity(), QuantityKind::delay, "inf", at, "delay",
                                    "", &allow),
                    Catch::Contains("not a finite number"));
}

TEST_CASE("parameter tables check every quantity against its kind", "[ranges][params]") {
  auto policy = std::make_shared<RangePolicy>("hint");
  ParamTable t({"m.toml", 1, 1}, "population 'exc'");
  t.set_range_policy(policy);
  t.set("tau_m", ParamValue{std::string("1 fs"), SourcePosition{"m.toml", 2, 1}});
  t.set("a_plus", ParamValue{1e300, SourcePosition{"m.toml", 3, 1}});
  t.set("max_pulses", ParamValue{std::int64_t{100'000'000}, SourcePosition{"m.toml", 4, 1}});
  auto items = std::make_shared<ParamValue::Array>();
  items->push_back(ParamValue{std::string("1e5 yr"), SourcePosition{"m.toml", 5, 9}});
  t.set("times", ParamValue{items, SourcePosition{"m.toml", 5, 1}});
  CHECK_THROWS_WITH(t.quantity("tau_m", QuantityKind::time_constant), Catch::Contains("m.toml:2:1"));
  CHECK_THROWS_WITH(t.number("a_plus", QuantityKind::learning_amplitude), Catch::Contains("up to 10"));
  CHECK_THROWS_WITH(t.integer_or("max_pulses", QuantityKind::pulses_per_update, 0), Catch::Contains("m.toml:4:1"));
  CHECK_THROWS_WITH(t.to_quantity(t.array("times")[0], "times", QuantityKind::time_point),
                    Catch::Contains("m.toml:5:9") && Catch::Contains("up to 10000 yr"));
  // The fallback of an absent key is the caller's default and is not checked.
  CHECK(t.quantity_or("tau_exc", QuantityKind::time_constant, 5e-3) == 5e-3);
  policy->allow_implausible(true);
  CHECK(t.quantity("tau_m", QuantityKind::time_constant) == Approx(1e-15));
  CHECK(policy->warnings().size() == 1);
  // Tables made from this one share its policy.
  CHECK(t.overlaid_with(ParamTable(), "copy")->range_policy() == policy);
}

TEST_CASE("a permissive policy keeps a bounded number of warnings and counts the rest", "[ranges]") {
  RangePolicy allow("hint", true);
  for (int row = 1; row <= 30; ++row)
    check_plausible(1e-15, QuantityKind::delay, "1 fs", {"list.csv", row, 0}, "delay", "", &allow);
  CHECK(allow.warnings().size() == RangePolicy::kMaxWarnings);
  CHECK(allow.warnings_not_kept() == 30 - RangePolicy::kMaxWarnings);
}
