#include "devices/characterisation_statistics.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

#include "devices/device_array.hpp"
#include "devices/program_verify.hpp"

namespace nvsyn {
namespace {

constexpr double kBandLow = 0.1, kBandHigh = 0.9;  // fractions of the window (see the header)

// Running mean and unbiased variance (Welford), for spreads across cycles or devices.
struct Moments {
  std::size_t n = 0;
  double mean = 0.0, m2 = 0.0;
  void add(double x) {
    ++n;
    const double delta = x - mean;
    mean += delta / static_cast<double>(n);
    m2 += delta * (x - mean);
  }
  double variance() const { return n > 1 ? m2 / static_cast<double>(n - 1) : 0.0; }
};

// Fractional pulse number at which `curve` first reaches `level`, moving up
// (rising = true) or down; linear between pulses. NaN if it never does.
double first_crossing(const std::vector<double>& curve, double level, bool rising) {
  auto reached = [&](double g) { return rising ? g >= level : g <= level; };
  if (reached(curve[0])) return 0.0;
  for (std::size_t i = 1; i < curve.size(); ++i)
    if (reached(curve[i])) {
      const double span = curve[i] - curve[i - 1];
      return static_cast<double>(i - 1) + (span != 0.0 ? (level - curve[i - 1]) / span : 0.0);
    }
  return std::numeric_limits<double>::quiet_NaN();
}

// Largest |normalised curve - straight line| at the whole pulses strictly between
// the band-edge crossings p_from and p_to (where both are 0 by construction).
double max_deviation(const std::vector<double>& curve, double p_from, double p_to, double g_from, double g_to) {
  double worst = 0.0;
  const auto first = static_cast<std::size_t>(std::floor(p_from)) + 1;
  for (std::size_t i = first; static_cast<double>(i) < p_to && i < curve.size(); ++i) {
    const double y = (curve[i] - g_from) / (g_to - g_from);
    const double line = (static_cast<double>(i) - p_from) / (p_to - p_from);
    worst = std::max(worst, std::abs(y - line));
  }
  return worst;
}

double least_squares_slope(const std::vector<double>& x, const std::vector<double>& y) {
  const double n = static_cast<double>(x.size());
  double sx = 0, sy = 0, sxx = 0, sxy = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    sx += x[i];
    sy += y[i];
    sxx += x[i] * x[i];
    sxy += x[i] * y[i];
  }
  return (n * sxy - sx * sy) / (n * sxx - sx * sx);
}

class Analysis {
 public:
  Analysis(const CharacterisationCurves& c, const DeviceParameters& p, CharacterisationSummary& s)
      : c_(c), p_(p), s_(s) {
    for (std::uint32_t d = 0; d < c.devices; ++d)
      if (c.health[d] == static_cast<std::uint8_t>(DeviceHealth::working)) used_.push_back(d);
    s.devices_used = static_cast<std::uint32_t>(used_.size());
    s.devices_excluded = c.devices - s.devices_used;
  }

  void run() {
    energy();
    drift();
    if (used_.empty()) {
      s_.notes.emplace_back("every device is stuck or worn out: no pulse statistics");
      return;
    }
    up_mean_ = mean_curve(c_.up);
    if (c_.gradual_depression) down_mean_ = mean_curve(c_.down);
    window();
    if (!(s_.window > 0)) {
      s_.notes.emplace_back(p_.kind == DeviceKind::ideal
                                ? "ideal devices are continuous: pulses do not move them, so steps, levels, "
                                  "asymmetry, nonlinearity and spreads are not defined"
                                : "the ramps did not move the mean conductance (window <= 0): steps, levels, "
                                  "asymmetry, nonlinearity and spreads are not defined");
      return;
    }
    if (!c_.gradual_depression)
      s_.notes.emplace_back(fmt::format("{} devices cannot depress gradually: each cycle starts with a reset and "
                                        "has no down ramp, so pulses_down, step_down, asymmetry and "
                                        "nonlinearity_down are not defined",
                                        device_kind_name(p_.kind)));
    if (p_.kind == DeviceKind::binary_stochastic)
      s_.notes.emplace_back("binary_stochastic devices have two states each: levels, steps and nonlinearity "
                            "describe the average response over devices and cycles, not one device");
    steps_and_shape();
    spreads();
  }

 private:
  std::vector<double> mean_curve(const std::vector<double>& reads) const {
    std::vector<double> m(c_.reads_per_ramp(), 0.0);
    for (std::uint32_t d : used_)
      for (std::uint32_t cycle = 0; cycle < c_.cycles; ++cycle)
        for (std::uint32_t i = 0; i <= c_.pulses; ++i) m[i] += reads[c_.at(d, cycle, i)];
    const double n = static_cast<double>(used_.size()) * c_.cycles;
    for (double& v : m) v /= n;
    return m;
  }

  // Mean over cycles of one device's read at pulse i.
  double device_mean(const std::vector<double>& reads, std::uint32_t d, std::uint32_t i) const {
    double sum = 0.0;
    for (std::uint32_t cycle = 0; cycle < c_.cycles; ++cycle) sum += reads[c_.at(d, cycle, i)];
    return sum / c_.cycles;
  }

