#include "devices/device_parameters.hpp"

#include <array>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn {
namespace {

struct KindName {
  DeviceKind kind;
  std::string_view name;
};
constexpr std::array<KindName, 6> kKinds{{
    {DeviceKind::ideal, "ideal"},
    {DeviceKind::linear_levels, "linear_levels"},
    {DeviceKind::soft_bounds, "soft_bounds"},
    {DeviceKind::exponential_saturation, "exponential_saturation"},
    {DeviceKind::phase_change, "phase_change"},
    {DeviceKind::binary_stochastic, "binary_stochastic"},
}};

std::vector<double> conductance_polynomial(const ParamTable& t, const std::string& key, std::vector<double> fallback) {
  if (!t.has(key)) return fallback;
  std::vector<double> out;
  for (const ParamValue& v : t.array(key)) out.push_back(t.to_quantity(v, key, QuantityKind::conductance));
  if (out.empty()) throw t.error(key, "needs at least one coefficient, e.g. [\"1 uS\", \"-0.9 uS\"]");
  return out;
}

}  // namespace

std::string_view device_kind_name(DeviceKind k) {
  for (const auto& e : kKinds)
    if (e.kind == k) return e.name;
  return "?";
}

bool parse_device_kind(std::string_view name, DeviceKind& out) {
  for (const auto& e : kKinds)
    if (e.name == name) {
      out = e.kind;
      return true;
    }
  return false;
}

std::string device_kind_list() {
  std::string s;
  for (const auto& e : kKinds) s += (s.empty() ? "" : ", ") + std::string(e.name);
  return s;
}

