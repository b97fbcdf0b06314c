#include "plasticity/programming_policy.hpp"

#include <cmath>
#include <limits>
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
  const std::int64_t max_pulses = t.integer_or("max_pulses", QuantityKind::pulses_per_update, 0);
  if (max_pulses < 0) throw t.error("max_pulses", "must not be negative (0 means no limit)");
  if (max_pulses > std::numeric_limits<std::uint32_t>::max())
    throw t.error("max_pulses", fmt::format("{} does not fit the 32-bit pulse counter", max_pulses));
  p.max_pulses = static_cast<std::uint32_t>(max_pulses);
  return p;
}

namespace {

// A whole number of pulses as the 32-bit pulse counter holds it (saturating; the
// plain conversion of a larger double is undefined behaviour).
std::uint32_t pulse_count(double whole) {
  constexpr double kMax = std::numeric_limits<std::uint32_t>::max();
  if (!(whole > 0.0)) return 0;
  return whole < kMax ? static_cast<std::uint32_t>(whole) : std::numeric_limits<std::uint32_t>::max();
}

}  // namespace

ProgrammingPolicy::ProgrammingPolicy(const PolicyParameters& params, std::size_t synapses, std::uint64_t seed,
                                     std::uint32_t pathway_id)
    : p_(params), seed_(seed), pathway_id_(pathway_id), ledger_(synapses) {
  if (p_.rounding == Rounding::accumulate) accumulator_.assign(synapses, 0.0);
}

double ProgrammingPolicy::rounding_draw(std::size_t k) const {
  // The draw for update u of synapse k is fixed by (seed, pathway, k, u): the first
  // uniform of block u of the synapse's stream.
  const RandomBlock block = random_block(seed_, StreamPurpose::stochastic_rounding,
                                         (std::uint64_t{pathway_id_} << 40) | k, ledger_.updates[k]);
  return block_uniform(block, 0);
}

bool ProgrammingPolicy::rounds_to_zero(double x_request, double u) const {
  // Most requests of a learning rule are a small fraction of a step. The pulse count
  // is computed from x = min(|request|, headroom) / step <= x_request (the division
  // rounds monotonically), so these tests say "zero" only where the full arithmetic
  // in apply gives zero, and spare it the headroom and the rounding.
  switch (p_.rounding) {
    case Rounding::nearest: return x_request < 0.5;                    // round(x) = 0
    case Rounding::accumulate: return x_request < 1.0;                 // floor(x) = 0
    case Rounding::stochastic: return x_request < 1.0 && u >= x_request;  // floor(x) = 0, u >= x
  }
  return false;
}

UpdateOutcome ProgrammingPolicy::apply(SynapseDevices& synapses, std::size_t k, double dw, double t,
                                       LedgerTotals* totals) {
  UpdateOutcome out;
  out.requested = dw;
  if (synapses.continuous()) {
    const PulseOutcome r = synapses.change_exact(k, dw, t);
    out.realised = r.realised;
    out.route = r.route;
    record(k, out, totals);
    return out;
  }
  double target = dw;
  if (p_.rounding == Rounding::accumulate) {
    accumulator_[k] += dw;
    target = accumulator_[k];
  }
  if (target == 0.0) {
    record(k, out, totals);
    return out;
  }
  const Polarity dir = target > 0 ? Polarity::potentiate : Polarity::depress;
  const double step = synapses.expected_weight_step(k, dir);
  std::uint32_t n = 0;
  // Stochastic rounding's one uniform is drawn first: with it, most requests are
  // settled by one comparison (rounds_to_zero).
  const double u = step > 0.0 && p_.rounding == Rounding::stochastic ? rounding_draw(k) : 0.0;
  if (step > 0.0 && !rounds_to_zero(std::abs(target) / step, u)) {
    // The pulse count is the request over the present step size, a linearisation
    // that only holds while the request fits into what the device can still move:
    // near a soft bound the step shrinks towards zero and a request beyond the bound
    // would ask for billions of pulses (one update then runs for minutes). So the
    // request is first cut to the weight headroom in its direction.
    const double x = std::min(std::abs(target), synapses.weight_headroom(k, dir)) / step;
    switch (p_.rounding) {
      case Rounding::nearest: n = pulse_count(std::round(x)); break;
      case Rounding::accumulate: n = pulse_count(std::floor(x)); break;
      case Rounding::stochastic: {
        const double whole = std::floor(x);
        n = pulse_count(whole + (u < x - whole ? 1.0 : 0.0));
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
  record(k, out, totals);
  return out;
}

void UpdateLedger::add_to_synapse(std::size_t k, const UpdateOutcome& o) {
  requested[k] += o.requested;
  // Most updates realise nothing; skipping the addition of a zero leaves the same
  // bits (the sums start at +0 and a sum of doubles is -0 only if both terms are)
  // and spares touching realised[k], usually a cache miss.
  if (o.realised != 0.0) realised[k] += o.realised;
  ++updates[k];
}

void LedgerTotals::add(const UpdateOutcome& o) {
  if (o.realised != 0.0) sum_realised += o.realised;
  ++updates;
  pulses += o.pulses;
  if (o.route == UpdateRoute::partner) ++routed_partner;
  if (o.requested != 0.0 && o.route == UpdateRoute::none) ++unrealisable;
  sum_requested += o.requested;
  sum_squared_error += (o.realised - o.requested) * (o.realised - o.requested);
}

void LedgerTotals::merge(const LedgerTotals& other) {
  updates += other.updates;
  pulses += other.pulses;
  routed_partner += other.routed_partner;
  unrealisable += other.unrealisable;
  sum_requested += other.sum_requested;
  sum_realised += other.sum_realised;
  sum_squared_error += other.sum_squared_error;
}

}  // namespace nvsyn
