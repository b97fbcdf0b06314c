#pragma once
// Short-term plasticity of transmission (Tsodyks & Markram, PNAS 94:719, 1997;
// Tsodyks, Pawelzik & Markram, Neural Comput. 10:821, 1998), event form with
// facilitation as in Maass & Markram, Phys. Lett. A 2002 (from memory):
//   the n-th spike transmits  A_n = w * u_n * R_n,   u_1 = U, R_1 = 1,
//   with D the interval to the next spike:
//   u_{n+1} = U + u_n (1 - U) exp(-D / tau_facil)
//   R_{n+1} = 1 + (R_n - u_n R_n - 1) exp(-D / tau_rec)
// tau_facil = 0 means no facilitation (u = U always). The weight w is the absolute
// efficacy; the first spike after a long silence transmits w U.
// State per synapse: u, R and the time of the last spike.
#include <cstdint>
#include <vector>

#include "core/param_table.hpp"

namespace nvsyn {

struct ShortTermPlasticityParameters {
  double u = 0.5;            // U, utilisation of resources by one spike, in (0, 1]
  double tau_rec = 800e-3;   // s, recovery from depression
  double tau_facil = 0.0;    // s, decay of facilitation (0: none)
  static ShortTermPlasticityParameters from_table(const ParamTable& t);
};

class ShortTermPlasticity {
 public:
  ShortTermPlasticity(const ShortTermPlasticityParameters& p, std::size_t synapses);
  // Factor u_n R_n of the spike arriving at synapse k at time t; advances the state.
  double transmit(std::uint64_t k, double t);
  const ShortTermPlasticityParameters& parameters() const { return p_; }
  static constexpr std::size_t bytes_per_synapse() { return 3 * sizeof(double); }

 private:
  ShortTermPlasticityParameters p_;
  std::vector<double> u_, r_, last_;  // last < 0: no spike yet
};

}  // namespace nvsyn
