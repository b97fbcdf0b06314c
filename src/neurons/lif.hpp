#pragma once
// Current-based leaky integrate-and-fire neuron with exponential synaptic currents.
//
//   C dV/dt      = -C (V - v_rest) / tau_m + I_exc + I_inh + I_bias + I_injected
//   dI_exc/dt    = -I_exc / tau_exc,   dI_inh/dt = -I_inh / tau_inh
//   a synaptic event of weight w (A) makes I_exc += w (or I_inh += w)
//   V >= v_threshold: spike; V = v_reset and held there for `refractory`;
//   synaptic currents keep decaying while V is held.
//
// Between events the state is advanced with the exact solution (Rotter & Diesmann,
// Biol. Cybern. 81:381, 1999): with s the time since the last update,
//   V(s) = v_rest + R I_0 (1 - e^{-s/tau_m}) + (V_0 - v_rest) e^{-s/tau_m}
//          + sum_x (I_x / C) K_x(s),
//   K_x(s) = (e^{-s/tau_x} - e^{-s/tau_m}) / (1/tau_m - 1/tau_x)
//          = e^{-s/tau_slow} (1 - e^{-s |d_x|}) / |d_x|,   d_x = 1/tau_x - 1/tau_m,
// where tau_slow is the longer of tau_m and tau_x (K_x(s) = s e^{-s/tau_m} when
// d_x = 0). The second form is evaluated, with expm1 for 1 - e^{-x}: both factors
// are bounded (by 1 and by s), so it cannot overflow for any pair of time constants
// and any time since the last update, and it stays accurate when tau_x and tau_m are
// nearly equal. (Factoring out e^{-s/tau_m} instead overflows when tau_m < tau_x and
// the neuron is idle for s |d_x| > 709.)
// R = tau_m / C; I_0 = I_bias + I_injected is constant between events.
// Time constants must be normal doubles (above about 1e-300 s) so that 1/tau is finite.
//
// Threshold crossings are located by interval subdivision with a rigorous upper
// bound of V on each interval (the constant-drive term is monotone, each K_x is
// unimodal with its peak at s* = ln(tau_m/tau_x)/d_x), then refined by bracketing
// to machine precision. The first crossing is always found; trajectories that graze
// threshold by less than the floating-point resolution may be missed.
//
// Homeostasis (optional): an adaptive threshold v_threshold + theta(t), where theta
// jumps by threshold_step at every spike and decays with tau_threshold (the adaptive
// threshold used for competitive learning, e.g. Diehl & Cook, Front. Comput. Neurosci.
// 9:99, 2015). The crossing search then uses V(s) - theta_0 e^{-s/tau_threshold},
// whose extra term rises monotonically, so the interval bound stays rigorous.
//
// Model-file parameters (all with units): tau_m, capacitance, v_rest, v_threshold,
// v_reset, refractory, tau_exc, tau_inh, bias (A), v_init (a value or distribution),
// threshold_step (V), tau_threshold (s).
#include <memory>
#include <optional>

#include "core/distribution.hpp"
#include "core/param_table.hpp"
#include "neurons/neuron_bank.hpp"

namespace nvsyn {

struct LifParameters {
  double tau_m = 20e-3;         // s
  double capacitance = 250e-12; // F
  double v_rest = -65e-3;       // V
  double v_threshold = -50e-3;  // V
  double v_reset = -65e-3;      // V
  double refractory = 2e-3;     // s
  double tau_exc = 5e-3;        // s
  double tau_inh = 10e-3;       // s
  double bias = 0.0;            // A
  Distribution v_init = Distribution::constant(-65e-3);  // V
  double threshold_step = 0.0;  // V, added to the adaptive threshold at each spike
  double tau_threshold = 1.0;   // s, decay of the adaptive threshold

