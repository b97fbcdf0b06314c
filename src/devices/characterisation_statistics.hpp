#pragma once
// Summary statistics of a characterisation bench run (devices/characterisation.hpp),
// computed from the noisy reads alone, as they would be from a real bench.
//
// Which devices count: a device that is stuck or worn out after the ramps
// (DeviceHealth != working) draws a flat line that would bias every statistic;
// it is left out of all of them and counted in `devices_excluded`.
//
// Definitions (n pulses per ramp; U[d][c][i], D[d][c][i] the reads of device d,
// cycle c, after i pulses of the up and down ramp; a bar is the mean over used
// devices and all cycles, so Ubar and Dbar are the mean curves):
//  * g_high = Ubar[n], the mean conductance at the end of the up ramps;
//    g_low = Dbar[n], at the end of the down ramps (without gradual depression:
//    Ubar[0], just after the reset). window W = g_high - g_low;
//    on_off_ratio = g_high / g_low (+inf when g_low is 0). Soft devices approach
//    their bounds only asymptotically, so W depends on the ramp length, as on a bench.
//  * The band: conductances from g_low + 0.1 W to g_low + 0.9 W. Comparing
//    directions inside the central 80 % keeps the ends, where curves saturate and
//    reads are dominated by noise, out of the comparison (the 10-90 % convention of
//    rise-time measurements; common practice).
//  * pulses_up: pulses the mean up curve takes to cross the band, with the curve
//    interpolated linearly between pulses (first crossing of each edge);
//    pulses_down likewise for the mean down curve.
//  * step_up = 0.8 W / pulses_up and step_down = 0.8 W / pulses_down: the mean step
//    magnitude of each direction over the same conductances (matched conductance).
//  * levels = W / (mean step) with the mean step taken as 0.8 W / ((pulses_up +
//    pulses_down) / 2), i.e. levels = (pulses_up + pulses_down) / (2 * 0.8): the
//    number of pulse-sized steps that fit in the window at the rate the device moves
//    through its central 80 % (without gradual depression: pulses_up / 0.8). A
//    linear device of N equal steps gives exactly N. Noise is reported separately.
//  * asymmetry = (step_up - step_down) / (step_up + step_down), in (-1, 1): 0 for
//    equal step magnitudes at matched conductance, positive when potentiation
//    steps are larger (a normalised difference of the two directions' mean step
//    magnitudes; common practice). For soft bounds with alpha_p, alpha_d it is
//    (n_d - n_p)/(n_d + n_p), n_p = ln((g_max - a)/(g_max - b)) / -ln(1 - alpha_p),
//    n_d = ln((b - g_min)/(a - g_min)) / -ln(1 - alpha_d), a and b the band edges.
//  * nonlinearity_up: the largest deviation of the mean up curve, normalised to
//    [0, 1] over the band, from the straight line through the band's edges, taken at
//    the pulses inside the band: max |y(i) - (i - p_a)/(p_b - p_a)| with
//    y(i) = (Ubar[i] - a)/(b - a), p_a, p_b the pulse numbers at the edges. 0 for a
//    linear device; at most 1. (Maximum deviation from a straight line: common
//    practice.) nonlinearity_down likewise on the mean down curve.
//  * c2c_step_spread (cycle to cycle): for each used device and each pulse whose
//    mean step lies wholly inside the band, the variance across cycles of that
//    device's step; the root of the mean of these variances, divided by the mean
//    step magnitude over the same steps. With programming noise sigma (a relative
//    sd per step) and no read noise it estimates sigma; read noise adds in, as it
//    does on a bench (a step is the difference of two reads). Needs 2 cycles.
//  * c2c_curve_spread: the same pooling over the reads inside the band of the
//    variance across cycles of one device's conductance, root over W.
//  * d2d_g_high_spread (device to device): sd across used devices of each device's
//    mean (over cycles) end-of-up-ramp conductance, divided by g_high. With
//    d2d_g_max = sigma and g_min = 0 it estimates sigma. Needs 2 devices.
//  * d2d_curve_spread: root of the mean, over the reads inside the band, of the
//    variance across devices of each device's mean curve, over W.
//  * drift_nu: for each programmed level and used device, minus the least-squares
//    slope of ln G against ln(read delay), over the delays at or beyond drift_t0
//    (where the power law G(t) = G(t0) (t/t0)^-nu holds; Ielmini, Lacaita &
//    Mantegazza, IEEE Trans. Electron Devices 54:308, 2007). Needs two such delays.
//    drift_nu_mean and drift_nu_sd are the mean and sample sd over all fits.
//  * energy_per_pulse: energy of all pulses of the protocol (every device) over
//    their number.
// A statistic that cannot be defined for the data is NaN, and `notes` says why.
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "core/units.hpp"
#include "devices/characterisation.hpp"

namespace nvsyn {

struct CharacterisationSummary {
  static constexpr double nan = std::numeric_limits<double>::quiet_NaN();
  std::uint32_t devices_used = 0;
  std::uint32_t devices_excluded = 0;
  std::uint32_t drift_fits = 0;

  double g_low = nan, g_high = nan, window = nan;  // S
  double on_off_ratio = nan;
  double band_low = nan, band_high = nan;          // S
  double pulses_up = nan, pulses_down = nan;
  double step_up = nan, step_down = nan;  // S
  double levels = nan;
  double asymmetry = nan;
  double nonlinearity_up = nan, nonlinearity_down = nan;
  double c2c_step_spread = nan, c2c_curve_spread = nan;
  double d2d_g_high_spread = nan, d2d_curve_spread = nan;
  double drift_nu_mean = nan, drift_nu_sd = nan;
  double energy_per_pulse = nan;  // J
  std::vector<double> drift_nu;   // [level][device], NaN where no fit was possible
  std::vector<std::string> notes;
};

CharacterisationSummary summarise_characterisation(const CharacterisationCurves& curves,
                                                   const DeviceParameters& device);

// The statistics as one table, spelled in one place for the printed summary and the
// bench file: name, value, dimension and a short description.
struct SummaryEntry {
  std::string_view name;
  double value;
  Dimension dimension;
  std::string_view description;
};
std::vector<SummaryEntry> summary_entries(const CharacterisationSummary& s);

}  // namespace nvsyn
