#pragma once
// Everything that describes one kind of non-volatile device: its pulse-response
// model and the non-idealities layered on it. Read from a preset table
// (models/devices/*.toml) with any key overridable by a model file.
//
// All conductances in S, times in s, energies in J. A parameter that a model does
// not use is ignored (and rejected as unknown when given in a file).
#include <cstdint>
#include <string>
#include <vector>

#include "core/param_table.hpp"

namespace nvsyn {

enum class DeviceKind : std::uint8_t {
  ideal,                   // continuous weights: the floating-point baseline
  linear_levels,           // N equal steps between g_min and g_max
  soft_bounds,             // dG+ = a+ (g_max - G), dG- = a- (G - g_min)
  exponential_saturation,  // G(p) = g_min + (g_max - g_min)(1 - e^{-p/A})/(1 - e^{-P/A})
  phase_change,            // accumulative set pulses, abrupt reset, drift, 1/f read noise
  binary_stochastic,       // two states, switching with a probability per pulse
};

// Names as written in files; one table, used for parsing, printing and --help.
std::string_view device_kind_name(DeviceKind k);
bool parse_device_kind(std::string_view name, DeviceKind& out);
std::string device_kind_list();

struct DeviceParameters {
  DeviceKind kind = DeviceKind::ideal;
  double g_min = 0.0;   // S
  double g_max = 1e-5;  // S

  // linear_levels
  std::uint32_t levels = 64;  // pulses from g_min to g_max
  // soft_bounds
  double alpha_p = 0.05, alpha_d = 0.05;  // fraction of the remaining range per pulse
  // exponential_saturation
  double full_range_pulses = 64;  // P: pulses from g_min to g_max
  double saturation_p = 20;       // A for potentiation, in pulses (larger: more linear)
  double saturation_d = 20;       // A for depression, in pulses
  // phase_change: mean and sd of one set pulse's increment as polynomials of
  // x = (G - g_min)/(g_max - g_min): mean(x) = sum m_i x^i, sd(x) = sum s_i x^i (S)
  std::vector<double> increment_mean{1e-6, -0.9e-6};
  std::vector<double> increment_sd{0.3e-6, 0.0};
  double reset_mean = 0.1e-6, reset_sd = 0.02e-6;  // S, conductance after a reset
  // binary_stochastic
  double p_set = 0.1, p_reset = 0.1;  // switching probability per pulse

  // --- non-idealities (any model) ---
  double programming_noise = 0.0;  // relative sd of each pulse's step (cycle to cycle)
  double d2d_g_max = 0.0;          // relative sd of g_max between devices
  double d2d_step = 0.0;           // relative sd of step sizes between devices
  double read_noise = 0.0;         // relative sd of white read noise
  double read_noise_q = 0.0;       // 1/f noise: S_G(f) = Q G^2 / f
  double read_bandwidth = 1e6;     // Hz, upper frequency of a read
  double drift_nu = 0.0;           // mean drift exponent
  double drift_nu_sd = 0.0;        // device-to-device sd of the drift exponent
  double drift_t0 = 1.0;           // s, reference time of the drift law
  double stuck_low = 0.0;          // fraction of devices stuck at g_min
  double stuck_high = 0.0;         // fraction of devices stuck at g_max
  double endurance = 0.0;          // pulses after which a device stops responding (0: unlimited)
  double pulse_energy_low = 0.0;   // J per pulse at g_min
  double pulse_energy_high = 0.0;  // J per pulse at g_max (linear in between)

  // Reads and validates; `table` holds the preset (and overrides) of one device kind.
  static DeviceParameters from_table(const ParamTable& table);
  // The expected change of one pulse from g_min, for messages and policies (S).
  double nominal_step() const;
  bool bidirectional() const { return kind != DeviceKind::phase_change; }
};

}  // namespace nvsyn
