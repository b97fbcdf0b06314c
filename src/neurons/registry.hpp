#pragma once
// Neuron models by name. Adding a model: implement NeuronBank in its own file and
// add one line to the table in registry.cpp (DEVELOPERS.md, "Adding a neuron model").
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "core/param_table.hpp"
#include "neurons/neuron_bank.hpp"

namespace nvsyn {

// Builds `size` neurons of model `name`, validating the model's parameters from
// `params` (which also holds structure keys such as "size"; those are marked used
// by the caller). Throws UserError for an unknown model or bad parameters.
std::unique_ptr<NeuronBank> make_neuron_bank(const std::string& name, std::uint32_t size,
                                               const ParamTable& params, std::uint64_t seed,
                                               std::uint32_t population_id);

std::vector<std::string> neuron_model_names();

}  // namespace nvsyn
