#pragma once
// A virtual characterisation bench: the pulse protocol a device engineer runs on
// a wafer, applied to simulated devices.
//
// Protocol, per device (all devices see the same time axis; they are independent):
//   for each cycle c = 0 .. cycles-1:
//     [devices without gradual depression (phase_change): one reset pulse first]
//     up ramp:   read, then `pulses` potentiating pulses, each followed by a read;
//     down ramp: read, then `pulses` depressing pulses, each followed by a read
//                (skipped for devices without gradual depression).
//   Time slots are `pulse_period` apart; a pulse starts its slot and the read comes
//   `ramp_read_delay` later, so each read sees the drift and 1/f read noise of a
//   device programmed that long ago (DeviceArray::read).
// then the drift experiment, after the last cycle:
//   every device is programmed with program-and-verify to each of a few target
//   levels in turn (fractions of the nominal range, from the low state: g_min, or
//   reset_mean for phase_change) and read at each of `read_delays` after programming.
//
// Curves hold the noisy reads (what a bench measures). Statistics are computed
// from them by summarise_characterisation (devices/characterisation_statistics.hpp).
// Same parameters and seed give the same bits (DeviceArray's counter-based streams).
#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "devices/device_parameters.hpp"

namespace nvsyn {

struct CharacterisationProtocol {
  std::uint32_t devices = 100;
  std::uint32_t cycles = 10;
  std::uint32_t pulses = 0;  // per ramp; 0: twice nominal_full_range_pulses
  double pulse_period = 10e-3;    // s between pulses of a ramp
  double ramp_read_delay = 1e-3;  // s from each ramp pulse to its read
  std::vector<double> read_delays{1.0, 10.0, 100.0, 1e3, 1e4};  // s after programming, drift experiment
  std::vector<double> drift_levels{0.25, 0.5, 0.75};             // fractions of the nominal range
  std::uint64_t seed = 1;

  // Throws UserError naming the field (e.g. 'pulses') for the first rule broken.
  // `device` is needed for the size check of the default ramp length.
  void validate(const DeviceParameters& device) const;
  // `pulses`, or its default for `device` when 0.
  std::uint32_t pulses_for(const DeviceParameters& device) const;
};

// Pulses a ramp needs to cross the device's nominal range, by kind:
// linear_levels: levels; soft_bounds: 1/min(alpha_p, alpha_d) (one "time constant"
// of the exponential approach); exponential_saturation: full_range_pulses;
// phase_change: range / (increment at g_min); binary_stochastic: 1/p (the expected
// pulses to switch, for the smaller non-zero p); ideal: 1 (pulses do nothing).
std::uint32_t nominal_full_range_pulses(const DeviceParameters& device);

// The target conductances of the drift experiment (S), one per drift level.
std::vector<double> drift_targets(const DeviceParameters& device, const std::vector<double>& fractions);

struct CharacterisationCurves {
  std::uint32_t devices = 0, cycles = 0, pulses = 0;  // pulses per ramp; pulses + 1 reads
  bool gradual_depression = true;
  // Reads (S) in [device][cycle][pulse number 0..pulses] order: up.size() ==
  // devices * cycles * (pulses + 1). Pulse number 0 is the read before the ramp's
  // first pulse. `down` is empty without gradual depression.
  std::vector<double> up, down;
  std::vector<std::uint8_t> health;  // per device after the ramps (DeviceHealth)

  std::vector<double> read_delays;    // s
  std::vector<double> drift_targets;  // S, per level
  std::vector<double> drift_programmed;           // S, [level][device], programmed, before any drift
  std::vector<std::uint8_t> drift_verify_status;  // [level][device], VerifyStatus
  std::vector<double> drift;                      // S, [level][device][delay], noisy reads

  std::vector<std::uint32_t> pulse_count;  // per device, whole protocol (resets included)
  std::vector<double> energy;              // J per device, whole protocol

  std::size_t reads_per_ramp() const { return std::size_t{pulses} + 1; }
  std::size_t at(std::uint32_t device, std::uint32_t cycle, std::uint32_t pulse) const {
    return (std::size_t{device} * cycles + cycle) * reads_per_ramp() + pulse;
  }
  std::size_t drift_at(std::size_t level, std::uint32_t device, std::size_t delay) const {
    return (level * devices + device) * read_delays.size() + delay;
  }
};

// Called now and then with work done and total work (pulses and reads), for
// progress displays. May be empty.
using BenchProgress = std::function<void(std::uint64_t done, std::uint64_t total)>;

// Runs the protocol. `protocol` must validate (it is validated again here).
CharacterisationCurves run_characterisation(const DeviceParameters& device, const CharacterisationProtocol& protocol,
                                            const BenchProgress& progress = {});

}  // namespace nvsyn
