#include "neurons/registry.hpp"

#include <fmt/format.h>
#include <functional>

#include "neurons/lif.hpp"

namespace nvsyn {
namespace {

using Factory = std::function<std::unique_ptr<NeuronBank>(std::uint32_t, const ParamTable&, std::uint64_t, std::uint32_t)>;

struct Entry {
  const char* name;
  Factory make;
};

const std::vector<Entry>& registry() {
  static const std::vector<Entry> entries = {
      {"lif",
       [](std::uint32_t size, const ParamTable& t, std::uint64_t seed, std::uint32_t id) {
         return std::make_unique<LifBank>(size, LifParameters::from_table(t), seed, id);
       }},
  };
  return entries;
}

}  // namespace

std::unique_ptr<NeuronBank> make_neuron_bank(const std::string& name, std::uint32_t size,
                                               const ParamTable& params, std::uint64_t seed,
                                               std::uint32_t population_id) {
  for (const auto& e : registry())
    if (name == e.name) return e.make(size, params, seed, population_id);
  std::string known;
  for (const auto& e : registry()) known += (known.empty() ? "" : ", ") + std::string(e.name);
  throw params.error("neuron", fmt::format("unknown neuron model '{}'; known models: {}", name, known));
}

std::vector<std::string> neuron_model_names() {
  std::vector<std::string> out;
  for (const auto& e : registry()) out.emplace_back(e.name);
  return out;
}

}  // namespace nvsyn
