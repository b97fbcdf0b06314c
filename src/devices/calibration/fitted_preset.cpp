#include "devices/calibration/fitted_preset.hpp"

#include <array>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn::calibration {
namespace {

// TOML basic-string escaping; inside a multi-line basic string escaping every quote
// also keeps a closing """ from appearing.
std::string escaped(const std::string& s) {
  std::string out;
  for (unsigned char c : s) {
    if (c == '\\')
      out += "\\\\";
    else if (c == '"')
      out += "\\\"";
    else if (c == '\n')
      out += "\n";
    else if (c < 0x20 || c == 0x7f)
      out += fmt::format("\\u{:04X}", c);
    else
      out += static_cast<char>(c);
  }
  return out;
}

std::string one_line(const std::string& s) {
  std::string out = escaped(s);
  for (std::size_t i = 0; (i = out.find('\n', i)) != std::string::npos;) out.replace(i, 1, "\\n");
  return out;
}

std::string value_text(const FittedParameter& p) {
  if (p.whole_number) return fmt::format("{}", static_cast<long long>(std::llround(p.value())));
  if (p.dimension == Dimension::dimensionless && !p.polynomial) return quantity_text(p.value(), p.dimension);
  if (!p.polynomial) return fmt::format("\"{}\"", quantity_text(p.value(), p.dimension));
  std::string s = "[";
  for (std::size_t k = 0; k < p.values.size(); ++k)
    s += fmt::format("{}\"{}\"", k ? ", " : "", quantity_text(p.values[k], p.dimension));
  return s + "]";
}

std::string uncertainty_text(const FittedParameter& p, bool quoted) {
  auto one = [&](double u) {
    const std::string t = quantity_text(u, p.dimension, 2);
    return quoted && p.dimension != Dimension::dimensionless ? fmt::format("\"{}\"", t) : t;
  };
  if (!p.polynomial) return one(p.uncertainty());
  std::string s = "[";
  for (std::size_t k = 0; k < p.uncertainties.size(); ++k)
    s += fmt::format("{}{}", k ? ", " : "", one(p.uncertainties[k]));
  return s + "]";
}

bool all_finite(const std::vector<double>& v) {
  for (double x : v)
    if (!std::isfinite(x)) return false;
  return true;
}

}  // namespace

std::string quantity_text(double value, Dimension dimension, int digits) {
  if (dimension == Dimension::dimensionless) {
    if (!std::isfinite(value)) return fmt::format("{}", value);
    return fmt::format("{:.15g}", std::stod(fmt::format("{:.{}e}", value, digits - 1)));
  }
  const std::string_view base = dimension == Dimension::time ? "s" : (dimension == Dimension::conductance ? "S" : "?");
  struct Prefix {
    std::string_view symbol;
    double factor;
  };
  constexpr std::array<Prefix, 9> prefixes{{{"G", 1e9},
                                            {"M", 1e6},
                                            {"k", 1e3},
                                            {"", 1.0},
                                            {"m", 1e-3},
                                            {"u", 1e-6},
                                            {"n", 1e-9},
                                            {"p", 1e-12},
                                            {"f", 1e-15}}};
  // Rounded to `digits` significant digits first, so that "120 nS" does not print as
  // "1.2e+02 nS"; {:.15g} then shows every digit that is left.
  const double rounded = std::stod(fmt::format("{:.{}e}", value, digits - 1));
  const double magnitude = std::abs(rounded);
  if (magnitude == 0 || !std::isfinite(value)) return fmt::format("{:g} {}", value, base);
  if (magnitude < 1e-15) return fmt::format("{:.{}g} {}", value, digits, base);
  // Time stays in s (and ms, us) rather than ks: read times are written that way.
  for (const Prefix& p : prefixes)
    if (magnitude >= p.factor * (1 - 1e-12) && !(dimension == Dimension::time && p.factor > 1.0))
      return fmt::format("{:.15g} {}{}", std::stod(fmt::format("{:.{}g}", rounded / p.factor, digits)), p.symbol, base);
  return fmt::format("{:.{}g} f{}", value / 1e-15, digits, base);
}

