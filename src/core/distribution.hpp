#pragma once
// A value drawn per entity (synapse weight, delay, device parameter):
// a constant, or a normal / uniform / lognormal distribution, optionally clipped.
//
// Model-file forms:
//   weight = "0.3 nA"                                              constant
//   weight = { dist = "normal", mean = "0.3 nA", sd = "0.05 nA", low = "0 nA" }
//   delay  = { dist = "uniform", low = "1 ms", high = "3 ms" }
//   nu     = { dist = "lognormal", median = 0.05, sigma = 0.4 }   (sigma of ln x)
// `low`/`high` clip draws of the normal and lognormal forms; they also state a
// bound that the caller may require (e.g. every delay positive).
#include <limits>
#include <string>

#include "core/param_table.hpp"
#include "core/random_stream.hpp"

namespace nvsyn {

struct Distribution {
  enum class Kind { constant, normal, uniform, lognormal };
  Kind kind = Kind::constant;
  double a = 0.0;  // constant value / mean / low / median
  double b = 0.0;  // - / sd / high / sigma of ln
  double low = -std::numeric_limits<double>::infinity();
  double high = std::numeric_limits<double>::infinity();

  static Distribution constant(double v) { return {Kind::constant, v, 0.0}; }

  double draw(RandomStream& rng) const;
  // Smallest and largest value a draw can take (after clipping).
  double min_value() const;
  double max_value() const;
  bool is_constant() const { return kind == Kind::constant; }
  std::string describe(Dimension dim) const;
};

// Reads a distribution from table[key]; every value (mean, sd, bounds...) is of `kind`,
// the sigma of a lognormal is a spread.
Distribution read_distribution(const ParamTable& table, const std::string& key, QuantityKind kind);

}  // namespace nvsyn
