#pragma once
// How well a fitted device model describes the data it was fitted to.
//
// Residual statistics (RMS, largest |residual|, R^2 = 1 - RSS/TSS of the fitted
// conductances) describe the size of the misfit; the runs test (runs_test.hpp)
// detects its shape. The verdict is "poor" when
//   * the runs-test z < -3: too few sign changes along the ramps, a systematic
//     misfit (one-sided; a correct model with independent noise lands there in about
//     0.13% of fits, the normal tail beyond 3 sd), or
//   * R^2 < 0.9: the model explains less than 90% of the conductance variation
//     (common practice threshold).
// Otherwise "good". When every residual is at rounding level the data are noise-free
// and reproduced exactly; the verdict is "good" and the runs test does not apply.
#include <string>
#include <vector>

#include "devices/calibration/runs_test.hpp"

namespace nvsyn::calibration {

inline constexpr double kPoorRunsZ = -3.0;
inline constexpr double kPoorRSquared = 0.9;

// What a fit hands to the assessment. Residuals and observed values in S.
struct FitSample {
  std::vector<double> residuals;  // observed - predicted, every point the fit used
  std::vector<double> observed;   // the observed conductance each residual belongs to
  // Residuals whose order carries information, one group per ramp in pulse order.
  // Points where a device rests at a bound are left out (their residuals repeat one
  // value rather than draw new noise), and so are points so close to a bound that the
  // expected step, and the noise that scales with it, nearly vanishes: there the least
  // error of the fitted bound, not the model's shape, sets the residual's sign.
  std::vector<std::vector<double>> ordered;
  std::size_t parameters = 0;
};

struct GoodnessOfFit {
  std::size_t points = 0, parameters = 0;
  double rms = 0.0;      // S
  double max_abs = 0.0;  // S
  double r_squared = 0.0;
  RunsTest runs;
  bool exact = false;
  bool poor = false;

  std::string verdict() const { return poor ? "poor" : "good"; }
  // The rule above in one line, as written to presets and summaries.
  static std::string rule();
};

GoodnessOfFit assess_fit(const FitSample& sample);

}  // namespace nvsyn::calibration
