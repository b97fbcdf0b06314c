#pragma once
// A built network: populations of neurons and the pathways between them.
// Spike sources (src/inputs) live beside it in the Simulation; a pathway names
// its source group, which is either a population or an input.
#include <cmath>
#include <cstdint>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "devices/synapse_devices.hpp"
#include "neurons/neuron_bank.hpp"
#include "plasticity/learning_rule.hpp"
#include "plasticity/programming_policy.hpp"
#include "plasticity/short_term_plasticity.hpp"
#include "network/synapse_store.hpp"

namespace nvsyn {

struct Population {
  std::string name;
  std::unique_ptr<NeuronBank> neurons;
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
  std::uint32_t target_size = 0;
  Receptor receptor = Receptor::excitatory;
  std::string wiring;
  SynapseStore synapses;  // weight[] holds the requested (target) weights

  // Device synapses; null when weights are plain floating-point numbers.
  std::unique_ptr<SynapseDevices> devices;
  std::unique_ptr<ProgrammingPolicy> policy;
  std::string device_preset;       // name, or "" when given inline
  std::string device_preset_text;  // full preset file text
  WriteSummary initial_write;      // how well the initial weights were programmed
  std::vector<double> initial_weight;  // A, per synapse, as programmed at t = 0

  // Learning: rule, when it is active, rewards, normalisation.
  std::unique_ptr<LearningRule> rule;
  double learn_from = 0.0;                            // s
  double learn_until = std::numeric_limits<double>::infinity();  // s
  std::vector<std::pair<double, double>> rewards;     // (time s, size), ascending
  double normalise_interval = 0.0;                    // s; 0: off
  double normalise_total = 0.0;                       // A, sum of |w| onto each neuron
  // Incoming synapses of each target neuron (for postsynaptic spikes and normalisation).
  std::vector<std::uint64_t> incoming_begin;          // n_target + 1
  std::vector<std::uint64_t> incoming;                // synapse indices, by target
  UpdateLedger plain_ledger;                          // requested vs realised, floating-point weights
  // Short-term plasticity of transmission (Tsodyks-Markram); null when absent.
  std::unique_ptr<ShortTermPlasticity> short_term;

  bool learning_at(double t) const { return rule && t >= learn_from && t < learn_until; }
  const UpdateLedger& ledger() const { return devices ? policy->ledger() : plain_ledger; }
  // Present |w| of synapse k as a learning rule sees it: the programmed device
  // weight (no drift, no read noise), or the floating-point weight.
  double magnitude(std::uint64_t k) const {
    return devices ? devices->weight_programmed(k) : std::abs(synapses.weight[k]);
  }
  // Effective weight without read noise at time t (for recording): drift plus the
  // short-term component.
  double weight_record(std::uint64_t k, double t) const {
    double w = devices ? devices->weight_mean(k, t) : std::abs(synapses.weight[k]);
    if (rule && rule->has_short_term_component()) w = std::max(0.0, w + rule->short_term_component(k, t));
    return sign() * w;
  }

  double sign() const { return receptor == Receptor::excitatory ? 1.0 : -1.0; }
  // The weight the target neuron sees for synapse k at time t (A).
  double weight_at(std::uint64_t k, double t) const {
    return devices ? sign() * devices->read_weight(k, t) : synapses.weight[k];
  }
};

// Bytes of device and policy state per synapse of a device pathway.
inline std::size_t device_bytes_per_synapse(const Pathway& p) {
  if (!p.devices) return 0;
  return p.devices->devices_per_synapse() * DeviceArray::bytes_per_device() + ProgrammingPolicy::bytes_per_synapse(p.policy->parameters());
}

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
