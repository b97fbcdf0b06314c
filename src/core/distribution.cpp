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

Distribution read_distribution(const ParamTable& table, const std::string& key, QuantityKind kind) {
  const ParamValue& v = table.value(key);
  if (!v.is_table()) return Distribution::constant(table.to_quantity(v, key, kind));
  const auto& t = *std::get<std::shared_ptr<ParamTable>>(v.value);
  Distribution d;
  const std::string form = t.text("dist");
  if (form == "normal") {
    d.kind = Distribution::Kind::normal;
    d.a = t.quantity("mean", kind);
    d.b = t.quantity("sd", kind);
    if (d.b < 0) throw t.error("sd", "a standard deviation cannot be negative");
  } else if (form == "uniform") {
    d.kind = Distribution::Kind::uniform;
    d.a = t.quantity("low", kind);
    d.b = t.quantity("high", kind);
    if (d.b < d.a) throw t.error("high", "'high' must not be below 'low'");
  } else if (form == "lognormal") {
    d.kind = Distribution::Kind::lognormal;
    d.a = t.quantity("median", kind);
    d.b = t.number("sigma", QuantityKind::spread);
    if (d.a <= 0) throw t.error("median", "a lognormal median must be positive");
    if (d.b < 0) throw t.error("sigma", "sigma cannot be negative");
  } else if (form == "constant") {
    d.a = t.quantity("value", kind);
  } else {
    throw t.error("dist", fmt::format("unknown distribution '{}'; expected normal, uniform, lognormal or constant", form));
  }
  if (d.kind == Distribution::Kind::normal || d.kind == Distribution::Kind::lognormal) {
    d.low = t.quantity_or("low", kind, d.low);
    d.high = t.quantity_or("high", kind, d.high);
    if (d.high < d.low) throw t.error("high", "'high' must not be below 'low'");
  }
  t.reject_unknown_keys();
  return d;
}

}  // namespace nvsyn