  void window() {
    s_.g_high = up_mean_.back();
    s_.g_low = c_.gradual_depression ? down_mean_.back() : up_mean_.front();
    s_.window = s_.g_high - s_.g_low;
    s_.on_off_ratio = s_.g_low > 0 ? s_.g_high / s_.g_low : std::numeric_limits<double>::infinity();
    s_.band_low = s_.g_low + kBandLow * s_.window;
    s_.band_high = s_.g_low + kBandHigh * s_.window;
  }

  void steps_and_shape() {
    const double a = s_.band_low, b = s_.band_high, band = b - a;
    const double up_a = first_crossing(up_mean_, a, true), up_b = first_crossing(up_mean_, b, true);
    s_.pulses_up = up_b - up_a;
    s_.step_up = band / s_.pulses_up;
    s_.nonlinearity_up = max_deviation(up_mean_, up_a, up_b, a, b);
    if (!c_.gradual_depression) {
      s_.levels = s_.pulses_up / (kBandHigh - kBandLow);
      return;
    }
    const double down_b = first_crossing(down_mean_, b, false), down_a = first_crossing(down_mean_, a, false);
    s_.pulses_down = down_a - down_b;
    s_.step_down = band / s_.pulses_down;
    s_.nonlinearity_down = max_deviation(down_mean_, down_b, down_a, b, a);
    s_.levels = 0.5 * (s_.pulses_up + s_.pulses_down) / (kBandHigh - kBandLow);
    s_.asymmetry = (s_.step_up - s_.step_down) / (s_.step_up + s_.step_down);
  }

  // Pulse numbers whose step lies wholly inside the band, and reads inside it.
  std::vector<std::uint32_t> band_steps(const std::vector<double>& mean, bool rising) const {
    std::vector<std::uint32_t> out;
    const double a = s_.band_low, b = s_.band_high;
    for (std::uint32_t i = 1; i <= c_.pulses; ++i) {
      const double from = mean[i - 1], to = mean[i];
      if (rising ? (from >= a && to <= b) : (from <= b && to >= a)) out.push_back(i);
    }
    return out;
  }
  std::vector<std::uint32_t> band_reads(const std::vector<double>& mean) const {
    std::vector<std::uint32_t> out;
    for (std::uint32_t i = 0; i <= c_.pulses; ++i)
      if (mean[i] >= s_.band_low && mean[i] <= s_.band_high) out.push_back(i);
    return out;
  }

  void spreads() {
    struct Ramp {
      const std::vector<double>* reads;
      const std::vector<double>* mean;
      bool rising;
    };
    std::vector<Ramp> ramps{{&c_.up, &up_mean_, true}};
    if (c_.gradual_depression) ramps.push_back({&c_.down, &down_mean_, false});

    double step_variance = 0, abs_step = 0, curve_variance = 0, d2d_variance = 0;
    std::size_t step_terms = 0, abs_terms = 0, curve_terms = 0, d2d_terms = 0;
    for (const Ramp& r : ramps) {
      const std::vector<double>& reads = *r.reads;
      const std::vector<std::uint32_t> steps = band_steps(*r.mean, r.rising);
      const std::vector<std::uint32_t> points = band_reads(*r.mean);
      for (std::uint32_t d : used_) {
        for (std::uint32_t i : steps) {
          Moments m;
          for (std::uint32_t cycle = 0; cycle < c_.cycles; ++cycle) {
            const double step = reads[c_.at(d, cycle, i)] - reads[c_.at(d, cycle, i - 1)];
            m.add(step);
            abs_step += std::abs(step);
            ++abs_terms;
          }
          step_variance += m.variance();
          ++step_terms;
        }
        for (std::uint32_t i : points) {
          Moments m;
          for (std::uint32_t cycle = 0; cycle < c_.cycles; ++cycle) m.add(reads[c_.at(d, cycle, i)]);
          curve_variance += m.variance();
          ++curve_terms;
        }
      }
      for (std::uint32_t i : points) {
        Moments m;
        for (std::uint32_t d : used_) m.add(device_mean(reads, d, i));
        d2d_variance += m.variance();
        ++d2d_terms;
      }
    }

    if (c_.cycles < 2) {
      s_.notes.emplace_back("cycle-to-cycle spreads need at least 2 cycles");
    } else {
      if (step_terms > 0 && abs_step > 0)
        s_.c2c_step_spread = std::sqrt(step_variance / static_cast<double>(step_terms)) /
                             (abs_step / static_cast<double>(abs_terms));
      else
        s_.notes.emplace_back("no pulse step lies wholly inside the band (10-90 % of the window): "
                              "c2c_step_spread is not defined");
      if (curve_terms > 0) s_.c2c_curve_spread = std::sqrt(curve_variance / static_cast<double>(curve_terms)) / s_.window;
    }
    if (used_.size() < 2) {
      s_.notes.emplace_back("device-to-device spreads need at least 2 working devices");
      return;
    }
    if (d2d_terms > 0) s_.d2d_curve_spread = std::sqrt(d2d_variance / static_cast<double>(d2d_terms)) / s_.window;
    Moments high;
    for (std::uint32_t d : used_) high.add(device_mean(c_.up, d, c_.pulses));
    s_.d2d_g_high_spread = std::sqrt(high.variance()) / high.mean;
  }

