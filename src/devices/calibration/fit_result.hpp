#pragma once
// The outcome of calibrating one device kind against measured pulse data: fitted
// parameters with standard errors, how each was obtained, the goodness of fit, and
// what the data could not tell. Written out as a preset by fitted_preset.hpp.
#include <cstddef>
#include <string>
#include <vector>

#include "core/units.hpp"
#include "devices/calibration/goodness_of_fit.hpp"
#include "devices/device_parameters.hpp"

namespace nvsyn::calibration {

struct FittedParameter {
  std::string key;  // as in a preset's [device] table
  Dimension dimension = Dimension::dimensionless;
  std::vector<double> values;         // one value, or polynomial coefficients (SI)
  std::vector<double> uncertainties;  // standard errors, same length; empty when given, not fitted
  bool polynomial = false;            // written as an array
  bool whole_number = false;          // written as an integer (rounded)
  std::string how;                    // how it was obtained, one short phrase

  double value() const { return values.front(); }
  double uncertainty() const { return uncertainties.empty() ? 0.0 : uncertainties.front(); }
};

struct FitResult {
  DeviceKind kind = DeviceKind::ideal;
  std::string data_file;
  std::vector<FittedParameter> parameters;  // in preset order
  GoodnessOfFit fit;
  std::string method;              // one sentence: what was fitted to what
  std::vector<std::string> notes;  // what was left out or could not be estimated, and why
  std::size_t records = 0, devices = 0, cycles = 0;

  const FittedParameter* find(const std::string& key) const {
    for (const auto& p : parameters)
      if (p.key == key) return &p;
    return nullptr;
  }
};

}  // namespace nvsyn::calibration
