#pragma once
// A fit written as a device preset (the format of models/devices/*.toml) that loads
// back through read_device_preset_file and DeviceParameters::from_table:
//
//   name, description, origin   origin says what was fitted to what, the goodness of
//                               fit and its rule, and what the data could not tell
//   [device]                    model and every fitted parameter with its unit, each
//                               followed by "# ± standard error (fit; how)"
//   [fit]                       the statistics for scripts: verdict, rule, points,
//                               parameters, rms, max_abs_residual, r_squared, runs,
//                               runs_expected, runs_z; [fit.uncertainty] the standard
//                               errors by key. The preset reader skips this table.
//
// Parameters the data cannot give (read noise, faults, endurance, energy) are left out
// and take nvsyn's defaults; origin says so.
#include <string>

#include "devices/calibration/fit_result.hpp"

namespace nvsyn::calibration {

struct PresetInfo {
  std::string name;     // the preset's name
  std::string command;  // how the fit was run, quoted in origin
};

std::string fitted_preset_text(const FitResult& fit, const PresetInfo& info);

// "12.3 uS", "0.0412", "20 ms": `digits` significant digits with a readable prefix.
std::string quantity_text(double value, Dimension dimension, int digits = 6);

}  // namespace nvsyn::calibration
