#include "devices/program_verify.hpp"

#include <algorithm>
#include <cmath>

namespace nvsyn {

std::string_view verify_status_name(VerifyStatus s) {
  switch (s) {
    case VerifyStatus::success: return "success";
    case VerifyStatus::out_of_range: return "out_of_range";
    case VerifyStatus::unresponsive: return "unresponsive";
    case VerifyStatus::not_converged: return "not_converged";
  }
  return "?";
}

VerifyResult program_and_verify(DeviceArray& devices, std::size_t d, double target, double t,
                                const VerifyOptions& options) {
  VerifyResult r;
  const DeviceParameters& p = devices.parameters();
  const double low = p.kind == DeviceKind::phase_change ? std::min(p.g_min, p.reset_mean) : p.g_min;
  if (target < low - options.tolerance || target > devices.g_max_of(d) + options.tolerance) {
    r.status = VerifyStatus::out_of_range;
    r.error = devices.programmed(d) - target;
    return r;
  }
  if (devices.continuous()) {
    devices.set_exact(d, target, t);
    r.error = devices.read(d, t) - target;
    r.attempts = 1;
    r.status = std::abs(r.error) <= options.tolerance ? VerifyStatus::success : VerifyStatus::not_converged;
    return r;
  }
  const std::uint32_t pulses_before = devices.pulse_count(d);
  for (r.attempts = 1; r.attempts <= options.max_attempts; ++r.attempts) {
    const double g = devices.read(d, t);
    r.error = g - target;
    if (std::abs(r.error) <= options.tolerance) break;
    const Polarity pol = r.error < 0 ? Polarity::potentiate : Polarity::depress;
    const double step = std::abs(devices.expected_step(d, pol));
    if (step == 0.0) {
      if (pol == Polarity::depress && !p.bidirectional()) {
        devices.reset(d, t);  // overshoot on a set-only device: start again from below
        continue;
      }
      if (!devices.responsive(d)) break;
      devices.pulse(d, pol, 1, t);  // a stochastic device may still switch
      continue;
    }
    const double wanted = std::abs(r.error) / step;
    const auto n = static_cast<std::uint32_t>(
        std::clamp(std::round(wanted), 1.0, static_cast<double>(options.max_pulses_per_attempt)));
    devices.pulse(d, pol, n, t);
  }
  r.pulses = devices.pulse_count(d) - pulses_before;
  if (std::abs(r.error) <= options.tolerance) {
    r.status = VerifyStatus::success;
    r.attempts = std::min(r.attempts, options.max_attempts);
  } else {
    r.status = devices.responsive(d) ? VerifyStatus::not_converged : VerifyStatus::unresponsive;
    r.attempts = options.max_attempts;
  }
  return r;
}

}  // namespace nvsyn
