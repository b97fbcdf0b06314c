#pragma once
// The interface between the kernel and a learning rule (the first of the four
// synapse layers of DESIGN.md: rule -> programming policy -> device -> read-out).
//
// A rule holds the state of all synapses of one pathway (structure of arrays) and
// answers, for each event, the *requested* change of the weight magnitude |w| (A).
// The kernel passes the request through the pathway's programming policy and
// devices (or applies it to a floating-point weight, clipped to [0, w_max]).
// Traces decay lazily from the time of their last update: a synapse is touched
// only when a spike of its own arrives or its postsynaptic neuron fires.
//
// Call order at equal times is fixed: the presynaptic spike is transmitted with
// the weight it finds, then on_pre() may change it; at a postsynaptic spike,
// on_post() is called for every incoming synapse (traces as they were just before
// the spike), then post_spike_end() updates the postsynaptic traces.
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <cmath>

#include "core/param_table.hpp"

namespace nvsyn {

class LearningRule {
 public:
  virtual ~LearningRule() = default;
  virtual std::string_view name() const = 0;

  // A presynaptic spike reaches synapse k (onto neuron `post`) at time t; w = present |w|.
  virtual double on_pre(std::uint64_t k, std::uint32_t post, double t, double w) = 0;
  // Neuron `post` fires at t: requested change of its incoming synapse k.
  virtual double on_post(std::uint64_t k, std::uint32_t post, double t, double w) = 0;
  // After all on_post() calls of one postsynaptic spike.
  virtual void post_spike_end(std::uint32_t post, double t) = 0;

  // Reward (neuromodulator) r delivered at t: requested change of synapse k.
  virtual bool uses_reward() const { return false; }
  virtual double on_reward(std::uint64_t /*k*/, double /*t*/, double /*r*/) { return 0.0; }

  // Short-term component added to the transmitted weight (short-term STDP), A.
  virtual bool has_short_term_component() const { return false; }
  virtual double short_term_component(std::uint64_t /*k*/, double /*t*/) const { return 0.0; }

  double w_max() const { return w_max_; }  // A, upper bound of |w| for floating-point weights
  virtual std::size_t bytes_per_synapse() const = 0;
  virtual std::size_t bytes_per_neuron() const = 0;

 protected:
  double w_max_ = 0.0;
};

// Builds the rule named by table["rule"] for a pathway of `synapses` synapses onto
// `post_neurons` neurons. Throws UserError (file, line, key) for bad parameters.
std::unique_ptr<LearningRule> make_learning_rule(const ParamTable& table, std::size_t synapses,
                                                 std::uint32_t post_neurons);

// A trace that decays with time constant tau, stored as (value, time of value).
inline double decayed(double value, double since, double tau) { return value * std::exp(-since / tau); }

}  // namespace nvsyn
