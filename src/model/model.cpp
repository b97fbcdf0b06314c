#include "model/model.hpp"

namespace nvsyn {

const PopulationSpec* Model::find_population(const std::string& name) const {
  for (const auto& p : populations)
    if (p.name == name) return &p;
  return nullptr;
}

const InputSpec* Model::find_input(const std::string& name) const {
  for (const auto& i : inputs)
    if (i.name == name) return &i;
  return nullptr;
}

std::vector<std::string> Model::input_files() const {
  std::vector<std::string> files{file};
  for (const PathwaySpec& p : pathways) {
    if (!p.list_file.empty()) files.push_back(p.list_file);
    if (!p.device_preset_file.empty()) files.push_back(p.device_preset_file);
  }
  return files;
}

std::string_view wiring_rule_name(WiringRule rule) {
  switch (rule) {
    case WiringRule::one_to_one: return "one_to_one";
    case WiringRule::all_to_all: return "all_to_all";
    case WiringRule::random: return "random";
    case WiringRule::in_degree: return "in_degree";
    case WiringRule::list: return "list";
  }
  return "?";
}

}  // namespace nvsyn
