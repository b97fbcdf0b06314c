#include "core/units.hpp"

#include <array>
#include <charconv>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn {
namespace {

struct BaseUnit {
  std::string_view symbol;
  Dimension dimension;
};

constexpr std::array<BaseUnit, 9> kBaseUnits{{
    {"s", Dimension::time},
    {"V", Dimension::voltage},
    {"A", Dimension::current},
    {"S", Dimension::conductance},
    {"F", Dimension::capacitance},
    {"Ohm", Dimension::resistance},
    {"Hz", Dimension::frequency},
    {"J", Dimension::energy},
    {"C", Dimension::charge},
}};

struct Prefix {
  std::string_view symbol;
  double factor;
};

constexpr std::array<Prefix, 11> kPrefixes{{
    {"f", 1e-15}, {"p", 1e-12}, {"n", 1e-9}, {"u", 1e-6}, {"\xC2\xB5", 1e-6},
    {"m", 1e-3}, {"k", 1e3}, {"M", 1e6}, {"G", 1e9}, {"T", 1e12}, {"", 1.0},
}};

struct NamedUnit {
  std::string_view symbol;
  double factor;
  Dimension dimension;
};

// Units that are not prefix + base symbol.
constexpr std::array<NamedUnit, 5> kNamedUnits{{
    {"min", 60.0, Dimension::time},
    {"h", 3600.0, Dimension::time},
    {"d", 86400.0, Dimension::time},
    {"yr", 365.25 * 86400.0, Dimension::time},
    {"ohm", 1.0, Dimension::resistance},
}};

std::optional<Quantity> unit_factor(std::string_view unit) {
  for (const auto& named : kNamedUnits)
    if (unit == named.symbol) return Quantity{named.factor, named.dimension};
  for (const auto& prefix : kPrefixes) {
    if (!unit.starts_with(prefix.symbol)) continue;
    std::string_view rest = unit.substr(prefix.symbol.size());
    for (const auto& base : kBaseUnits)
      if (rest == base.symbol) return Quantity{prefix.factor, base.dimension};
  }
  return std::nullopt;
}

std::string_view trim(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

}  // namespace

std::string_view dimension_name(Dimension d) {
  switch (d) {
    case Dimension::dimensionless: return "dimensionless number";
    case Dimension::time: return "time";
    case Dimension::voltage: return "voltage";
    case Dimension::current: return "current";
    case Dimension::conductance: return "conductance";
    case Dimension::capacitance: return "capacitance";
    case Dimension::resistance: return "resistance";
    case Dimension::frequency: return "frequency";
    case Dimension::energy: return "energy";
    case Dimension::charge: return "charge";
  }
  return "?";
}

std::string_view example_unit(Dimension d) {
  switch (d) {
    case Dimension::dimensionless: return "";
    case Dimension::time: return "ms";
    case Dimension::voltage: return "mV";
    case Dimension::current: return "nA";
    case Dimension::conductance: return "nS";
    case Dimension::capacitance: return "pF";
    case Dimension::resistance: return "MOhm";
    case Dimension::frequency: return "Hz";
    case Dimension::energy: return "pJ";
    case Dimension::charge: return "pC";
  }
  return "";
}

std::optional<Quantity> parse_quantity(std::string_view text, std::string& why) {
  std::string_view s = trim(text);
  if (s.empty()) {
    why = "empty quantity";
    return std::nullopt;
  }
  double number = 0.0;
  const char* first = s.data();
  if (*first == '+') ++first;
  auto [end, ec] = std::from_chars(first, s.data() + s.size(), number);
  if (ec == std::errc::result_out_of_range) {
    why = fmt::format("the number in '{}' is too large or too small for a double", s);
    return std::nullopt;
  }
  if (ec != std::errc{}) {
    why = fmt::format("'{}' does not start with a number", s);
    return std::nullopt;
  }
  if (!std::isfinite(number)) {
    why = fmt::format("'{}' is not a finite number", s);
    return std::nullopt;
  }
  std::string_view unit = trim(std::string_view(end, static_cast<size_t>(s.data() + s.size() - end)));
  if (unit.empty()) {
    why = fmt::format("'{}' has no unit", s);
    return std::nullopt;
  }
  auto factor = unit_factor(unit);
  if (!factor) {
    why = fmt::format("unknown unit '{}' in '{}'", unit, s);
    return std::nullopt;
  }
  // Finite as written is not enough: "1e300 TA" overflows and "1e-300 fA" underflows
  // once the prefix is applied.
  const double value_si = number * factor->value_si;
  if (!std::isfinite(value_si)) {
    why = fmt::format("'{}' is not a finite number in SI units ({} times {:g} overflows)", s, number,
                      factor->value_si);
    return std::nullopt;
  }
  if (number != 0.0 && std::fpclassify(value_si) != FP_NORMAL) {
    why = fmt::format("'{}' is too small to represent in SI units ({} times {:g} underflows)", s, number,
                      factor->value_si);
    return std::nullopt;
  }
  return Quantity{value_si, factor->dimension};
}

std::string format_time(double seconds) {
  const double magnitude = std::fabs(seconds);
  if (!(magnitude >= 60.0)) return format_quantity(seconds, Dimension::time);
  if (magnitude >= 1e6 * 365.25 * 86400.0) return fmt::format("{:g} s", seconds);
  const NamedUnit* best = &kNamedUnits[0];  // min; then the largest time unit not above the value
  for (const auto& named : kNamedUnits)
    if (named.dimension == Dimension::time && magnitude >= named.factor) best = &named;
  const double x = seconds / best->factor;
  return std::fabs(x) >= 100.0 ? fmt::format("{:.0f} {}", x, best->symbol) : fmt::format("{:.3g} {}", x, best->symbol);
}

std::string format_quantity(double value_si, Dimension d) {
  if (d == Dimension::dimensionless) return fmt::format("{:g}", value_si);
  std::string_view base;
  for (const auto& b : kBaseUnits)
    if (b.dimension == d) base = b.symbol;
  // A hair above the value, so that 1e-6 / 1e-9 = 999.999... still reads "1 u...".
  const double magnitude = (1.0 + 1e-12) * std::fabs(value_si);
  if (magnitude == 0.0) return fmt::format("0 {}", base);
  for (const auto& prefix : kPrefixes) {
    if (prefix.symbol == "\xC2\xB5" || prefix.factor > 1e9) continue;
    if (magnitude >= prefix.factor || prefix.factor == 1e-15)
      if (magnitude < prefix.factor * 1000.0 || prefix.factor == 1e9)
        return fmt::format("{:g} {}{}", value_si / prefix.factor, prefix.symbol, base);
  }
  return fmt::format("{:g} {}", value_si, base);
}

}  // namespace nvsyn
