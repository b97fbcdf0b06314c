#include "plasticity/short_term_plasticity.hpp"

#include <cmath>

namespace nvsyn {

ShortTermPlasticityParameters ShortTermPlasticityParameters::from_table(const ParamTable& t) {
  ShortTermPlasticityParameters p;
  p.u = t.number_or("u", QuantityKind::fraction, p.u);
  p.tau_rec = t.quantity_or("tau_rec", QuantityKind::time_constant, p.tau_rec);
  p.tau_facil = t.quantity_or("tau_facil", QuantityKind::time_constant, p.tau_facil);
  if (!(p.u > 0 && p.u <= 1)) throw t.error("u", "the utilisation U must lie in (0, 1]");
  if (!(p.tau_rec > 0)) throw t.error("tau_rec", "must be positive");
  if (p.tau_facil < 0) throw t.error("tau_facil", "must not be negative (0 turns facilitation off)");
  return p;
}

ShortTermPlasticity::ShortTermPlasticity(const ShortTermPlasticityParameters& p, std::size_t synapses)
    : p_(p), u_(synapses, p.u), r_(synapses, 1.0), last_(synapses, -1.0) {}

double ShortTermPlasticity::transmit(std::uint64_t k, double t) {
  if (last_[k] >= 0.0) {
    const double d = t - last_[k];
    const double u_prev = u_[k], r_prev = r_[k];
    u_[k] = p_.tau_facil > 0 ? p_.u + u_prev * (1.0 - p_.u) * std::exp(-d / p_.tau_facil) : p_.u;
    r_[k] = 1.0 + (r_prev - u_prev * r_prev - 1.0) * std::exp(-d / p_.tau_rec);
  }
  last_[k] = t;
  return u_[k] * r_[k];
}

}  // namespace nvsyn
