#include "model/device_preset.hpp"

#include <cstdlib>
#include <filesystem>
#include <fmt/format.h>
#include <sstream>

#include "model/toml_tables.hpp"

#ifndef NVSYN_PRESET_DIR
#define NVSYN_PRESET_DIR ""
#endif

namespace nvsyn {

std::vector<std::string> preset_folders() {
  std::vector<std::string> folders;
  if (const char* env = std::getenv("NVSYN_PRESETS")) {
    std::stringstream ss(env);
    std::string folder;
    while (std::getline(ss, folder, ':'))
      if (!folder.empty()) folders.push_back(folder);
  }
  if (*NVSYN_PRESET_DIR) folders.emplace_back(NVSYN_PRESET_DIR);
  return folders;
}

DevicePreset read_device_preset_file(const std::string& path, std::shared_ptr<RangePolicy> ranges) {
  DevicePreset preset;
  preset.name = std::filesystem::path(path).stem().string();
  preset.file = path;
  preset.text = read_text_file(path, "device preset");
  auto root = parse_toml_tables(preset.text, path, ranges);
  root->mark_used("name");
  root->mark_used("description");
  root->mark_used("origin");
  // Fit statistics that `nvsyn fit-device` writes for scripts; they do not describe the device.
  root->mark_used("fit");
  if (!root->has("device"))
    throw UserError({path, 1, 1}, "device", "a device preset needs a [device] table with the device's 'model' and parameters");
  auto device = root->table("device");
  preset.device = device->overlaid_with(ParamTable(), fmt::format("device preset '{}'", preset.name));
  root->reject_unknown_keys();
  return preset;
}

DevicePreset read_device_preset(const std::string& name_or_path, const std::string& relative_to_folder,
                                const SourcePosition& where, std::shared_ptr<RangePolicy> ranges) {
  namespace fs = std::filesystem;
  const bool is_path = name_or_path.find('/') != std::string::npos || name_or_path.ends_with(".toml");
  std::vector<std::string> tried;
  std::error_code ec;
  if (is_path) {
    fs::path p(name_or_path);
    if (p.is_relative()) p = fs::path(relative_to_folder) / p;
    if (fs::exists(p, ec)) return read_device_preset_file(p.string(), ranges);
    tried.push_back(p.string());
  } else {
    for (const auto& folder : preset_folders()) {
      const fs::path p = fs::path(folder) / (name_or_path + ".toml");
      if (fs::exists(p, ec)) {
        DevicePreset preset = read_device_preset_file(p.string(), ranges);
        preset.name = name_or_path;
        return preset;
      }
      tried.push_back(p.string());
    }
  }
  std::string list;
  for (const auto& t : tried) list += "\n  " + t;
  throw UserError(where, "preset",
                  fmt::format("device preset '{}' not found; looked for:{}{}", name_or_path, list,
                              is_path ? "" : "\n(set NVSYN_PRESETS to a folder of presets, or give a path ending in .toml)"));
}

}  // namespace nvsyn
