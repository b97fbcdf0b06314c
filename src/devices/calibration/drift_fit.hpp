#pragma once
// Drift exponent from read-time series (any device kind).
//
// The drift law (devices/drift.hpp, Ielmini, Lacaita & Mantegazza 2007) is
// G(t) = G(t0) (t/t0)^(-nu) after programming, a straight line of slope -nu in
// log G versus log t. Every series (one programmed state read at 3 or more positive
// read times) gives a slope by ordinary least squares; a device's exponent is the mean
// of its series' slopes. Then
//   drift_nu    = mean over devices (standard error: sd across devices / sqrt(N),
//                 or the series' own error for one device),
//   drift_nu_sd = sd across devices less each device's own estimation error (3 or
//                 more devices; spread.hpp),
//   drift_t0    = median of each series' first read time: the pulse-response fits use
//                 those first reads as the programmed conductance, and the drift law
//                 leaves a conductance unchanged until t0, so the preset is consistent.
#include <string>
#include <vector>

#include "devices/calibration/fit_result.hpp"
#include "devices/pulse_data.hpp"

namespace nvsyn::calibration {

struct DriftFit {
  std::vector<FittedParameter> parameters;  // drift_nu, drift_t0, and drift_nu_sd when estimable
  std::vector<std::string> notes;
  std::size_t series = 0;
};

// Empty (no parameters) when the data hold no read-time series.
DriftFit fit_drift(const PulseData& data);

}  // namespace nvsyn::calibration
