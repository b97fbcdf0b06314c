#pragma once
// Reward-modulated STDP, a three-factor rule (Izhikevich, Cereb. Cortex 17:2443,
// 2007; Fremaux & Gerstner, Front. Neural Circuits 9:85, 2016).
//
// Spike pairs do not change the weight; they write the pair-STDP update into an
// eligibility trace c per synapse, which decays with tau_eligibility:
//   c(t) = c(t_k) exp(-(t - t_k) / tau_eligibility),   c += dw_pair at each pair event.
// A reward (neuromodulator pulse) of size r at time t turns eligibility into change:
//   dw = learning_rate * r * c(t)
// i.e. dw/dt = c(t) d(t) with the neuromodulator d(t) a sum of delta pulses.
// Without reward nothing changes. Rewards come from the model file
// (rewards = [["1.2 s", 1.0], ...]) or from the experiment (Simulation::add_reward).
#include <vector>

#include "plasticity/pair_stdp.hpp"

namespace nvsyn {

struct RewardStdpParameters {
  PairStdpParameters pair;
  double tau_eligibility = 1.0;  // s
  double learning_rate = 1.0;    // dimensionless
  static RewardStdpParameters from_table(const ParamTable& t);
};

class RewardStdp final : public LearningRule {
 public:
  RewardStdp(const RewardStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons);
  std::string_view name() const override { return "reward_stdp"; }
  double on_pre(std::uint64_t k, std::uint32_t post, double t, double w) override;
  double on_post(std::uint64_t k, std::uint32_t post, double t, double w) override;
  void post_spike_end(std::uint32_t post, double t) override { pair_.post_spike_end(post, t); }
  bool uses_reward() const override { return true; }
  double on_reward(std::uint64_t k, double t, double r) override;
  double eligibility(std::uint64_t k, double t) const;
  std::size_t bytes_per_synapse() const override { return pair_.bytes_per_synapse() + 2 * sizeof(double); }
  std::size_t bytes_per_neuron() const override { return pair_.bytes_per_neuron(); }

 private:
  void add_eligibility(std::uint64_t k, double t, double dc);
  RewardStdpParameters p_;
  PairStdp pair_;
  std::vector<double> c_, c_time_;
};

}  // namespace nvsyn
