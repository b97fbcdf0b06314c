#include "plasticity/programming_policy.hpp"

#include <cmath>
#include <fmt/format.h>

namespace nvsyn {

std::string_view rounding_name(Rounding r) {
  switch (r) {
    case Rounding::nearest: return "nearest";
    case Rounding::stochastic: return "stochastic";
    case Rounding::accumulate: return "accumulate";
  }
  return "?";
}

PolicyParameters PolicyParameters::from_table(const ParamTable& t) {
  PolicyParameters p;
  const std::string rounding = t.text_or("rounding", "stochastic");
  if (rounding == "nearest") p.rounding = Rounding::nearest;
  else if (rounding == "stochastic") p.rounding = Rounding::stochastic;
  else if (rounding == "accumulate") p.rounding = Rounding::accumulate;
  else throw t.error("rounding", fmt::format("unknown rounding '{}'; expected nearest, stochastic or accumulate", rounding));
  const std::int64_t max_pulses = t.integer_or("max_pulses", 0);
  if (max_pulses < 0) throw t.error("max_pulses", "must not be negative (0 means no limit)");
  p.max_pulses = static_cast<std::uint32_t>(max_pulses);
  return p;
}

ProgrammingPolicy::ProgrammingPolicy(const PolicyParameters& params, std::size_t synapses, std::uint64_t seed,
                                     std::uint32_t pathway_id)
    : p_(params), seed_(seed), pathway_id_(pathway_id), ledger_(synapses) {
  if (p_.rounding == Rounding::accumulate) accumulator_.assign(synapses, 0.0);
}

UpdateOutcome ProgrammingPolicy::apply(SynapseDevices& synapses, std::size_t k, double dw, double t) {
  UpdateOutcome out;
  out.requested = dw;
  if (synapses.continuous()) {
    const PulseOutcome r = synapses.change_exact(k, dw, t);
    out.realised = r.realised;
    out.route = r.route;
    record(k, out);
    return out;
  }
  double target = dw;
  if (p_.rounding == Rounding::accumulate) {
    accumulator_[k] += dw;
    target = accumulator_[k];
  }
  if (target == 0.0) {
    record(k, out);
    return out;
  }
  const Polarity dir = target > 0 ? Polarity::potentiate : Polarity::depress;
  const double step = synapses.expected_weight_step(k, dir);
  std::uint32_t n = 0;
  if (step > 0.0) {
    const double x = std::abs(target) / step;
    switch (p_.rounding) {
      case Rounding::nearest: n = static_cast<std::uint32_t>(std::round(x)); break;
      case Rounding::accumulate: n = static_cast<std::uint32_t>(std::floor(x)); break;
      case Rounding::stochastic: {
        // The draw for update u of synapse k is fixed by (seed, pathway, k, u).
        RandomStream rng(seed_, StreamPurpose::stochastic_rounding, (std::uint64_t{pathway_id_} << 40) | k);
        rng.seek_block(ledger_.updates[k]);
        const double whole = std::floor(x);
        n = static_cast<std::uint32_t>(whole) + (rng.uniform() < x - whole ? 1u : 0u);
        break;
      }
    }
    if (p_.max_pulses > 0) n = std::min(n, p_.max_pulses);
  }
  if (n > 0) {
    const PulseOutcome r = synapses.pulse(k, dir, n, t);
    out.realised = r.realised;
    out.pulses = r.pulses;
    out.route = r.route;
    out.refreshed = r.refreshed;
    // The accumulator gives back what was programmed: the nominal steps taken.
    if (p_.rounding == Rounding::accumulate) accumulator_[k] -= (dir == Polarity::potentiate ? 1.0 : -1.0) * n * step;
  }
  record(k, out);
  return out;
}

void UpdateLedger::add(std::size_t k, const UpdateOutcome& o) {
  requested[k] += o.requested;
  realised[k] += o.realised;
  ++updates[k];
  ++total_updates;
  total_pulses += o.pulses;
  if (o.route == UpdateRoute::partner) ++routed_partner;
  if (o.requested != 0.0 && o.route == UpdateRoute::none) ++unrealisable;
  sum_requested += o.requested;
  sum_realised += o.realised;
  sum_squared_error += (o.realised - o.requested) * (o.realised - o.requested);
}

}  // namespace nvsyn