std::string fitted_preset_text(const FitResult& fit, const PresetInfo& info) {
  const std::string kind(device_kind_name(fit.kind));
  const GoodnessOfFit& g = fit.fit;
  std::string origin = fmt::format(
      "Fitted with `{}` to {} reads of {} device(s) in {} cycle(s): {}.\n"
      "Goodness of fit: {}. Residual RMS {}, largest |residual| {}, R^2 {:.5f} ({} points, {} parameters);\n",
      info.command, fit.records, fit.devices, fit.cycles, fit.method,
      g.exact ? "good (exact: noise-free data)" : g.verdict(), quantity_text(g.rms, Dimension::conductance, 3),
      quantity_text(g.max_abs, Dimension::conductance, 3), g.r_squared, g.points, g.parameters);
  origin += std::isfinite(g.runs.z) ? fmt::format("runs test {} runs in {} signs, {:.1f} expected, z = {:.2f}.\n",
                                                  g.runs.runs, g.runs.signs, g.runs.expected_runs, g.runs.z)
                                    : std::string("runs test not applicable (too few residuals of each sign).\n");
  origin += "Rule: " + GoodnessOfFit::rule() + ".\n";
  origin += "Uncertainties (comments below, [fit.uncertainty]) are standard errors.\n";
  for (const std::string& n : fit.notes) origin += "Note: " + n + ".\n";
  origin +=
      "Not fitted, so nvsyn's defaults apply until you add them from other measurements: read noise,\n"
      "stuck fractions, endurance and pulse energy.\n";

  std::string out;
  out += fmt::format("name = \"{}\"\n", one_line(info.name));
  out += fmt::format("description = \"{} model fitted to measured pulse responses ({})\"\n", kind,
                     one_line(fit.data_file));
  out += "origin = \"\"\"\n" + escaped(origin) + "\"\"\"\n\n";

  out += "[device]\n";
  out += fmt::format("model = \"{}\"\n", kind);
  for (const FittedParameter& p : fit.parameters) {
    const std::string assignment = fmt::format("{} = {}", p.key, value_text(p));
    const std::string comment = p.uncertainties.empty()
                                    ? fmt::format("# ({})", p.how)
                                    : fmt::format("# ± {} (fit; {})", uncertainty_text(p, false), p.how);
    out += fmt::format("{:<40} {}\n", assignment, comment);
  }

  out += "\n[fit]\n";
  out += fmt::format("data = \"{}\"\n", one_line(fit.data_file));
  out += fmt::format("verdict = \"{}\"\n", g.verdict());
  out += fmt::format("exact = {}\n", g.exact);
  out += fmt::format("rule = \"{}\"\n", one_line(GoodnessOfFit::rule()));
  out += fmt::format("points = {}\nparameters = {}\n", g.points, g.parameters);
  out += fmt::format("rms = \"{}\"\n", quantity_text(g.rms, Dimension::conductance));
  out += fmt::format("max_abs_residual = \"{}\"\n", quantity_text(g.max_abs, Dimension::conductance));
  out += fmt::format("r_squared = {:.8g}\n", g.r_squared);
  out += fmt::format("runs = {}\nruns_signs = {}\nruns_expected = {:.6g}\n", g.runs.runs, g.runs.signs,
                     g.runs.expected_runs);
  if (std::isfinite(g.runs.z)) out += fmt::format("runs_z = {:.6g}\n", g.runs.z);
  out += "\n[fit.uncertainty]\n";
  for (const FittedParameter& p : fit.parameters)
    if (!p.uncertainties.empty() && all_finite(p.uncertainties))
      out += fmt::format("{} = {}\n", p.key, uncertainty_text(p, true));
  return out;
}

}  // namespace nvsyn::calibration
