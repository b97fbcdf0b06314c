#include "devices/calibration/spread.hpp"

#include <algorithm>
#include <cmath>

namespace nvsyn::calibration {

Spread corrected_spread(const std::vector<double>& values, const std::vector<double>& errors) {
  Spread s;
  const double n = static_cast<double>(values.size());
  if (values.size() < 2) return s;
  double noise = 0;
  for (std::size_t i = 0; i < values.size(); ++i) {
    s.mean += values[i];
    noise += errors[i] * errors[i];
  }
  s.mean /= n;
  noise /= n;
  double var = 0;
  for (double v : values) var += (v - s.mean) * (v - s.mean);
  var /= n - 1;
  s.value = std::sqrt(std::max(0.0, var - noise));
  const double floor = 0.5 * std::sqrt(var);
  s.error = var > 0 ? var / (std::max(s.value, floor) * std::sqrt(2.0 * (n - 1.0))) : 0.0;
  return s;
}

FittedParameter relative_spread(const std::string& key, const std::vector<double>& values,
                                const std::vector<double>& errors, const std::string& how) {
  const Spread s = corrected_spread(values, errors);
  FittedParameter p;
  p.key = key;
  p.values = {s.value / std::abs(s.mean)};
  p.uncertainties = {s.error / std::abs(s.mean)};
  p.how = how;
  return p;
}

}  // namespace nvsyn::calibration