  static LifParameters from_table(const ParamTable& table);
  double resistance() const { return tau_m / capacitance; }
};

// The exact single-neuron trajectory, usable on its own (tests, analysis).
struct LifState {
  double v = 0.0;
  double i_exc = 0.0;
  double i_inh = 0.0;
};

// Constants of the synaptic kernels K_exc, K_inh that depend only on the
// parameters: computed once per population rather than per trajectory (two log
// calls), bit-identical to computing them each time.
struct LifKernelShape {
  explicit LifKernelShape(const LifParameters& p);
  double gap[2];       // 1/s, |d_x| = |1/tau_x - 1/tau_m|
  double slow_tau[2];  // s, the longer of tau_m and tau_x
  double peak_s[2];    // s, peak time of K_x
};

class LifTrajectory {
 public:
  LifTrajectory(const LifParameters& p, const LifState& start, double drive, double theta = 0.0);
  LifTrajectory(const LifParameters& p, const LifKernelShape& shape, const LifState& start, double drive,
                double theta = 0.0);
  double v_at(double s) const;
  // V(s) minus the adaptive part of the threshold: crossing means margin >= v_threshold.
  double margin_at(double s) const;
  LifState state_at(double s) const;
  // Upper bound of the margin over [a, b] (0 <= a <= b).
  double v_upper_bound(double a, double b) const;
  // First s in (0, horizon) with margin(s) >= threshold, if any.
  std::optional<double> first_crossing(double threshold, double horizon) const;
  // Largest value of the kernel K_c over all s >= 0 (at its peak), in s.
  double kernel_peak(int channel) const { return kernel(channel, peak_s_[channel]); }

 private:
  double kernel(int channel, double s) const;
  const LifParameters& p_;
  LifState start_;
  double drive_;          // I_0, A
  double theta_;          // V, adaptive threshold at s = 0
  double v_inf_;          // v_rest + R I_0
  double gap_[2];         // 1/s, |d_x| = |1/tau_x - 1/tau_m|
  double slow_tau_[2];    // s, the longer of tau_m and tau_x
  double peak_s_[2];      // s, peak time of K_x
};

class LifBank final : public NeuronBank {
 public:
  LifBank(std::uint32_t size, LifParameters params, std::uint64_t seed, std::uint32_t population_id);

  std::string_view model_name() const override { return "lif"; }
  std::uint32_t size() const override { return static_cast<std::uint32_t>(v_.size()); }
  void process(std::uint32_t neuron, std::span<const NeuronInput> inputs, double t_end,
               std::vector<double>& spikes, std::span<double> samples, SpikeHooks& hooks) override;
  // Lower bound of the first threshold crossing without further input (one log):
  // the margin V(s) - theta(s) never exceeds
  //   v_inf + (V_0 - v_inf) e^{-s/tau_m} + sum over positive currents (I_x / C) max K_x
  // (the synaptic terms bounded by their peaks, negative ones and theta >= 0 dropped),
  // which is monotone in s and is solved for v_threshold in closed form. During
  // refractoriness the bound starts at its end from v_reset.
  // The value is computed when the state changes (end of process(), construction)
  // and stored, so asking for it costs no maths-library call.
  double earliest_threshold_time(std::uint32_t neuron) const override { return wake_[neuron]; }
  std::span<const TraceVariable> variables() const override;
  std::size_t bytes_per_neuron() const override { return 7 * sizeof(double); }

  const LifParameters& parameters() const { return p_; }
  double v(std::uint32_t neuron) const { return v_[neuron]; }

 private:
  void advance(std::uint32_t n, double t);
  void fire_until(std::uint32_t n, double t_limit, std::vector<double>& spikes, SpikeHooks& hooks);
  // The wake-up bound described at earliest_threshold_time, from the present state.
  double predict_wake(std::uint32_t n) const;
  // Upper bound of V over all future times without further input; costs no exp().
  double cheap_upper_bound(std::uint32_t n) const;
  // Throws RunFailure naming the variable if any state of neuron n is NaN or infinite.
  void check_finite(std::uint32_t n) const;
  [[gnu::cold, gnu::noinline]] void report_non_finite(std::uint32_t n) const;

  LifParameters p_;
  LifKernelShape shape_;
  double kernel_peak_[2];  // s, maxima of K_exc and K_inh
  // structure of arrays, one entry per neuron
  std::vector<double> v_, i_exc_, i_inh_, i_injected_, t_last_, refractory_until_;
  std::vector<double> theta_;  // V, adaptive threshold at t_last
  std::vector<double> wake_;   // s, predict_wake() of the state after the last visit
};

}  // namespace nvsyn
