#include "core/plausible_range.hpp"

#include <array>
#include <cmath>
#include <fmt/format.h>
#include <limits>

namespace nvsyn {
namespace {

constexpr double kYear = 365.25 * 86400.0;  // Julian year, as in units.cpp
constexpr double kNoLimit = std::numeric_limits<double>::infinity();

// The bounds are chosen generous enough for every real use we know of (drift studies
// over years, device conductances from pS to mS, input rates up to MHz) and tight
// enough to stop the values that make runs hang or overflow (README, "Limits and
// plausible ranges", lists this table).
constexpr std::array<PlausibleRange, 23> kRanges{{
    {QuantityKind::time_constant, "time constant", Dimension::time, 1e-6, 1e9,
     "tau_m, tau_exc, tau_inh, tau_threshold, refractory, tau_plus, tau_minus, tau_x, tau_y, tau_short, tau_rec, "
     "tau_facil, tau_eligibility, drift_t0",
     "shorter time constants make the dynamics stiff and runs crawl; longer ones overflow derived values such as "
     "R = tau_m / C"},
    {QuantityKind::delay, "delay", Dimension::time, 1e-6, 10.0, "delay (model files and connection lists)",
     "the shortest delay is the kernel's window: below 1 us one second of model time takes over a million windows, "
     "and the event ring grows with the ratio of the longest to the shortest delay"},
    {QuantityKind::duration, "duration", Dimension::time, 1e-6, 1e4 * kYear, "[simulation] duration, --duration",
     "no run can cover more; the run-cost limits apply as well"},
    {QuantityKind::time_point, "time", Dimension::time, 0.0, 1e4 * kYear,
     "start, stop, step and spike times, rewards, snapshots, active_from, active_until, --times, --read-delays",
     "events beyond 10,000 years of model time cannot be reached by any run"},
    {QuantityKind::interval, "interval", Dimension::time, 1e-6, 1e4 * kYear,
     "trace and weight sampling intervals, normalise_interval, refresh_interval",
     "an interval below 1 us takes over a million samples or updates per second of model time"},
    {QuantityKind::capacitance, "capacitance", Dimension::capacitance, 1e-15, 1e-6, "capacitance",
     "membranes and neuron circuits lie between femtofarads and nanofarads; a tinier capacitance makes "
     "R = tau_m / C overflow"},
    {QuantityKind::rate, "rate", Dimension::frequency, 0.0, 1e7, "rate of poisson and regular inputs",
     "above 10 MHz a single source emits over ten million spikes per second of model time"},
    {QuantityKind::bandwidth, "bandwidth", Dimension::frequency, 1e-3, 1e12, "read_bandwidth",
     "read-out bandwidths lie between millihertz and terahertz"},
    {QuantityKind::current, "current", Dimension::current, 0.0, 1e-3,
     "weight (model files, connection lists, weight files), amplitude and steps of current inputs, bias, "
     "--tolerance",
     "above 1 mA one input moves a membrane by kilovolts"},
    {QuantityKind::weight_scale, "weight scale", Dimension::current, 1e-18, 1e-3,
     "w_max, weight_max, normalise_total, --weight-max",
     "the largest weight of a synapse sets device gains and learning steps: above 1 mA one input moves a membrane "
     "by kilovolts; below 1e-18 A the gains derived from it underflow"},
    {QuantityKind::voltage, "voltage", Dimension::voltage, 0.0, 10.0,
     "v_rest, v_threshold, v_reset, v_init, threshold_step",
     "membrane potentials are millivolts; beyond 10 V the model has left physiology and circuits alike"},
    {QuantityKind::gain, "gain", Dimension::voltage, 1e-18, 1e12, "gain, --gain",
     "the weight per siemens that turns weight scales of 1e-18 A to 1 mA into conductances of 1 fS to 1 S"},
    {QuantityKind::conductance, "conductance", Dimension::conductance, 0.0, 1.0,
     "g_min, g_max, reset_mean, reset_sd, increment_mean, increment_sd, verify_tolerance",
     "device conductances span picosiemens to millisiemens; fitted values near zero are fine"},
    {QuantityKind::energy, "energy", Dimension::energy, 0.0, 1e-3, "pulse_energy_low, pulse_energy_high",
     "programming pulses cost attojoules to nanojoules; 1 mJ would melt any device"},
    {QuantityKind::learning_amplitude, "learning amplitude", Dimension::dimensionless, 0.0, 10.0,
     "a_plus, a_minus, a2_plus, a3_plus, a2_minus, a3_minus, st_a_plus, st_a_minus",
     "amplitudes are fractions of w_max per spike pair; far above 1 a single pairing overshoots every bound "
     "and sums of updates overflow"},
    {QuantityKind::learning_rate, "learning rate", Dimension::dimensionless, 0.0, 1e4, "learning_rate",
     "a larger rate moves weights by many times w_max per reward"},
    {QuantityKind::reward, "reward", Dimension::dimensionless, 0.0, 1e6, "sizes in rewards",
     "a larger reward moves weights by many times w_max"},
    {QuantityKind::spread, "spread", Dimension::dimensionless, 0.0, 10.0,
     "programming_noise, read_noise, read_noise_q, d2d_g_max, d2d_step, drift_nu_sd, sigma of lognormal "
     "distributions",
     "relative spreads beyond 1000 % (or exp(10) for a lognormal) draw values that overflow"},
    {QuantityKind::pulse_count, "pulse count", Dimension::dimensionless, 0.0, 1e15,
     "full_range_pulses, saturation_p, saturation_d, endurance",
     "no device survives or needs more than 10^15 pulses"},
    {QuantityKind::fraction, "fraction", Dimension::dimensionless, 0.0, kNoLimit,
     "p, u, p_set, p_reset, stuck_low, stuck_high, alpha_p, alpha_d, drift_nu, refresh_threshold",
     "each model bounds its fractions itself, e.g. probabilities to [0, 1]"},
    {QuantityKind::verify_attempts, "number of verify attempts", Dimension::dimensionless, 1.0, 1e4,
     "verify_attempts", "each attempt is a pulse and a read per synapse while the network is built"},
    {QuantityKind::pulses_per_update, "pulse limit per update", Dimension::dimensionless, 1.0, 1e6, "max_pulses",
     "a single weight update of more pulses stalls learning and cannot be stored"},
    {QuantityKind::update_count, "update count", Dimension::dimensionless, 1.0, 1e9, "counter_limit",
     "the counter is stored in 32 bits"},
}};

// A bound for messages: times above a minute in min/h/d/yr, the rest with SI prefixes.
std::string format_bound(double value, Dimension d) {
  if (d == Dimension::dimensionless) {
    const double exponent = std::round(std::log10(value));
    if (value >= 1e5 && value == std::pow(10.0, exponent)) return fmt::format("10^{:.0f}", exponent);
    return fmt::format("{:g}", value);
  }
  if (d == Dimension::time) return format_time(value);
  // Below the smallest prefix (f), plain powers of ten read better than "0.001 fA".
  if (value < 1e-15) return fmt::format("{:g} {}", value, format_quantity(1.0, d).substr(2));
  return format_quantity(value, d);
}

}  // namespace

std::span<const PlausibleRange> plausible_ranges() { return kRanges; }

const PlausibleRange& plausible_range(QuantityKind kind) {
  const auto& row = kRanges[static_cast<std::size_t>(kind)];
  if (row.kind != kind) throw InternalError("the table of plausible ranges is out of order");
  return row;
}

bool is_plausible(double value_si, QuantityKind kind) {
  if (!std::isfinite(value_si)) return false;
  if (value_si == 0.0) return true;
  const PlausibleRange& r = plausible_range(kind);
  const double magnitude = std::fabs(value_si);
  return magnitude >= r.min && magnitude <= r.max;
}

std::string describe_range(QuantityKind kind) {
  const PlausibleRange& r = plausible_range(kind);
  if (!std::isfinite(r.max)) return "any finite value";
  if (r.min == 0.0) return fmt::format("up to {}", format_bound(r.max, r.dimension));
  return fmt::format("{} to {}", format_bound(r.min, r.dimension), format_bound(r.max, r.dimension));
}

void RangePolicy::warn(std::string text) {
  if (seen_.count(text)) return;
  if (warnings_.size() >= kMaxWarnings) {
    ++not_kept_;
    return;
  }
  seen_.insert(text);
  warnings_.push_back(std::move(text));
}

void check_plausible(double value_si, QuantityKind kind, std::string_view as_written, const SourcePosition& where,
                     const std::string& key, const std::string& context, RangePolicy* policy) {
  const std::string in = context.empty() ? "" : fmt::format(" (in {})", context);
  if (!std::isfinite(value_si))
    throw UserError(where, key, fmt::format("{} is not a finite number in SI units{}", as_written, in));
  if (is_plausible(value_si, kind)) return;
  const PlausibleRange& r = plausible_range(kind);
  const bool vowel = std::string_view("aeiou").find(r.name.front()) != std::string_view::npos;
  const std::string what = fmt::format("{} is outside the plausible range of {} {} ({} in magnitude): {}", as_written,
                                       vowel ? "an" : "a", r.name, describe_range(kind), r.why);
  if (policy && policy->allows_implausible()) {
    // The form of a located error ("file:line:col: error: 'key': ..."), marked as a warning.
    const std::string error_prefix = format_user_error(where, "", "");  // "file:line:col: error: "
    const std::string position = error_prefix.substr(0, error_prefix.size() - std::string_view("error: ").size());
    policy->warn(position + "warning: " + format_user_error({}, key, what + in).substr(std::string_view("error: ").size()) +
                 " (accepted: implausible values are allowed)");
    return;
  }
  const std::string hint = policy && !policy->override_hint().empty() ? "; " + policy->override_hint() : "";
  throw UserError(where, key, what + hint + in);
}

}  // namespace nvsyn
