#include "plasticity/triplet_stdp.hpp"

#include <fmt/format.h>

namespace nvsyn {

TripletStdpParameters TripletStdpParameters::from_table(const ParamTable& t) {
  TripletStdpParameters p;
  p.a2_plus = t.number_or("a2_plus", QuantityKind::learning_amplitude, p.a2_plus);
  p.a3_plus = t.number_or("a3_plus", QuantityKind::learning_amplitude, p.a3_plus);
  p.a2_minus = t.number_or("a2_minus", QuantityKind::learning_amplitude, p.a2_minus);
  p.a3_minus = t.number_or("a3_minus", QuantityKind::learning_amplitude, p.a3_minus);
  p.tau_plus = t.quantity_or("tau_plus", QuantityKind::time_constant, p.tau_plus);
  p.tau_minus = t.quantity_or("tau_minus", QuantityKind::time_constant, p.tau_minus);
  p.tau_x = t.quantity_or("tau_x", QuantityKind::time_constant, p.tau_x);
  p.tau_y = t.quantity_or("tau_y", QuantityKind::time_constant, p.tau_y);
  p.w_max = t.quantity("w_max", QuantityKind::weight_scale);
  const std::string pairing = t.text_or("pairing", "all_to_all");
  if (pairing == "all_to_all") p.nearest = false;
  else if (pairing == "nearest") p.nearest = true;
  else throw t.error("pairing", fmt::format("unknown pairing '{}'; expected all_to_all or nearest", pairing));
  for (const char* key : {"a2_plus", "a3_plus", "a2_minus", "a3_minus"})
    if (t.number_or(key, QuantityKind::learning_amplitude, 0.0) < 0) throw t.error(key, "amplitudes must not be negative");
  for (auto [key, v] : {std::pair{"tau_plus", p.tau_plus}, {"tau_minus", p.tau_minus}, {"tau_x", p.tau_x}, {"tau_y", p.tau_y}})
    if (!(v > 0)) throw t.error(key, "must be positive");
  if (!(p.w_max > 0)) throw t.error("w_max", "must be positive");
  return p;
}

TripletStdp::TripletStdp(const TripletStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons)
    : p_(p),
      r1_(synapses, 0.0), r2_(synapses, 0.0), r_time_(synapses, 0.0),
      o1_(post_neurons, 0.0), o2_(post_neurons, 0.0), o_time_(post_neurons, 0.0) {
  w_max_ = p.w_max;
}

double TripletStdp::on_pre(std::uint64_t k, std::uint32_t post, double t, double) {
  const double o1 = decayed(o1_[post], t - o_time_[post], p_.tau_minus);
  const double since = t - r_time_[k];
  const double r1 = decayed(r1_[k], since, p_.tau_plus);
  const double r2 = decayed(r2_[k], since, p_.tau_x);  // r2(t-): before this spike's increment
  const double dw = -p_.w_max * o1 * (p_.a2_minus + p_.a3_minus * r2);
  r1_[k] = p_.nearest ? 1.0 : r1 + 1.0;
  r2_[k] = p_.nearest ? 1.0 : r2 + 1.0;
  r_time_[k] = t;
  return dw;
}

double TripletStdp::on_post(std::uint64_t k, std::uint32_t post, double t, double) {
  const double r1 = decayed(r1_[k], t - r_time_[k], p_.tau_plus);
  const double o2 = decayed(o2_[post], t - o_time_[post], p_.tau_y);  // o2(t-)
  return p_.w_max * r1 * (p_.a2_plus + p_.a3_plus * o2);
}

void TripletStdp::post_spike_end(std::uint32_t post, double t) {
  const double since = t - o_time_[post];
  const double o1 = decayed(o1_[post], since, p_.tau_minus);
  const double o2 = decayed(o2_[post], since, p_.tau_y);
  o1_[post] = p_.nearest ? 1.0 : o1 + 1.0;
  o2_[post] = p_.nearest ? 1.0 : o2 + 1.0;
  o_time_[post] = t;
}

}  // namespace nvsyn