DeviceParameters DeviceParameters::from_table(const ParamTable& t) {
  DeviceParameters p;
  const std::string model = t.text("model");
  if (!parse_device_kind(model, p.kind))
    throw t.error("model", fmt::format("unknown device model '{}'; known models: {}", model, device_kind_list()));

  p.g_min = t.quantity_or("g_min", QuantityKind::conductance, p.g_min);
  p.g_max = t.quantity_or("g_max", QuantityKind::conductance, p.g_max);
  if (p.g_min < 0) throw t.error("g_min", "a conductance cannot be negative");
  if (!(p.g_max > p.g_min)) throw t.error("g_max", "g_max must be larger than g_min");

  auto fraction = [&](const char* key, double fallback, bool open_top) {
    const double v = t.number_or(key, QuantityKind::fraction, fallback);
    if (!(v >= 0.0 && (open_top ? v < 1.0 : v <= 1.0)))
      throw t.error(key, fmt::format("must lie in [0, 1{}, got {}", open_top ? ")" : "]", v));
    return v;
  };
  auto non_negative = [&](const char* key, double v) {
    if (!(v >= 0.0)) throw t.error(key, fmt::format("must not be negative, got {}", v));
    return v;
  };

  switch (p.kind) {
    case DeviceKind::ideal: break;
    case DeviceKind::linear_levels: {
      const std::int64_t n = t.integer_or("levels", p.levels);
      if (n < 1 || n > 1'000'000) throw t.error("levels", fmt::format("must be a whole number from 1 to 10^6, got {}", n));
      p.levels = static_cast<std::uint32_t>(n);
      break;
    }
    case DeviceKind::soft_bounds:
      p.alpha_p = t.number_or("alpha_p", QuantityKind::fraction, p.alpha_p);
      p.alpha_d = t.number_or("alpha_d", QuantityKind::fraction, p.alpha_d);
      if (!(p.alpha_p > 0 && p.alpha_p < 1)) throw t.error("alpha_p", "must lie in (0, 1)");
      if (!(p.alpha_d > 0 && p.alpha_d < 1)) throw t.error("alpha_d", "must lie in (0, 1)");
      break;
    case DeviceKind::exponential_saturation:
      p.full_range_pulses = t.number_or("full_range_pulses", QuantityKind::pulse_count, p.full_range_pulses);
      p.saturation_p = t.number_or("saturation_p", QuantityKind::pulse_count, p.saturation_p);
      p.saturation_d = t.number_or("saturation_d", QuantityKind::pulse_count, p.saturation_d);
      if (!(p.full_range_pulses >= 1)) throw t.error("full_range_pulses", "must be at least 1");
      if (!(p.saturation_p > 0)) throw t.error("saturation_p", "must be positive (in pulses)");
      if (!(p.saturation_d > 0)) throw t.error("saturation_d", "must be positive (in pulses)");
      break;
    case DeviceKind::phase_change:
      p.increment_mean = conductance_polynomial(t, "increment_mean", p.increment_mean);
      p.increment_sd = conductance_polynomial(t, "increment_sd", p.increment_sd);
      p.reset_mean = t.quantity_or("reset_mean", QuantityKind::conductance, p.reset_mean);
      p.reset_sd = non_negative("reset_sd", t.quantity_or("reset_sd", QuantityKind::conductance, p.reset_sd));
      if (!(p.reset_mean >= p.g_min && p.reset_mean < p.g_max))
        throw t.error("reset_mean", "the reset conductance must lie in [g_min, g_max)");
      if (!(p.increment_mean[0] > 0))
        throw t.error("increment_mean", "the increment at g_min (first coefficient) must be positive");
      break;
    case DeviceKind::binary_stochastic:
      p.p_set = fraction("p_set", p.p_set, false);
      p.p_reset = fraction("p_reset", p.p_reset, false);
      if (p.p_set == 0 && p.p_reset == 0) throw t.error("p_set", "a device that never switches cannot learn");
      break;
  }

  p.programming_noise = non_negative("programming_noise", t.number_or("programming_noise", QuantityKind::spread, 0.0));
  p.d2d_g_max = non_negative("d2d_g_max", t.number_or("d2d_g_max", QuantityKind::spread, 0.0));
  p.d2d_step = non_negative("d2d_step", t.number_or("d2d_step", QuantityKind::spread, 0.0));
  p.read_noise = non_negative("read_noise", t.number_or("read_noise", QuantityKind::spread, 0.0));
  p.read_noise_q = non_negative("read_noise_q", t.number_or("read_noise_q", QuantityKind::spread, 0.0));
  p.read_bandwidth = t.quantity_or("read_bandwidth", QuantityKind::bandwidth, p.read_bandwidth);
  if (!(p.read_bandwidth > 0)) throw t.error("read_bandwidth", "must be positive");
  p.drift_nu = t.number_or("drift_nu", QuantityKind::fraction, 0.0);
  if (!(p.drift_nu >= 0 && p.drift_nu < 1)) throw t.error("drift_nu", "a drift exponent must lie in [0, 1)");
  p.drift_nu_sd = non_negative("drift_nu_sd", t.number_or("drift_nu_sd", QuantityKind::spread, 0.0));
  p.drift_t0 = t.quantity_or("drift_t0", QuantityKind::time_constant, p.drift_t0);
  if (!(p.drift_t0 > 0)) throw t.error("drift_t0", "must be positive");
  p.stuck_low = fraction("stuck_low", 0.0, false);
  p.stuck_high = fraction("stuck_high", 0.0, false);
  if (p.stuck_low + p.stuck_high > 1) throw t.error("stuck_high", "stuck_low + stuck_high cannot exceed 1");
  p.endurance = non_negative("endurance", t.number_or("endurance", QuantityKind::pulse_count, 0.0));
  p.pulse_energy_low = non_negative("pulse_energy_low", t.quantity_or("pulse_energy_low", QuantityKind::energy, 0.0));
  p.pulse_energy_high = non_negative("pulse_energy_high", t.quantity_or("pulse_energy_high", QuantityKind::energy, p.pulse_energy_low));
  return p;
}

double DeviceParameters::nominal_step() const {
  const double range = g_max - g_min;
  switch (kind) {
    case DeviceKind::ideal: return 0.0;
    case DeviceKind::linear_levels: return range / levels;
    case DeviceKind::soft_bounds: return alpha_p * range;
    case DeviceKind::exponential_saturation:
      return range * (-std::expm1(-1.0 / saturation_p)) / (-std::expm1(-full_range_pulses / saturation_p));
    case DeviceKind::phase_change: return increment_mean[0];
    case DeviceKind::binary_stochastic: return range;
  }
  return 0.0;
}

}  // namespace nvsyn
