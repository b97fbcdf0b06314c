#include "plasticity/short_term_stdp.hpp"

namespace nvsyn {

ShortTermStdpParameters ShortTermStdpParameters::from_table(const ParamTable& t) {
  ShortTermStdpParameters p;
  p.pair = PairStdpParameters::from_table(t);
  p.st_a_plus = t.number_or("st_a_plus", QuantityKind::learning_amplitude, p.st_a_plus);
  p.st_a_minus = t.number_or("st_a_minus", QuantityKind::learning_amplitude, p.st_a_minus);
  p.tau_short = t.quantity_or("tau_short", QuantityKind::time_constant, p.tau_short);
  if (p.st_a_plus < 0) throw t.error("st_a_plus", "must not be negative");
  if (p.st_a_minus < 0) throw t.error("st_a_minus", "must not be negative");
  if (!(p.tau_short > 0)) throw t.error("tau_short", "must be positive");
  return p;
}

ShortTermStdp::ShortTermStdp(const ShortTermStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons)
    : p_(p), pair_(p.pair, synapses, post_neurons), f_(synapses, 0.0), f_time_(synapses, 0.0) {
  w_max_ = p.pair.w_max;
}

double ShortTermStdp::short_term_component(std::uint64_t k, double t) const {
  return decayed(f_[k], t - f_time_[k], p_.tau_short);
}

double ShortTermStdp::on_pre(std::uint64_t k, std::uint32_t post, double t, double w) {
  const double y = pair_.depression_drive(post, t);
  f_[k] = short_term_component(k, t) - p_.st_a_minus * p_.pair.w_max * y;
  f_time_[k] = t;
  return pair_.on_pre(k, post, t, w);
}

double ShortTermStdp::on_post(std::uint64_t k, std::uint32_t post, double t, double w) {
  const double x = pair_.potentiation_drive(k, t);
  f_[k] = short_term_component(k, t) + p_.st_a_plus * p_.pair.w_max * x;
  f_time_[k] = t;
  return pair_.on_post(k, post, t, w);
}

}  // namespace nvsyn
