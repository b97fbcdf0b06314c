#include "devices/calibration/goodness_of_fit.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn::calibration {

std::string GoodnessOfFit::rule() {
  return fmt::format(
      "poor if the runs-test z < {:g} (systematic misfit; about 0.13% of fits of a correct model) "
      "or R^2 < {:g}",
      kPoorRunsZ, kPoorRSquared);
}

GoodnessOfFit assess_fit(const FitSample& sample) {
  GoodnessOfFit g;
  g.points = sample.residuals.size();
  g.parameters = sample.parameters;
  double rss = 0, mean = 0, scale = 0;
  for (std::size_t i = 0; i < g.points; ++i) {
    rss += sample.residuals[i] * sample.residuals[i];
    g.max_abs = std::max(g.max_abs, std::abs(sample.residuals[i]));
    mean += sample.observed[i];
    scale = std::max(scale, std::abs(sample.observed[i]));
  }
  if (g.points == 0) return g;
  mean /= static_cast<double>(g.points);
  double tss = 0;
  for (double y : sample.observed) tss += (y - mean) * (y - mean);
  g.rms = std::sqrt(rss / static_cast<double>(g.points));
  g.r_squared = tss > 0 ? 1.0 - rss / tss : (rss == 0 ? 1.0 : 0.0);
  // Rounding level: far below any measurement's resolution, far above the
  // optimiser's tolerance on noise-free data.
  g.exact = g.max_abs <= 1e-9 * scale;
  g.runs = runs_test(sample.ordered);
  if (g.exact) return g;
  g.poor = (std::isfinite(g.runs.z) && g.runs.z < kPoorRunsZ) || g.r_squared < kPoorRSquared;
  return g;
}

}  // namespace nvsyn::calibration
