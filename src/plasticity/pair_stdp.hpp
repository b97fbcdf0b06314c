#pragma once
// Pair-based STDP with exponential windows.
//
//   pre before post by dt > 0:  dw = +a_plus  * F+(w) * exp(-dt / tau_plus)
//   post before pre by dt > 0:  dw = -a_minus * F-(w) * exp(-dt / tau_minus)
// additive ("additive"):                F+ = w_max,         F- = w_max
// weight-dependent ("multiplicative"):  F+ = (w_max - w),   F- = w      (soft bounds)
// Pairing: "all_to_all" sums over all earlier spikes of the other side (traces
// incremented by 1); "nearest" pairs each spike with the most recent spike of the
// other side only (traces reset to 1), the symmetric nearest-neighbour scheme.
// Implemented with a presynaptic trace per synapse (spike arrival times at the
// synapse, so axonal delays count) and a postsynaptic trace per neuron.
// Windows of this form: Bi & Poo, J. Neurosci. 18:10464 (1998); additive rule with
// hard bounds: Song, Miller & Abbott, Nat. Neurosci. 3:919 (2000).
//
// Parameters: a_plus, a_minus (dimensionless), tau_plus, tau_minus (time), w_max
// (current), form = additive | multiplicative, pairing = all_to_all | nearest.
#include <vector>

#include "plasticity/learning_rule.hpp"

namespace nvsyn {

struct PairStdpParameters {
  double a_plus = 0.005, a_minus = 0.00525;
  double tau_plus = 20e-3, tau_minus = 20e-3;  // s
  double w_max = 1e-10;                        // A
  bool multiplicative = false;
  bool nearest = false;
  static PairStdpParameters from_table(const ParamTable& t);
};

class PairStdp : public LearningRule {
 public:
  PairStdp(const PairStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons);
  std::string_view name() const override { return "pair_stdp"; }
  double on_pre(std::uint64_t k, std::uint32_t post, double t, double w) override;
  double on_post(std::uint64_t k, std::uint32_t post, double t, double w) override;
  void post_spike_end(std::uint32_t post, double t) override;
  std::size_t bytes_per_synapse() const override { return 2 * sizeof(double); }
  std::size_t bytes_per_neuron() const override { return 2 * sizeof(double); }

  // The weight-independent part of the update (shared with the derived rules).
  double depression_drive(std::uint32_t post, double t) const;  // y(t)
  double potentiation_drive(std::uint64_t k, double t) const;   // x(t)
  void record_pre(std::uint64_t k, double t);
  const PairStdpParameters& parameters() const { return p_; }

 private:
  PairStdpParameters p_;
  std::vector<double> x_, x_time_;  // presynaptic trace per synapse
  std::vector<double> y_, y_time_;  // postsynaptic trace per neuron
};

}  // namespace nvsyn
