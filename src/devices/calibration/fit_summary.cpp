#include "devices/calibration/fit_summary.hpp"

#include <cmath>
#include <fmt/format.h>

#include "devices/calibration/fitted_preset.hpp"

namespace nvsyn::calibration {

std::string fit_summary_text(const FitResult& fit) {
  const GoodnessOfFit& g = fit.fit;
  std::string s = fmt::format("fit of {} to {}: {} reads, {} device(s), {} cycle(s)\n", device_kind_name(fit.kind),
                              fit.data_file, fit.records, fit.devices, fit.cycles);
  s += fmt::format("method: {}\n\nparameters (± standard error)\n", fit.method);
  for (const FittedParameter& p : fit.parameters) {
    std::string value;
    for (std::size_t k = 0; k < p.values.size(); ++k) {
      if (k) value += ", ";
      value += p.whole_number ? fmt::format("{}", std::llround(p.values[k])) : quantity_text(p.values[k], p.dimension);
      if (k < p.uncertainties.size()) value += " ± " + quantity_text(p.uncertainties[k], p.dimension, 2);
    }
    if (p.polynomial) value = "[" + value + "]";
    s += fmt::format("  {:<18} {:<40} {}\n", p.key, value, p.how);
  }
  s += fmt::format("\nresiduals: RMS {}, max |r| {}, R^2 {:.5f} ({} points, {} parameters)\n",
                   quantity_text(g.rms, Dimension::conductance, 3), quantity_text(g.max_abs, Dimension::conductance, 3),
                   g.r_squared, g.points, g.parameters);
  if (g.exact)
    s += "runs test: not applicable, every residual is at rounding level (noise-free data)\n";
  else if (std::isfinite(g.runs.z))
    s += fmt::format("runs test: {} runs in {} signs, {:.1f} expected, z = {:+.2f}\n", g.runs.runs, g.runs.signs,
                     g.runs.expected_runs, g.runs.z);
  else
    s += "runs test: not applicable (too few residuals of each sign)\n";
  s += fmt::format("verdict: {}{} (rule: {})\n", g.verdict(), g.exact ? ", exact" : "", GoodnessOfFit::rule());
  for (const std::string& n : fit.notes) s += "note: " + n + "\n";
  return s;
}

}  // namespace nvsyn::calibration
