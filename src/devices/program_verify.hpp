#pragma once
// Program-and-verify: write a target conductance into one device by alternating
// noisy reads and pulse bursts until the read lies within a tolerance, or the
// attempts run out. Failure is reported, never silent: out-of-range targets,
// devices that do not respond (stuck, worn out) and non-convergence each have
// their own reason. A device that cannot depress gradually (phase-change) is
// reset and approached again from below when it overshoots.
#include <cstdint>
#include <string_view>

#include "devices/device_array.hpp"

namespace nvsyn {

struct VerifyOptions {
  double tolerance = 0.0;             // S, accepted |read - target|
  std::uint32_t max_attempts = 20;    // read-and-pulse rounds
  std::uint32_t max_pulses_per_attempt = 64;
};

enum class VerifyStatus : std::uint8_t { success, out_of_range, unresponsive, not_converged };
std::string_view verify_status_name(VerifyStatus s);

struct VerifyResult {
  VerifyStatus status = VerifyStatus::success;
  std::uint32_t attempts = 0;
  std::uint32_t pulses = 0;
  double error = 0.0;  // S, last read minus target
  bool ok() const { return status == VerifyStatus::success; }
};

VerifyResult program_and_verify(DeviceArray& devices, std::size_t d, double target, double t,
                                const VerifyOptions& options);

}  // namespace nvsyn
