#pragma once
// The human-readable account of a fit that `nvsyn fit-device` prints: parameters with
// standard errors and how each was obtained, residual statistics, the runs test, the
// verdict with its rule, and the notes.
#include <string>

#include "devices/calibration/fit_result.hpp"

namespace nvsyn::calibration {

std::string fit_summary_text(const FitResult& fit);

}  // namespace nvsyn::calibration
