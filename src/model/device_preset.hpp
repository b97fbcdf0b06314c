#pragma once
// Device presets: TOML files (models/devices/*.toml) holding a [device] table of
// one device kind's parameters, each with a note on its origin.
//
// A preset is named either by a path ("../my_devices/fitted.toml", relative to the
// model file) or by a bare name ("phase_change") looked up in the folders of the
// NVSYN_PRESETS environment variable (colon-separated) and then in nvsyn's own
// models/devices folder.
#include <memory>
#include <string>
#include <vector>

#include "core/param_table.hpp"

namespace nvsyn {

struct DevicePreset {
  std::string name;    // as referred to
  std::string file;    // resolved path
  std::string text;    // full text, stored in run files
  std::shared_ptr<ParamTable> device;  // the [device] table
};

// `where`: the position of the reference, for "not found" errors. `ranges`: the
// policy for implausible values of the model that names the preset (null: refuse).
DevicePreset read_device_preset(const std::string& name_or_path, const std::string& relative_to_folder,
                                const SourcePosition& where, std::shared_ptr<RangePolicy> ranges = nullptr);

// Reads a preset file given by path (used by `nvsyn device`).
DevicePreset read_device_preset_file(const std::string& path, std::shared_ptr<RangePolicy> ranges = nullptr);

// Folders searched for bare preset names, in order.
std::vector<std::string> preset_folders();

}  // namespace nvsyn
