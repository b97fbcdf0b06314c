#pragma once
// Pulse data rearranged for fitting: ramps and the transitions between their
// successive measurements.
//
// Why transitions: every device law in nvsyn is a Markov step law, G' = G + dG(G) with
// noise drawn afresh at each pulse, so a ramp is a random walk. Fitting the law to
// (G before, G after k pulses) pairs leaves residuals that are independent draws of
// that noise; fitting whole ramp trajectories instead would leave residuals that
// accumulate along the ramp, inflating any misfit test and understating uncertainty.
//
// Within a ramp the earliest read of each pulse number is the pulse response; later
// reads of the same pulse (read_time series) are for drift fits only.
#include <cstdint>
#include <vector>

#include "devices/pulse_data.hpp"

namespace nvsyn::calibration {

struct Ramp {
  std::uint32_t device = 0, cycle = 0;
  Polarity polarity = Polarity::potentiate;
  std::vector<std::size_t> points;  // indices into PulseData::records: the earliest read of each pulse
};

struct Transition {
  std::uint32_t device = 0;
  std::size_t device_index = 0;  // position of `device` in TransitionSet::devices
  std::size_t ramp = 0;          // index into TransitionSet::ramps
  Polarity polarity = Polarity::potentiate;
  std::uint32_t pulse_from = 0;
  std::uint32_t pulses = 1;         // pulses between the two reads (>= 1)
  double g_from = 0.0, g_to = 0.0;  // S
  int row = 0;                      // row of the later read
  // The device sits at (or reaches) its extreme observed conductance in the direction
  // of the pulses: a possibly clamped value, left out of noise estimates and runs tests.
  bool at_bound = false;
};

struct TransitionSet {
  std::vector<Ramp> ramps;
  std::vector<Transition> transitions;  // ramp by ramp, in pulse order within each
  std::vector<std::uint32_t> devices;   // distinct device ids, ascending
  std::size_t cycles = 0;               // distinct (device, cycle) pairs

  std::size_t count(Polarity pol, std::uint32_t max_pulses = 0xFFFFFFFFu) const;
};

TransitionSet build_transitions(const PulseData& data);

}  // namespace nvsyn::calibration
