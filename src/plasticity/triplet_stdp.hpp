#pragma once
// Triplet STDP (Pfister & Gerstner, J. Neurosci. 26:9673, 2006).
//
// Presynaptic traces r1 (tau_plus) and r2 (tau_x) per synapse, postsynaptic traces
// o1 (tau_minus) and o2 (tau_y) per neuron. In units of w_max:
//   presynaptic spike:  dw = -o1(t) [A2- + A3- r2(t-)],  then r1, r2 updated
//   postsynaptic spike: dw = +r1(t) [A2+ + A3+ o2(t-)],  then o1, o2 updated
// "all_to_all": traces += 1; "nearest": traces = 1 (nearest-spike interaction).
// The minimal model sets A2+ = A3- = 0. Parameters: a2_plus, a3_plus, a2_minus,
// a3_minus (dimensionless), tau_plus, tau_minus, tau_x, tau_y (time), w_max
// (current), pairing = all_to_all | nearest.
#include <vector>

#include "plasticity/learning_rule.hpp"

namespace nvsyn {

struct TripletStdpParameters {
  double a2_plus = 5e-10, a3_plus = 6.2e-3, a2_minus = 7e-3, a3_minus = 2.3e-4;
  double tau_plus = 16.8e-3, tau_minus = 33.7e-3, tau_x = 101e-3, tau_y = 125e-3;  // s
  double w_max = 1e-10;                                                             // A
  bool nearest = false;
  static TripletStdpParameters from_table(const ParamTable& t);
};

class TripletStdp final : public LearningRule {
 public:
  TripletStdp(const TripletStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons);
  std::string_view name() const override { return "triplet_stdp"; }
  double on_pre(std::uint64_t k, std::uint32_t post, double t, double w) override;
  double on_post(std::uint64_t k, std::uint32_t post, double t, double w) override;
  void post_spike_end(std::uint32_t post, double t) override;
  std::size_t bytes_per_synapse() const override { return 3 * sizeof(double); }
  std::size_t bytes_per_neuron() const override { return 3 * sizeof(double); }

 private:
  TripletStdpParameters p_;
  std::vector<double> r1_, r2_, r_time_;  // per synapse
  std::vector<double> o1_, o2_, o_time_;  // per postsynaptic neuron
};

}  // namespace nvsyn
