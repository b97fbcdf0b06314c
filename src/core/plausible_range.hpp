#pragma once
// Plausible ranges of the quantities users write, one table for every reader.
//
// A value can be valid (finite, of the right dimension and sign) and still describe
// something no study means: a membrane time constant of 1 fs, a Poisson rate of
// 1 GHz, a delay of 1 fs. Such values do not fail; they make a run crawl, exhaust
// memory or overflow into NaN. So every quantity a user writes (model files, device
// presets, connection lists, weight files, command-line options) is read with a
// QuantityKind, and after unit conversion its magnitude is checked against the
// kind's range:
//   * zero always passes (each model states its own rules for zero and for signs);
//   * otherwise min <= |value| <= max, or the value is implausible;
//   * a non-finite value is always an error, whatever the policy says.
// An implausible value is a UserError that states the range and how to go beyond
// it; a RangePolicy that allows implausible values (model key
// `[simulation] allow_implausible = true`, option `--allow-implausible` of run and
// check) turns the error into a warning instead.
//
// Adding a parameter: pick the kind that describes it (or add a row to the table in
// plausible_range.cpp, with the reason for its bounds) and pass it to the
// ParamTable accessor; there is no accessor without a kind.
#include <memory>
#include <set>
#include <span>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "core/error.hpp"
#include "core/units.hpp"

namespace nvsyn {

enum class QuantityKind {
  time_constant,      // tau_m, synaptic, threshold, learning and short-term time constants, refractory
  delay,              // synaptic delays
  duration,           // simulated model time
  time_point,         // times of events within a run: spikes, steps, rewards, start/stop
  interval,           // sampling and maintenance intervals
  capacitance,        // membrane capacitance
  rate,               // spike rates of inputs
  bandwidth,          // read-out bandwidth of devices
  current,            // weights, injected currents, bias
  weight_scale,       // w_max, weight_max, normalise_total: the largest weight of a synapse
  voltage,            // membrane potentials, thresholds
  gain,               // weight per siemens of conductance
  conductance,        // device conductances and their spreads
  energy,             // programming energy per pulse
  learning_amplitude, // STDP amplitudes (in units of w_max per spike pair)
  learning_rate,      // reward-modulated learning rate
  reward,             // size of a reward
  spread,             // relative noise and variability, sigma of a lognormal
  pulse_count,        // device pulses: full range, saturation, endurance
  fraction,           // probabilities and fractions: bounded by each model's own rule
  verify_attempts,    // program-and-verify attempts per write
  pulses_per_update,  // pulse limit per weight update
  update_count,       // updates counted before switching device
};

struct PlausibleRange {
  QuantityKind kind;
  std::string_view name;       // "time constant"
  Dimension dimension;
  double min;                  // smallest plausible |value| in SI units; 0: no lower bound
  double max;                  // largest plausible |value| in SI units
  std::string_view used_for;   // the keys and options of this kind
  std::string_view why;        // what goes wrong outside the range
};

// Every kind's row, in the order of QuantityKind.
std::span<const PlausibleRange> plausible_ranges();
const PlausibleRange& plausible_range(QuantityKind kind);

// Zero, or min <= |value| <= max. False for non-finite values.
bool is_plausible(double value_si, QuantityKind kind);

// "1 us to 31.7 yr", "up to 10" for messages and documentation.
std::string describe_range(QuantityKind kind);

// How out-of-range values are treated while one model (and every file it names)
// is read: refused (the default), or accepted with a warning. Shared by all the
// model's ParamTables; the CLI prints the warnings after reading.
class RangePolicy {
 public:
  // `override_hint` tells the user how to go beyond a range in this context, e.g.
  // "set allow_implausible = true in [simulation] or pass --allow-implausible".
  explicit RangePolicy(std::string override_hint = {}, bool allow_implausible = false)
      : hint_(std::move(override_hint)), allow_(allow_implausible) {}

  void allow_implausible(bool allow) { allow_ = allow; }
  bool allows_implausible() const { return allow_; }
  const std::string& override_hint() const { return hint_; }

  // Warnings about implausible values accepted so far, each once, in reading order
  // ("file:line:col: warning: 'key': ..."), at most kMaxWarnings of them; the rest
  // (a long connection list of implausible delays) are only counted.
  static constexpr std::size_t kMaxWarnings = 20;
  const std::vector<std::string>& warnings() const { return warnings_; }
  std::size_t warnings_not_kept() const { return not_kept_; }
  void warn(std::string text);

 private:
  std::string hint_;
  bool allow_ = false;
  std::vector<std::string> warnings_;
  std::set<std::string> seen_;
  std::size_t not_kept_ = 0;
};

// The check every reader applies after unit conversion. `as_written` is the value as
// the user wrote it ("1 fs"), for the message; `context` ("population 'exc'") is
// appended to it. Throws UserError at `where`/`key` for a non-finite value, and for
// an implausible one unless `policy` allows implausible values (then it warns).
// A null policy refuses, without an override hint.
void check_plausible(double value_si, QuantityKind kind, std::string_view as_written, const SourcePosition& where,
                     const std::string& key, const std::string& context, RangePolicy* policy);

}  // namespace nvsyn