  void drift() {
    const std::size_t levels = c_.drift_targets.size(), delays = c_.read_delays.size();
    s_.drift_nu.assign(levels * c_.devices, std::numeric_limits<double>::quiet_NaN());
    if (levels == 0 || delays == 0) {
      s_.notes.emplace_back("no drift experiment (no read delays or levels)");
      return;
    }
    std::vector<std::size_t> usable;  // delays where the power law holds
    for (std::size_t k = 0; k < delays; ++k)
      if (c_.read_delays[k] >= p_.drift_t0) usable.push_back(k);
    if (usable.size() < 2) {
      s_.notes.emplace_back(fmt::format("drift exponents need at least two read delays at or beyond drift_t0 = {}",
                                        format_quantity(p_.drift_t0, Dimension::time)));
      return;
    }
    Moments nu;
    for (std::size_t level = 0; level < levels; ++level)
      for (std::uint32_t d : used_) {
        if (c_.drift_verify_status[level * c_.devices + d] == static_cast<std::uint8_t>(VerifyStatus::unresponsive))
          continue;
        std::vector<double> x, y;
        for (std::size_t k : usable) {
          const double g = c_.drift[c_.drift_at(level, d, k)];
          if (g <= 0) continue;  // a read clipped at zero has no logarithm
          x.push_back(std::log(c_.read_delays[k]));
          y.push_back(std::log(g));
        }
        if (x.size() < 2) continue;
        const double fitted = -least_squares_slope(x, y);
        s_.drift_nu[level * c_.devices + d] = fitted;
        nu.add(fitted);
      }
    s_.drift_fits = static_cast<std::uint32_t>(nu.n);
    if (nu.n > 0) s_.drift_nu_mean = nu.mean;
    if (nu.n > 1) s_.drift_nu_sd = std::sqrt(nu.variance());
  }

  void energy() {
    double joules = 0, pulses = 0;
    for (std::uint32_t d = 0; d < c_.devices; ++d) {
      joules += c_.energy[d];
      pulses += c_.pulse_count[d];
    }
    if (pulses > 0) s_.energy_per_pulse = joules / pulses;
  }

  const CharacterisationCurves& c_;
  const DeviceParameters& p_;
  CharacterisationSummary& s_;
  std::vector<std::uint32_t> used_;
  std::vector<double> up_mean_, down_mean_;
};

}  // namespace

CharacterisationSummary summarise_characterisation(const CharacterisationCurves& curves,
                                                   const DeviceParameters& device) {
  CharacterisationSummary s;
  Analysis(curves, device, s).run();
  return s;
}

std::vector<SummaryEntry> summary_entries(const CharacterisationSummary& s) {
  using D = Dimension;
  return {
      {"g_low", s.g_low, D::conductance, "mean conductance at the end of the down ramps (no down ramp: after reset)"},
      {"g_high", s.g_high, D::conductance, "mean conductance at the end of the up ramps"},
      {"window", s.window, D::conductance, "g_high - g_low"},
      {"on_off_ratio", s.on_off_ratio, D::dimensionless, "g_high / g_low"},
      {"pulses_up", s.pulses_up, D::dimensionless, "pulses the mean up curve takes across 10-90 % of the window"},
      {"pulses_down", s.pulses_down, D::dimensionless, "pulses the mean down curve takes across the same band"},
      {"step_up", s.step_up, D::conductance, "mean potentiation step in the band"},
      {"step_down", s.step_down, D::conductance, "mean depression step magnitude in the band"},
      {"levels", s.levels, D::dimensionless, "window / mean step"},
      {"asymmetry", s.asymmetry, D::dimensionless, "(step_up - step_down) / (step_up + step_down)"},
      {"nonlinearity_up", s.nonlinearity_up, D::dimensionless, "max deviation of the normalised up curve from a line"},
      {"nonlinearity_down", s.nonlinearity_down, D::dimensionless, "same for the down curve"},
      {"c2c_step_spread", s.c2c_step_spread, D::dimensionless, "sd of one device's step across cycles / mean step"},
      {"c2c_curve_spread", s.c2c_curve_spread, D::dimensionless, "sd of one device's curve across cycles / window"},
      {"d2d_g_high_spread", s.d2d_g_high_spread, D::dimensionless, "sd across devices of g_high / g_high"},
      {"d2d_curve_spread", s.d2d_curve_spread, D::dimensionless, "sd across devices of mean curves / window"},
      {"drift_nu_mean", s.drift_nu_mean, D::dimensionless, "mean fitted drift exponent"},
      {"drift_nu_sd", s.drift_nu_sd, D::dimensionless, "sd of fitted drift exponents"},
      {"energy_per_pulse", s.energy_per_pulse, D::energy, "mean programming energy per pulse"},
  };
}

}  // namespace nvsyn
