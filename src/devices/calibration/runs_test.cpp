#include "devices/calibration/runs_test.hpp"

#include <cmath>
#include <limits>

namespace nvsyn::calibration {

RunsTest runs_test(const std::vector<std::vector<double>>& groups) {
  RunsTest t;
  for (const auto& group : groups) {
    double n1 = 0, n2 = 0;
    std::size_t runs = 0;
    int last = 0;
    for (double r : group) {
      const int sign = r > 0 ? 1 : (r < 0 ? -1 : 0);
      if (sign == 0) continue;
      (sign > 0 ? n1 : n2) += 1;
      if (sign != last) ++runs;
      last = sign;
    }
    const double n = n1 + n2;
    if (n == 0) continue;
    t.signs += static_cast<std::size_t>(n);
    t.runs += runs;
    t.expected_runs += 1.0 + 2.0 * n1 * n2 / n;
    if (n > 1) t.variance += 2.0 * n1 * n2 * (2.0 * n1 * n2 - n) / (n * n * (n - 1.0));
  }
  t.z = t.variance > 0 ? (static_cast<double>(t.runs) - t.expected_runs) / std::sqrt(t.variance)
                       : std::numeric_limits<double>::quiet_NaN();
  return t;
}

}  // namespace nvsyn::calibration
