#include "core/distribution.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn {

double Distribution::draw(RandomStream& rng) const {
  double x = a;
  switch (kind) {
    case Kind::constant: return a;
    case Kind::normal: x = a + b * rng.normal(); break;
    case Kind::uniform: return a + (b - a) * rng.uniform();
    case Kind::lognormal: x = a * std::exp(b * rng.normal()); break;
  }
  return std::clamp(x, low, high);
}

double Distribution::min_value() const {
  switch (kind) {
    case Kind::constant: return a;
    case Kind::uniform: return a;
    case Kind::normal: return low;
    case Kind::lognormal: return std::max(0.0, low);
  }
  return low;
}

double Distribution::max_value() const {
  switch (kind) {
    case Kind::constant: return a;
    case Kind::uniform: return b;
    default: return high;
  }
}

std::string Distribution::describe(Dimension dim) const {
  auto q = [dim](double v) { return format_quantity(v, dim); };
  switch (kind) {
    case Kind::constant: return q(a);
    case Kind::normal: return fmt::format("normal(mean {}, sd {})", q(a), q(b));
    case Kind::uniform: return fmt::format("uniform({}, {})", q(a), q(b));
    case Kind::lognormal: return fmt::format("lognormal(median {}, sigma {:g})", q(a), b);
  }
  return "?";
}

Distribution read_distribution(const ParamTable& table, const std::string& key, Dimension dim) {
  const ParamValue& v = table.value(key);
  if (!v.is_table()) return Distribution::constant(ParamTable::to_quantity(v, key, dim));
  const auto& t = *std::get<std::shared_ptr<ParamTable>>(v.value);
  Distribution d;
  const std::string kind = t.text("dist");
  if (kind == "normal") {
    d.kind = Distribution::Kind::normal;
    d.a = t.quantity("mean", dim);
    d.b = t.quantity("sd", dim);
    if (d.b < 0) throw t.error("sd", "a standard deviation cannot be negative");
  } else if (kind == "uniform") {
    d.kind = Distribution::Kind::uniform;
    d.a = t.quantity("low", dim);
    d.b = t.quantity("high", dim);
    if (d.b < d.a) throw t.error("high", "'high' must not be below 'low'");
  } else if (kind == "lognormal") {
    d.kind = Distribution::Kind::lognormal;
    d.a = t.quantity("median", dim);
    d.b = t.number("sigma");
    if (d.a <= 0) throw t.error("median", "a lognormal median must be positive");
    if (d.b < 0) throw t.error("sigma", "sigma cannot be negative");
  } else if (kind == "constant") {
    d.a = t.quantity("value", dim);
  } else {
    throw t.error("dist", fmt::format("unknown distribution '{}'; expected normal, uniform, lognormal or constant", kind));
  }
  if (d.kind == Distribution::Kind::normal || d.kind == Distribution::Kind::lognormal) {
    d.low = t.quantity_or("low", dim, d.low);
    d.high = t.quantity_or("high", dim, d.high);
    if (d.high < d.low) throw t.error("high", "'high' must not be below 'low'");
  }
  t.reject_unknown_keys();
  return d;
}

}  // namespace nvsyn
