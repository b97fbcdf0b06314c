#pragma once
// Relative standard deviation of one read.
//  * white read noise: a constant relative sd `white`;
//  * 1/f noise with power spectral density S_G(f) = Q G^2 / f integrates over the
//    band [f_min, f_max] to a relative variance Q ln(f_max / f_min); the band's
//    lower edge is set by the time since programming (f_min = 1 / elapsed) and the
//    upper by the read bandwidth, so the noise grows slowly with the device's age.
//    (Textbook integral of a 1/f spectrum; the phase-change use follows the
//    statistical PCM models of the device literature, from memory.)
// Independent sources add in variance.
#include <algorithm>
#include <cmath>

namespace nvsyn {

inline double relative_read_sd(double white, double q, double bandwidth_hz, double since_programming) {
  double variance = white * white;
  if (q > 0.0) {
    const double ratio = bandwidth_hz * since_programming;  // f_max / f_min
    if (ratio > 1.0) variance += q * std::log(ratio);
  }
  return std::sqrt(variance);
}

}  // namespace nvsyn
