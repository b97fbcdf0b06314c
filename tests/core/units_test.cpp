#include <catch2/catch.hpp>

#include "core/units.hpp"

using namespace nvsyn;

namespace {
Quantity parse_ok(const char* text) {
  std::string why;
  auto q = parse_quantity(text, why);
  INFO(text << ": " << why);
  REQUIRE(q.has_value());
  return *q;
}
std::string parse_error(const char* text) {
  std::string why;
  REQUIRE_FALSE(parse_quantity(text, why).has_value());
  return why;
}
}  // namespace

TEST_CASE("quantities convert to SI with their dimension", "[units]") {
  CHECK(parse_ok("20 ms").value_si == Approx(0.020).epsilon(1e-15));
  CHECK(parse_ok("20 ms").dimension == Dimension::time);
  CHECK(parse_ok("-65 mV").value_si == Approx(-0.065).epsilon(1e-15));
  CHECK(parse_ok("0.3 nA").dimension == Dimension::current);
  CHECK(parse_ok("1.5 uS").value_si == Approx(1.5e-6).epsilon(1e-15));
  CHECK(parse_ok("1.5 uS").dimension == Dimension::conductance);
  CHECK(parse_ok("5Hz").value_si == 5.0);
  CHECK(parse_ok("250 pF").dimension == Dimension::capacitance);
  CHECK(parse_ok("2 h").value_si == 7200.0);
  CHECK(parse_ok("1 yr").value_si == Approx(365.25 * 86400.0));
  CHECK(parse_ok("100 MOhm").value_si == Approx(1e8));
  CHECK(parse_ok("3 pJ").dimension == Dimension::energy);
  // milli-siemens and milliseconds differ only by case
  CHECK(parse_ok("2 mS").dimension == Dimension::conductance);
  CHECK(parse_ok("2 ms").dimension == Dimension::time);
}

TEST_CASE("malformed quantities are rejected with a reason", "[units]") {
  CHECK_THAT(parse_error("20"), Catch::Contains("no unit"));
  CHECK_THAT(parse_error("ms"), Catch::Contains("number"));
  CHECK_THAT(parse_error("20 parsecs"), Catch::Contains("unknown unit"));
  CHECK_THAT(parse_error("nan ms"), Catch::Contains("finite"));
  CHECK_THAT(parse_error("inf mV"), Catch::Contains("finite"));
  CHECK_THAT(parse_error(""), Catch::Contains("empty"));
}

TEST_CASE("format_quantity picks a readable prefix", "[units]") {
  CHECK(format_quantity(0.02, Dimension::time) == "20 ms");
  CHECK(format_quantity(-0.065, Dimension::voltage) == "-65 mV");
  CHECK(format_quantity(0.0, Dimension::current) == "0 A");
  CHECK(format_quantity(3e-10, Dimension::current) == "300 pA");
}

TEST_CASE("exact powers of 1000 take the larger prefix", "[units]") {
  CHECK(format_quantity(1e-6, Dimension::conductance) == "1 uS");
  CHECK(format_quantity(1e-3, Dimension::time) == "1 ms");
  CHECK(format_quantity(1e-9, Dimension::current) == "1 nA");
}

TEST_CASE("a quantity must stay finite and normal after its prefix is applied", "[units]") {
  // Finite as written, infinite in SI units: 1e300 x 1e12 overflows a double.
  CHECK_THAT(parse_error("1e300 TA"), Catch::Contains("not a finite number in SI units"));
  // Nonzero as written, zero or subnormal in SI units.
  CHECK_THAT(parse_error("1e-300 fA"), Catch::Contains("too small to represent"));
  CHECK_THAT(parse_error("1e-300 nA"), Catch::Contains("too small to represent"));
  // Beyond a double already as written.
  CHECK_THAT(parse_error("1e400 s"), Catch::Contains("too large or too small"));
  CHECK_THAT(parse_error("1e-400 s"), Catch::Contains("too large or too small"));
  // Zero stays zero, and the extremes that do fit are kept.
  CHECK(parse_ok("0 TA").value_si == 0.0);
  CHECK(parse_ok("1e290 TA").value_si == Approx(1e302));
  CHECK(parse_ok("1e-290 fA").value_si == Approx(1e-305));
}

TEST_CASE("format_time uses minutes to years above a minute", "[units]") {
  CHECK(format_time(0.02) == "20 ms");
  CHECK(format_time(30.0) == "30 s");
  CHECK(format_time(2000.0) == "33.3 min");
  CHECK(format_time(7200.0) == "2 h");
  CHECK(format_time(1e9) == "31.7 yr");
  CHECK(format_time(1e4 * 365.25 * 86400.0) == "10000 yr");
  CHECK(format_time(1e300) == "1e+300 s");
}
