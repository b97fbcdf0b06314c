#include "plasticity/reward_stdp.hpp"

namespace nvsyn {

RewardStdpParameters RewardStdpParameters::from_table(const ParamTable& t) {
  RewardStdpParameters p;
  p.pair = PairStdpParameters::from_table(t);
  p.tau_eligibility = t.quantity_or("tau_eligibility", QuantityKind::time_constant, p.tau_eligibility);
  p.learning_rate = t.number_or("learning_rate", QuantityKind::learning_rate, p.learning_rate);
  if (!(p.tau_eligibility > 0)) throw t.error("tau_eligibility", "must be positive");
  if (!(p.learning_rate > 0)) throw t.error("learning_rate", "must be positive");
  return p;
}

RewardStdp::RewardStdp(const RewardStdpParameters& p, std::size_t synapses, std::uint32_t post_neurons)
    : p_(p), pair_(p.pair, synapses, post_neurons), c_(synapses, 0.0), c_time_(synapses, 0.0) {
  w_max_ = p.pair.w_max;
}

double RewardStdp::eligibility(std::uint64_t k, double t) const {
  return decayed(c_[k], t - c_time_[k], p_.tau_eligibility);
}

void RewardStdp::add_eligibility(std::uint64_t k, double t, double dc) {
  c_[k] = eligibility(k, t) + dc;
  c_time_[k] = t;
}

double RewardStdp::on_pre(std::uint64_t k, std::uint32_t post, double t, double w) {
  add_eligibility(k, t, pair_.on_pre(k, post, t, w));
  return 0.0;
}

double RewardStdp::on_post(std::uint64_t k, std::uint32_t post, double t, double w) {
  add_eligibility(k, t, pair_.on_post(k, post, t, w));
  return 0.0;
}

double RewardStdp::on_reward(std::uint64_t k, double t, double r) {
  return p_.learning_rate * r * eligibility(k, t);
}

}  // namespace nvsyn
