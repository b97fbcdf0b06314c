#pragma once
// Short-term STDP: pair STDP acting on a fast, volatile weight component that
// relaxes back to the long-term weight.
//
// The transmitted weight is |w| = w_long + f, where w_long is the (device-held)
// long-term weight driven by ordinary pair STDP (a_plus, a_minus) and f is a
// short-term component with the same timing windows but its own amplitudes
// (st_a_plus, st_a_minus, in units of w_max) that decays to zero with tau_short:
//   f(t) = f(t_k) exp(-(t - t_k) / tau_short).
// f is held in floating point per synapse (it models a volatile state), so the
// network can follow input that changes within a presentation, e.g. an occluder
// appearing. With st_a_plus = st_a_minus = 0 the rule is exactly pair STDP.
// (Short-term STDP in the sense of STDP-driven short-term facilitation and
// depression, Moraitis et al., 2020; form from memory.)
#include <vector>

#include "plasticity/pair_stdp.hpp"

namespace nvsyn {

struct ShortTermStdpParameters {
  PairStdpParameters pair;
  double st_a_plus = 0.05, st_a_minus = 0.05;
  double tau_short = 100e-3;  // s
  static ShortTermStdpParameters from_table(const ParamTable& t);
};

class ShortTermStdp final : public LearningRule {
 public:
  ShortTermStdp(const ShortTermStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons);
  std::string_view name() const override { return "short_term_stdp"; }
  double on_pre(std::uint64_t k, std::uint32_t post, double t, double w) override;
  double on_post(std::uint64_t k, std::uint32_t post, double t, double w) override;
  void post_spike_end(std::uint32_t post, double t) override { pair_.post_spike_end(post, t); }
  bool has_short_term_component() const override { return true; }
  double short_term_component(std::uint64_t k, double t) const override;
  std::size_t bytes_per_synapse() const override { return pair_.bytes_per_synapse() + 2 * sizeof(double); }
  std::size_t bytes_per_neuron() const override { return pair_.bytes_per_neuron(); }

 private:
  ShortTermStdpParameters p_;
  PairStdp pair_;
  std::vector<double> f_, f_time_;
};

}  // namespace nvsyn
