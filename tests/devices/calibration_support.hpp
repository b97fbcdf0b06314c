#pragma once
// Measured-looking pulse data made by nvsyn's own DeviceArray: the generative model that
// `nvsyn fit-device` calibrates. Each cycle is a potentiation ramp then (optionally) a
// depression ramp, each read before its first pulse (pulse 0) and after every pulse.
#include <cmath>
#include <vector>

#include "devices/device_array.hpp"
#include "devices/pulse_data.hpp"

namespace nvsyn::test {

struct Protocol {
  std::uint32_t devices = 6, cycles = 5, pulses = 80;
  bool depress = true;
  bool reset_each_cycle = false;  // phase-change: a reset starts every cycle
  bool noisy_reads = false;       // read with the preset's read noise (DeviceArray::read)
  // Drift series: after the last pulse of each potentiation ramp, reads at these
  // multiples of drift_t0 (every other read happens at drift_t0 exactly, before drift).
  std::vector<double> drift_reads{};
  std::uint64_t seed = 1;
};

inline PulseData device_data(const DeviceParameters& p, const Protocol& protocol) {
  DeviceArray array(p, protocol.devices, protocol.seed, 0);
  PulseData data;
  data.file = "generated.csv";
  data.has_read_time = !protocol.drift_reads.empty();
  double t = 0.0;
  int row = 1;
  for (std::uint32_t d = 0; d < protocol.devices; ++d) {
    for (std::uint32_t c = 0; c < protocol.cycles; ++c) {
      if (protocol.reset_each_cycle) array.reset(d, t);
      for (Polarity pol : {Polarity::potentiate, Polarity::depress}) {
        if (pol == Polarity::depress && !protocol.depress) continue;
        for (std::uint32_t n = 0; n <= protocol.pulses; ++n) {
          if (n > 0) array.pulse(d, pol, 1, t);
          const bool series = pol == Polarity::potentiate && n == protocol.pulses && data.has_read_time;
          const std::vector<double> reads = series ? protocol.drift_reads : std::vector<double>{1.0};
          for (double multiple : reads) {
            // Read times count from the device's last programming (a pulse-0 read
            // follows the previous ramp's last pulse or the reset).
            const double since = multiple * p.drift_t0;
            const double at = array.programmed_at(d) + since;
            PulseRecord r;
            r.device = d;
            r.cycle = c;
            r.pulse = n;
            r.polarity = pol;
            r.conductance = protocol.noisy_reads ? array.read(d, at) : array.read_mean(d, at);
            if (data.has_read_time) r.read_time = since;
            r.row = ++row;
            data.records.push_back(r);
          }
          t += 1.0;
        }
      }
    }
  }
  return data;
}

}  // namespace nvsyn::test
