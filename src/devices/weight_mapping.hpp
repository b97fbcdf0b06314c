#pragma once
// Mapping a given weight matrix onto device synapses for inference, and watching
// the weights degrade afterwards.
//
// Each weight w_k is written at t = 0 with program-and-verify
// (SynapseDevices::write_weight) as the magnitude |w_k|; its sign is kept outside
// the devices and applied on read, as a pathway's receptor does in a network
// (one synapse per weight, in the given layout). Then, at each of `times` after
// programming, every weight is read twice:
//   drift only:  sign_k * weight_mean(k, t)   (power-law drift, no read noise)
//   read:        sign_k * read_weight(k, t)   (drift and one noisy read)
// and the error e_k(t) = weight(t) - w_k is summarised. Failed writes (target out
// of range, stuck device, no convergence) stay in every statistic, as they would
// in a deployed array, and are also counted by cause.
#include <array>
#include <cstdint>
#include <functional>
#include <span>
#include <vector>

#include "devices/synapse_devices.hpp"

namespace nvsyn {

struct WeightMappingOptions {
  std::vector<double> times{0.0, 3600.0, 86400.0, 365.25 * 86400.0, 10 * 365.25 * 86400.0};  // s after programming
  double tolerance = -1.0;  // A, for the "within tolerance" fraction; < 0: weight_tolerance_default
  std::uint64_t seed = 1;

  // Throws UserError naming the field for the first rule broken.
  void validate() const;
};

// The default tolerance (A): the verify tolerance of one device expressed as a
// weight, gain * verify.tolerance, times the devices whose errors add up in the
// weight (multi: N; single and differential: 1, the partner being read back).
// For an ideal device this is 0: only exact weights count as within tolerance.
double weight_tolerance_default(const SynapseLayoutParameters& layout);

// Percentiles reported for every error distribution (fractions).
inline constexpr std::array<double, 7> kErrorPercentiles{0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99};

// Statistics of e_k = weight_k - target_k (A) over all weights at one time.
struct WeightErrorSummary {
  double time = 0.0;      // s
  double mean = 0.0;      // A
  double sd = 0.0;        // A, population sd
  double rms = 0.0;       // A
  double max_abs = 0.0;   // A
  std::array<double, kErrorPercentiles.size()> percentiles{};  // A, linear interpolation between order statistics
  double within_tolerance = 0.0;  // fraction of weights with |e_k| <= tolerance
  // sum_k |weight_k| / sum_k |target_k| over successfully written weights: the
  // overall scale the weights keep (1 without drift). NaN if none succeeded.
  double weight_ratio = 0.0;
};

// Summarises e = weights - targets (same length). `success` marks the weights whose
// write succeeded (for weight_ratio).
WeightErrorSummary summarise_weight_errors(std::span<const double> weights, std::span<const double> targets,
                                           std::span<const std::uint8_t> success, double tolerance, double time);

struct WeightMappingResult {
  std::vector<double> target;          // A, as given (signed)
  std::vector<double> programmed;      // A, signed, right after programming (no drift, no noise)
  std::vector<std::uint8_t> status;    // VerifyStatus per weight
  std::vector<std::uint32_t> pulses;   // pulses spent writing each weight (all its devices)
  std::vector<double> times;           // s
  std::vector<double> read;            // A, [time][weight], drift and read noise
  std::vector<double> drift_only;      // A, [time][weight], drift without noise
  std::vector<WeightErrorSummary> read_summary, drift_summary;  // per time
  WriteSummary write;                  // failures by cause
  std::uint64_t not_converged = 0;
  double tolerance = 0.0;              // A, as used
};

using MappingProgress = std::function<void(std::uint64_t done, std::uint64_t total)>;

// `options` must validate (validated again here); weights may have any sign.
WeightMappingResult map_weights(std::span<const double> weights, const DeviceParameters& device,
                                const SynapseLayoutParameters& layout, const WeightMappingOptions& options,
                                const MappingProgress& progress = {});

}  // namespace nvsyn
