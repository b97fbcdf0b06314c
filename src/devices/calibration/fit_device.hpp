#pragma once
// Calibration of a device model against measured pulse responses (nvsyn fit-device).
//
//   kind                    method                                             file
//   linear_levels           k-pulse law fitted to transitions (LM)             linear_levels_fit.cpp
//   soft_bounds             k-pulse law fitted to transitions (LM)             soft_bounds_fit.cpp
//   exponential_saturation  k-pulse law fitted to transitions (LM)             exponential_saturation_fit.cpp
//   phase_change            increment polynomials by linear least squares,     phase_change_fit.cpp
//                           reset statistics from the first read of each cycle
//   binary_stochastic       two levels, switching fractions (binomial)         binary_stochastic_fit.cpp
// and, for every kind whose data hold read-time series, the drift exponent
// (drift_fit.hpp). Each fit states in FitResult::notes what the data could not tell.
#include <optional>

#include "devices/calibration/fit_result.hpp"
#include "devices/calibration/transitions.hpp"
#include "devices/pulse_data.hpp"

namespace nvsyn::calibration {

struct FitOptions {
  // exponential_saturation: hold full_range_pulses at this value instead of fitting it.
  std::optional<double> full_range_pulses;
  // phase_change: degree of the increment mean and sd polynomials (1 or 2).
  int polynomial_degree = 1;
};

// Fits `kind` to validated data. Throws UserError naming the data file, row and column
// for data that cannot support the fit (too few points, a kind with nothing to fit).
FitResult fit_device(const PulseData& data, DeviceKind kind, const FitOptions& options = {});

// The kind-specific fits behind fit_device, one per file.
FitResult fit_linear_levels(const PulseData& data, const TransitionSet& set);
FitResult fit_soft_bounds(const PulseData& data, const TransitionSet& set);
FitResult fit_exponential_saturation(const PulseData& data, const TransitionSet& set, const FitOptions& options);
FitResult fit_phase_change(const PulseData& data, const TransitionSet& set, const FitOptions& options);
FitResult fit_binary_stochastic(const PulseData& data, const TransitionSet& set);

}  // namespace nvsyn::calibration
