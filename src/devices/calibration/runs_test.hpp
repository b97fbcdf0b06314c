#pragma once
// Wald-Wolfowitz runs test on the signs of residuals (Wald & Wolfowitz, Ann. Math.
// Stat. 11:147, 1940; volume, page and moments from memory): a run is a maximal
// stretch of equal signs. For a sequence of
// n1 positive and n2 negative signs in random order (n = n1 + n2),
//   E[R] = 1 + 2 n1 n2 / n,   Var[R] = 2 n1 n2 (2 n1 n2 - n) / (n^2 (n - 1)).
// A model that misses the shape of the data leaves residuals of one sign along whole
// stretches of a ramp: too few runs, z = (R - E[R]) / sqrt(Var[R]) strongly negative.
//
// Residuals come in independent groups (one per ramp, each in pulse order); runs are
// counted within each group and the groups' counts, means and variances are summed,
// so no run is invented at the border between two ramps. Zero residuals carry no
// sign and are skipped. z uses the normal approximation of the summed count.
#include <cstddef>
#include <span>
#include <vector>

namespace nvsyn::calibration {

struct RunsTest {
  std::size_t signs = 0;  // non-zero residuals
  std::size_t runs = 0;
  double expected_runs = 0.0;
  double variance = 0.0;
  double z = 0.0;  // NaN when the variance is zero (too few signs of each kind)
};

RunsTest runs_test(const std::vector<std::vector<double>>& groups);

}  // namespace nvsyn::calibration
