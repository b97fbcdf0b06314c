#pragma once
// Power-law conductance drift after programming (Ielmini, Lacaita & Mantegazza,
// IEEE Trans. Electron Devices 54:308, 2007):
//   G(t) = G(t_p) ((t - t_p) / t0)^(-nu)   for t - t_p > t0,   G(t_p) before.
// nu is a per-device exponent (about 0.1 for amorphous phase-change states).
// Computed lazily at read time from the time since the last programming, so an
// idle device costs nothing.
#include <cmath>

namespace nvsyn {

inline double drifted_conductance(double g_programmed, double since_programming, double nu, double t0) {
  if (nu == 0.0 || since_programming <= t0) return g_programmed;
  return g_programmed * std::pow(since_programming / t0, -nu);
}

}  // namespace nvsyn
