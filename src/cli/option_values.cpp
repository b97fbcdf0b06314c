#include "cli/option_values.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdlib>
#include <fmt/format.h>
#include <string_view>

#include "core/error.hpp"

namespace nvsyn::cli {

double parse_quantity_option(const std::string& text, const std::string& option, QuantityKind kind,
                             RangePolicy* ranges) {
  const Dimension dimension = plausible_range(kind).dimension;
  std::string why;
  const auto q = parse_quantity(text, why);
  const std::string example = fmt::format("\"{}\"", format_quantity(1.0, dimension));
  if (!q) throw UserError({}, option, fmt::format("{}; expected a {} such as {}", why, dimension_name(dimension),
                                                  dimension == Dimension::time ? "\"10 s\"" : example));
  if (q->dimension != dimension)
    throw UserError({}, option, fmt::format("\"{}\" is a {}, expected a {}", text, dimension_name(q->dimension),
                                            dimension_name(dimension)));
  check_plausible(q->value_si, kind, fmt::format("\"{}\"", text), {}, option, "", ranges);
  return q->value_si;
}

std::vector<double> parse_quantity_list_option(const std::string& text, const std::string& option,
                                               QuantityKind kind, RangePolicy* ranges) {
  std::vector<double> values;
  std::size_t start = 0;
  while (true) {
    const std::size_t comma = text.find(',', start);
    std::string item = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    const std::size_t first = item.find_first_not_of(" \t");
    const std::size_t last = item.find_last_not_of(" \t");
    item = first == std::string::npos ? "" : item.substr(first, last - first + 1);
    if (item.empty())
      throw UserError({}, option, fmt::format("item {} of \"{}\" is empty; separate quantities with single commas",
                                              values.size() + 1, text));
    values.push_back(parse_quantity_option(item, option, kind, ranges));
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return values;
}

std::string format_rounded(double value_si, Dimension dimension, int digits) {
  if (std::isnan(value_si)) return "n/a";
  if (std::isinf(value_si)) return value_si > 0 ? "inf" : "-inf";
  const std::string unit = format_quantity(1.0, dimension).substr(2);  // "1 S" -> "S"
  // strtod, not stod: stod throws for results that underflow to subnormal numbers
  // ("1e-309"), which a value this small rounds to (std::stod reports ERANGE as an
  // exception; strtod returns the nearest double).
  const double rounded = std::strtod(fmt::format("{:.{}g}", value_si, digits).c_str(), nullptr);
  if (rounded == 0.0 || dimension == Dimension::dimensionless) return fmt::format("{:g} {}", rounded, unit);
  struct Prefix {
    int exponent;
    std::string_view symbol;
  };
  constexpr std::array<Prefix, 10> kPrefixes{
      {{-15, "f"}, {-12, "p"}, {-9, "n"}, {-6, "u"}, {-3, "m"}, {0, ""}, {3, "k"}, {6, "M"}, {9, "G"}, {12, "T"}}};
  // The small offset keeps exact powers of 1000 (1e-6) from falling to the prefix below.
  const int exponent = std::clamp(
      static_cast<int>(std::floor((std::log10(std::abs(rounded)) + 1e-9) / 3.0)) * 3, -15, 12);
  for (const Prefix& p : kPrefixes)
    if (p.exponent == exponent)
      return fmt::format("{:g} {}{}", rounded / std::pow(10.0, exponent), p.symbol, unit);
  return fmt::format("{:g} {}", rounded, unit);
}

std::string format_duration(double seconds) {
  struct Unit {
    std::string_view symbol;
    double seconds;
  };
  // Julian year (365.25 d), as in core/units.cpp.
  constexpr std::array<Unit, 5> kUnits{{{"yr", 365.25 * 86400}, {"d", 86400}, {"h", 3600}, {"min", 60}, {"s", 1}}};
  if (seconds == 0) return "0 s";
  for (const Unit& u : kUnits)
    if (std::abs(seconds) >= u.seconds) return fmt::format("{:g} {}", seconds / u.seconds, u.symbol);
  return format_quantity(seconds, Dimension::time);
}

}  // namespace nvsyn::cli
