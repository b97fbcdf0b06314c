#pragma once
// A built network: populations of neurons and the pathways between them.
// Spike sources (src/inputs) live beside it in the Simulation; a pathway names
// its source group, which is either a population or an input.
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "neurons/neuron_group.hpp"
#include "network/synapse_store.hpp"

namespace nvsyn {

struct Population {
  std::string name;
  std::unique_ptr<NeuronGroup> neurons;
  std::uint32_t size() const { return neurons->size(); }
};

// Spike-emitting groups: populations 0..P-1 first, then inputs P..P+I-1.
struct GroupRef {
  bool is_input = false;
  std::uint32_t index = 0;  // population index or input index
};

struct Pathway {
  std::string name;
  std::string from, to;
  GroupRef source;
  std::uint32_t target = 0;  // population index
  Receptor receptor = Receptor::excitatory;
  std::string wiring;
  SynapseStore synapses;
};

struct Network {
  std::vector<Population> populations;
  std::vector<Pathway> pathways;
  double min_delay = 0.0;  // s, over all synapses (the window length)
  double max_delay = 0.0;  // s

  std::size_t synapse_count() const {
    std::size_t n = 0;
    for (const auto& p : pathways) n += p.synapses.size();
    return n;
  }
  std::size_t neuron_count() const {
    std::size_t n = 0;
    for (const auto& p : populations) n += p.size();
    return n;
  }
};

}  // namespace nvsyn
