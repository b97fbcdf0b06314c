#include "neurons/lif.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <fmt/format.h>

#include "core/error.hpp"
#include "core/run_failure.hpp"

namespace nvsyn {
namespace {

// ln(a / b) for positive a, b: accurate when a and b are close (log1p of their
// exactly computed relative difference) and free of overflow when they are far apart.
double log_ratio(double a, double b) {
  const double ratio = a / b;
  if (ratio > 0.5 && ratio < 2.0) return std::log1p((a - b) / b);
  if (ratio > 0.0 && std::isfinite(ratio)) return std::log(ratio);
  return std::log(a) - std::log(b);
}

}  // namespace

LifParameters LifParameters::from_table(const ParamTable& t) {
  LifParameters p;
  p.tau_m = t.quantity_or("tau_m", QuantityKind::time_constant, p.tau_m);
  p.capacitance = t.quantity_or("capacitance", QuantityKind::capacitance, p.capacitance);
  p.v_rest = t.quantity_or("v_rest", QuantityKind::voltage, p.v_rest);
  p.v_threshold = t.quantity_or("v_threshold", QuantityKind::voltage, p.v_threshold);
  p.v_reset = t.quantity_or("v_reset", QuantityKind::voltage, p.v_rest);
  p.refractory = t.quantity_or("refractory", QuantityKind::time_constant, p.refractory);
  p.tau_exc = t.quantity_or("tau_exc", QuantityKind::time_constant, p.tau_exc);
  p.tau_inh = t.quantity_or("tau_inh", QuantityKind::time_constant, p.tau_inh);
  p.bias = t.quantity_or("bias", QuantityKind::current, p.bias);
  p.threshold_step = t.quantity_or("threshold_step", QuantityKind::voltage, 0.0);
  p.tau_threshold = t.quantity_or("tau_threshold", QuantityKind::time_constant, p.tau_threshold);
  if (p.threshold_step < 0) throw t.error("threshold_step", "must not be negative");
  if (!(p.tau_threshold > 0)) throw t.error("tau_threshold", "must be positive");
  p.v_init = t.has("v_init") ? read_distribution(t, "v_init", QuantityKind::voltage)
                             : Distribution::constant(p.v_rest);

  auto positive = [&](const char* key, double v, Dimension dim) {
    if (!(v > 0)) throw t.error(key, fmt::format("must be positive, got {}", format_quantity(v, dim)));
  };
  positive("tau_m", p.tau_m, Dimension::time);
  positive("capacitance", p.capacitance, Dimension::capacitance);
  positive("tau_exc", p.tau_exc, Dimension::time);
  positive("tau_inh", p.tau_inh, Dimension::time);
  if (p.refractory < 0) throw t.error("refractory", "must not be negative");
  if (!(p.v_threshold > p.v_reset))
    throw t.error(t.has("v_threshold") ? "v_threshold" : "v_reset",
                  fmt::format("v_threshold ({}) must lie above v_reset ({})",
                              format_quantity(p.v_threshold, Dimension::voltage),
                              format_quantity(p.v_reset, Dimension::voltage)));
  if (p.v_init.max_value() >= p.v_threshold)
    throw t.error("v_init", "initial potentials must lie below v_threshold");
  return p;
}

// ---------------------------------------------------------------- trajectory

LifKernelShape::LifKernelShape(const LifParameters& p) {
  const double taus[2] = {p.tau_exc, p.tau_inh};
  for (int c = 0; c < 2; ++c) {
    const double d = 1.0 / taus[c] - 1.0 / p.tau_m;
    gap[c] = std::abs(d);
    slow_tau[c] = d > 0 ? p.tau_m : taus[c];
    peak_s[c] = d == 0.0 ? p.tau_m : log_ratio(p.tau_m, taus[c]) / d;
  }
}

LifTrajectory::LifTrajectory(const LifParameters& p, const LifState& start, double drive, double theta)
    : LifTrajectory(p, LifKernelShape(p), start, drive, theta) {}

LifTrajectory::LifTrajectory(const LifParameters& p, const LifKernelShape& shape, const LifState& start,
                             double drive, double theta)
    : p_(p), start_(start), drive_(drive), theta_(theta), v_inf_(p.v_rest + p.resistance() * drive) {
  for (int c = 0; c < 2; ++c) {
    gap_[c] = shape.gap[c];
    slow_tau_[c] = shape.slow_tau[c];
    peak_s_[c] = shape.peak_s[c];
  }
}

double LifTrajectory::kernel(int c, double s) const {
  // K = e^{-s/tau_slow} (1 - e^{-s |d|}) / |d|: the first factor is at most 1 and
  // the second lies in [0, s], so no intermediate overflows for any s >= 0.
  // (Written as e^{-s/tau_m} (1 - e^{-s d}) / d, the second factor grows like
  // e^{s |d|} when tau_m < tau_x and overflows after s |d| > 709, giving inf * 0.)
  const double gap = gap_[c];
  const double shape = gap == 0.0 ? s : -std::expm1(-s * gap) / gap;
  return std::exp(-s / slow_tau_[c]) * shape;
}

double LifTrajectory::v_at(double s) const {
  const double em = std::exp(-s / p_.tau_m);
  return v_inf_ + (start_.v - v_inf_) * em + (start_.i_exc * kernel(0, s) + start_.i_inh * kernel(1, s)) / p_.capacitance;
}

double LifTrajectory::margin_at(double s) const {
  return theta_ == 0.0 ? v_at(s) : v_at(s) - theta_ * std::exp(-s / p_.tau_threshold);
}

LifState LifTrajectory::state_at(double s) const {
  return {v_at(s), start_.i_exc * std::exp(-s / p_.tau_exc), start_.i_inh * std::exp(-s / p_.tau_inh)};
}

double LifTrajectory::v_upper_bound(double a, double b) const {
  // Constant-drive part: monotone in s, so its maximum is at an end.
  const double v_a = v_inf_ + (start_.v - v_inf_) * std::exp(-a / p_.tau_m);
  const double v_b = v_inf_ + (start_.v - v_inf_) * std::exp(-b / p_.tau_m);
  double bound = std::max(v_a, v_b);
  const double currents[2] = {start_.i_exc, start_.i_inh};
  for (int c = 0; c < 2; ++c) {
    if (currents[c] == 0.0) continue;
    // K >= 0 is unimodal: its maximum on [a, b] is at the clamped peak,
    // its minimum at an end.
    const double k = currents[c] > 0 ? kernel(c, std::clamp(peak_s_[c], a, b))
                                     : std::min(kernel(c, a), kernel(c, b));
    bound += currents[c] * k / p_.capacitance;
  }
  // -theta e^{-s/tau} rises towards 0: its largest value on [a, b] is at b.
  if (theta_ != 0.0) bound -= theta_ * std::exp(-b / p_.tau_threshold);
  return bound;
}

std::optional<double> LifTrajectory::first_crossing(double threshold, double horizon) const {
  // Width below which an interval that brackets a crossing is refined directly;
  // two separate crossings closer than this cannot occur for physical time constants.
  constexpr double kIsolate = 1e-7;
  // Width below which a non-bracketing interval is given up as a numerical graze.
  constexpr double kGraze = 1e-13;
  struct Interval { double a, b; };
  std::array<Interval, 256> stack;
  std::size_t top = 0;
  stack[top++] = {0.0, horizon};
  while (top > 0) {
    const Interval iv = stack[--top];
    // Written so that a NaN bound also drops the interval: a non-finite state must
    // not make the search split intervals down to kGraze everywhere (it is reported
    // by LifBank::check_finite instead).
    if (!(v_upper_bound(iv.a, iv.b) >= threshold)) continue;
    const double width = iv.b - iv.a;
    if (margin_at(iv.b) >= threshold && width <= kIsolate) {
      // Refine the bracket (V(a) < threshold <= V(b)) by bisection to full precision.
      double lo = iv.a, hi = iv.b;
      for (int k = 0; k < 80; ++k) {
        const double mid = 0.5 * (lo + hi);
        if (mid <= lo || mid >= hi) break;
        (margin_at(mid) >= threshold ? hi : lo) = mid;
      }
      return hi;
    }
    if (width <= kGraze || top + 2 > stack.size()) continue;
    const double mid = 0.5 * (iv.a + iv.b);
    // Push the right half first so the left half (earlier times) is examined first.
    stack[top++] = {mid, iv.b};
    stack[top++] = {iv.a, mid};
  }
  return std::nullopt;
}

// ---------------------------------------------------------------- group

LifBank::LifBank(std::uint32_t size, LifParameters params, std::uint64_t seed, std::uint32_t population_id)
    : p_(std::move(params)),
      shape_(p_),
      v_(size),
      i_exc_(size, 0.0),
      i_inh_(size, 0.0),
      i_injected_(size, 0.0),
      t_last_(size, 0.0),
      refractory_until_(size, -1.0),
      theta_(size, 0.0),
      wake_(size, 0.0) {
  const LifTrajectory unit(p_, shape_, {0.0, 0.0, 0.0}, 0.0);
  kernel_peak_[0] = unit.kernel_peak(0);
  kernel_peak_[1] = unit.kernel_peak(1);
  for (std::uint32_t n = 0; n < size; ++n) {
    RandomStream rng(seed, StreamPurpose::initial_state, (std::uint64_t{population_id} << 32) | n);
    v_[n] = p_.v_init.draw(rng);
    wake_[n] = predict_wake(n);
  }
}

void LifBank::advance(std::uint32_t n, double t) {
  double s = t - t_last_[n];
  if (!(s > 0)) return;
  if (theta_[n] != 0.0) theta_[n] *= std::exp(-s / p_.tau_threshold);
  if (t_last_[n] < refractory_until_[n]) {
    // Held at reset: only the synaptic currents decay.
    const double held = std::min(t, refractory_until_[n]) - t_last_[n];
    i_exc_[n] *= std::exp(-held / p_.tau_exc);
    i_inh_[n] *= std::exp(-held / p_.tau_inh);
    v_[n] = p_.v_reset;
    t_last_[n] += held;
    s = t - t_last_[n];
    if (!(s > 0)) {
      t_last_[n] = t;
      return;
    }
  }
  LifTrajectory traj(p_, shape_, {v_[n], i_exc_[n], i_inh_[n]}, p_.bias + i_injected_[n]);
  const LifState next = traj.state_at(s);
  v_[n] = next.v;
  i_exc_[n] = next.i_exc;
  i_inh_[n] = next.i_inh;
  t_last_[n] = t;
}

double LifBank::cheap_upper_bound(std::uint32_t n) const {
  // V(s) <= max(V_0, V_inf) + sum over positive currents of (I_x / C) max K_x:
  // the drive term moves monotonically from V_0 to V_inf, K_x >= 0 peaks at kernel_peak_,
  // and negative currents only lower V. During refractoriness V_0 is v_reset.
  const double v0 = t_last_[n] < refractory_until_[n] ? p_.v_reset : v_[n];
  const double v_inf = p_.v_rest + p_.resistance() * (p_.bias + i_injected_[n]);
  return std::max(v0, v_inf) +
         (std::max(i_exc_[n], 0.0) * kernel_peak_[0] + std::max(i_inh_[n], 0.0) * kernel_peak_[1]) / p_.capacitance;
}

void LifBank::check_finite(std::uint32_t n) const {
  // A NaN or infinity in any term makes the sum non-finite, so one test per neuron
  // visit covers all five variables (the units do not matter for this test). A
  // non-finite sum of finite values (each near 1e308) is sorted out by the slow path.
  if (std::isfinite(v_[n] + i_exc_[n] + i_inh_[n] + theta_[n] + i_injected_[n])) [[likely]] return;
  report_non_finite(n);
}

void LifBank::report_non_finite(std::uint32_t n) const {
  const std::string where = fmt::format("neuron {}", n);
  if (!std::isfinite(v_[n])) throw RunFailure(where, not_finite("membrane potential v", v_[n], "V"), t_last_[n]);
  if (!std::isfinite(i_exc_[n]))
    throw RunFailure(where, not_finite("excitatory current i_exc", i_exc_[n], "A"), t_last_[n]);
  if (!std::isfinite(i_inh_[n]))
    throw RunFailure(where, not_finite("inhibitory current i_inh", i_inh_[n], "A"), t_last_[n]);
  if (!std::isfinite(theta_[n]))
    throw RunFailure(where, not_finite("adaptive threshold theta", theta_[n], "V"), t_last_[n]);
  if (!std::isfinite(i_injected_[n]))
    throw RunFailure(where, not_finite("injected current", i_injected_[n], "A"), t_last_[n]);
}

void LifBank::fire_until(std::uint32_t n, double t_limit, std::vector<double>& spikes, SpikeHooks& hooks) {
  for (;;) {
    const double bound = cheap_upper_bound(n);
    if (bound < p_.v_threshold) return;
    if (!std::isfinite(bound)) {
      // A non-finite state, or currents so large that V leaves the range of a double:
      // either way the crossing search below would work on NaN and never settle.
      check_finite(n);
      throw RunFailure(fmt::format("neuron {}", n),
                       fmt::format("the membrane potential overflows: the synaptic currents i_exc = {} A, i_inh = {} A "
                                   "drive it beyond the range of a double",
                                   i_exc_[n], i_inh_[n]),
                       t_last_[n]);
    }
    // The wake-up bound rules out a crossing before t_limit with one log and no
    // search; what it cannot rule out goes to the exact search below.
    if (predict_wake(n) >= t_limit) return;
    if (t_last_[n] < refractory_until_[n]) {
      if (refractory_until_[n] >= t_limit) return;
      advance(n, refractory_until_[n]);
    }
    const double horizon = t_limit - t_last_[n];
    if (!(horizon > 0)) return;
    LifTrajectory traj(p_, shape_, {v_[n], i_exc_[n], i_inh_[n]}, p_.bias + i_injected_[n], theta_[n]);
    const auto crossing = traj.first_crossing(p_.v_threshold, horizon);
    if (!crossing) return;
    const double t_spike = t_last_[n] + *crossing;
    if (!std::isfinite(t_spike))
      throw RunFailure(fmt::format("neuron {}", n), fmt::format("the spike time {} s is not finite", t_spike),
                       t_last_[n]);
    const LifState at = traj.state_at(*crossing);
    spikes.push_back(t_spike);
    v_[n] = p_.v_reset;
    i_exc_[n] = at.i_exc;
    i_inh_[n] = at.i_inh;
    t_last_[n] = t_spike;
    refractory_until_[n] = t_spike + p_.refractory;
    if (p_.threshold_step > 0)
      theta_[n] = theta_[n] * std::exp(-*crossing / p_.tau_threshold) + p_.threshold_step;
    hooks.on_spike(n, t_spike);
  }
}

void LifBank::process(std::uint32_t n, std::span<const NeuronInput> inputs, double t_end,
                       std::vector<double>& spikes, std::span<double> samples, SpikeHooks& hooks) {
  // The wake-up time stored after the last visit stays a valid lower bound while the
  // neuron only evolves freely (advance follows the same trajectory); an input that
  // changes the state, or a search that may have fired, makes it unknown (-inf).
  // While it is known, the crossing search before an input is skipped without any
  // maths-library call.
  constexpr double kUnknown = -std::numeric_limits<double>::infinity();
  double known_wake = wake_[n];
  for (const NeuronInput& in : inputs) {
    if (known_wake < in.time) {
      fire_until(n, in.time, spikes, hooks);
      known_wake = kUnknown;
    }
    advance(n, in.time);
    switch (in.kind) {
      case InputKind::synaptic:
        (in.receptor == Receptor::excitatory ? i_exc_[n] : i_inh_[n]) += hooks.synaptic_amount(n, in);
        known_wake = kUnknown;
        break;
      case InputKind::current_change:
        i_injected_[n] += in.amount;
        known_wake = kUnknown;
        break;
      case InputKind::sample:
        samples[in.slot * 4 + 0] = v_[n];
        samples[in.slot * 4 + 1] = i_exc_[n];
        samples[in.slot * 4 + 2] = i_inh_[n];
        samples[in.slot * 4 + 3] = p_.v_threshold + theta_[n];
        break;
    }
  }
  if (known_wake < t_end) fire_until(n, t_end, spikes, hooks);
  check_finite(n);
  // No crossing lies before t_end. If the wake-up bound from the state at t_last
  // still falls before t_end, move the state to t_end (exact) so that the next
  // prediction starts there and the kernel does not wake the neuron again at once.
  wake_[n] = predict_wake(n);
  if (wake_[n] < t_end) {
    advance(n, t_end);
    check_finite(n);
    wake_[n] = predict_wake(n);
  }
}

double LifBank::predict_wake(std::uint32_t n) const {
  const bool held = t_last_[n] < refractory_until_[n];
  const double t0 = held ? refractory_until_[n] : t_last_[n];
  const double v0 = held ? p_.v_reset : v_[n];
  const double v_inf = p_.v_rest + p_.resistance() * (p_.bias + i_injected_[n]);
  // Positive currents only decay (also while held), so their peaks bound their
  // contribution at every later time; the same terms as cheap_upper_bound.
  const double lift =
      (std::max(i_exc_[n], 0.0) * kernel_peak_[0] + std::max(i_inh_[n], 0.0) * kernel_peak_[1]) / p_.capacitance;
  const double threshold = p_.v_threshold;
  // A non-finite state is visited at once so that process() reports it.
  if (!std::isfinite(v0 + v_inf + lift + t0)) return t_last_[n];
  if (v0 + lift >= threshold) return t0;
  if (v_inf + lift < threshold) return std::numeric_limits<double>::infinity();
  // Here v0 < v_inf. The bound v_inf + lift - (v_inf - v0) e^{-s/tau_m} reaches
  // threshold at s = tau_m ln((v_inf - v0) / (v_inf + lift - threshold)). Rounding
  // of these differences, of the margin evaluated by the crossing search and of
  // the log is covered by a slack of many ulps of the voltages involved, which
  // only makes s smaller (an earlier, still valid wake-up).
  const double slack = 64 * std::numeric_limits<double>::epsilon() *
                       (std::abs(v_inf) + std::abs(v0) + std::abs(lift) + std::abs(threshold));
  const double rise = (v_inf - v0) - slack;
  const double room = (v_inf + lift - threshold) + slack;
  if (!(rise > room)) return t0;
  const double s = p_.tau_m * std::log(rise / room) * (1.0 - 1e-12);
  // t0 + s rounds by at most half an ulp; taking 2^-51 of the sum off moves it at
  // least one ulp down, below the exact sum (cheaper than nextafter).
  const double sum = t0 + s;
  return sum - std::abs(sum) * 0x1p-51;
}

std::span<const TraceVariable> LifBank::variables() const {
  static constexpr std::array<TraceVariable, 4> kVariables{{
      {"v", Dimension::voltage},
      {"i_exc", Dimension::current},
      {"i_inh", Dimension::current},
      {"threshold", Dimension::voltage},
  }};
  return kVariables;
}

}  // namespace nvsyn
