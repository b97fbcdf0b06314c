#include "plasticity/pair_stdp.hpp"

#include <fmt/format.h>

namespace nvsyn {

PairStdpParameters PairStdpParameters::from_table(const ParamTable& t) {
  PairStdpParameters p;
  p.a_plus = t.number_or("a_plus", QuantityKind::learning_amplitude, p.a_plus);
  p.a_minus = t.number_or("a_minus", QuantityKind::learning_amplitude, p.a_minus);
  p.tau_plus = t.quantity_or("tau_plus", QuantityKind::time_constant, p.tau_plus);
  p.tau_minus = t.quantity_or("tau_minus", QuantityKind::time_constant, p.tau_minus);
  p.w_max = t.quantity("w_max", QuantityKind::weight_scale);
  const std::string form = t.text_or("form", "additive");
  if (form == "additive") p.multiplicative = false;
  else if (form == "multiplicative") p.multiplicative = true;
  else throw t.error("form", fmt::format("unknown form '{}'; expected additive or multiplicative", form));
  const std::string pairing = t.text_or("pairing", "all_to_all");
  if (pairing == "all_to_all") p.nearest = false;
  else if (pairing == "nearest") p.nearest = true;
  else throw t.error("pairing", fmt::format("unknown pairing '{}'; expected all_to_all or nearest", pairing));
  if (p.a_plus < 0) throw t.error("a_plus", "must not be negative");
  if (p.a_minus < 0) throw t.error("a_minus", "must not be negative (it is the size of depression)");
  if (!(p.tau_plus > 0)) throw t.error("tau_plus", "must be positive");
  if (!(p.tau_minus > 0)) throw t.error("tau_minus", "must be positive");
  if (!(p.w_max > 0)) throw t.error("w_max", "must be positive");
  return p;
}

PairStdp::PairStdp(const PairStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons)
    : p_(p), x_(synapses, 0.0), x_time_(synapses, 0.0), y_(post_neurons, 0.0), y_time_(post_neurons, 0.0) {
  w_max_ = p.w_max;
}

double PairStdp::depression_drive(std::uint32_t post, double t) const {
  return decayed(y_[post], t - y_time_[post], p_.tau_minus);
}

double PairStdp::potentiation_drive(std::uint64_t k, double t) const {
  return decayed(x_[k], t - x_time_[k], p_.tau_plus);
}

void PairStdp::record_pre(std::uint64_t k, double t) {
  x_[k] = p_.nearest ? 1.0 : potentiation_drive(k, t) + 1.0;
  x_time_[k] = t;
}

double PairStdp::on_pre(std::uint64_t k, std::uint32_t post, double t, double w) {
  const double scale = p_.multiplicative ? w : p_.w_max;
  const double dw = -p_.a_minus * scale * depression_drive(post, t);
  record_pre(k, t);
  return dw;
}

double PairStdp::on_post(std::uint64_t k, std::uint32_t, double t, double w) {
  const double scale = p_.multiplicative ? p_.w_max - w : p_.w_max;
  return p_.a_plus * scale * potentiation_drive(k, t);
}

void PairStdp::post_spike_end(std::uint32_t post, double t) {
  y_[post] = p_.nearest ? 1.0 : depression_drive(post, t) + 1.0;
  y_time_[post] = t;
}

}  // namespace nvsyn
