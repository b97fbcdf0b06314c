#pragma once
// Device-to-device spreads from per-device estimates.
//
// The observed variance of N per-device values holds the true spread and each value's
// own estimation error: spread^2 = var_observed - mean(se_i^2), clipped at zero.
// Its standard error by the delta method, for normal spreads (var of a sample
// variance 2 var^2 / (N - 1)):  se = var_observed / (spread sqrt(2 (N - 1))), with the
// spread floored at half the observed sd so that a spread near zero keeps a finite,
// conservative error (at most twice the observed sd / sqrt(2 (N - 1))). The error is
// computed from the estimate itself, so a low estimate understates it somewhat: in
// simulated repeats (30 devices) the spread of estimates was about 1.5 such errors.
#include <string>
#include <vector>

#include "devices/calibration/fit_result.hpp"

namespace nvsyn::calibration {

struct Spread {
  double value = 0.0;  // sd less estimation noise
  double error = 0.0;  // its standard error
  double mean = 0.0;
};

Spread corrected_spread(const std::vector<double>& values, const std::vector<double>& errors);

// The spread relative to the values' mean (sd / mean), as d2d_g_max and d2d_step are.
FittedParameter relative_spread(const std::string& key, const std::vector<double>& values,
                                const std::vector<double>& errors, const std::string& how);

}  // namespace nvsyn::calibration
