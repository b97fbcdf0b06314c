#pragma once
// Least-squares fitting for device calibration: nonlinear (Levenberg-Marquardt, Eigen's
// unsupported NonLinearOptimization module) and linear (column-pivoting QR).
//
// Parameters keep their natural units in the interface; internally each is mapped to
// an unbounded coordinate (positive: log, in (0, 1): logit) scaled to order one, so the
// optimiser can neither leave a parameter's valid range nor stall on units of 1e-6 S.
//
// Uncertainties: the heteroscedasticity-consistent ("sandwich") covariance
//   C = n/(n-p) (J^T J)^-1 J^T diag(r_i^2) J (J^T J)^-1
// (White, Econometrica 48:817, 1980; the n/(n-p) factor is the usual small-sample
// correction; from memory), with J the Jacobian of the residuals with respect to the
// natural parameters at the optimum. It reduces to s^2 (J^T J)^-1, s^2 = RSS/(n-p),
// when every residual has the same variance, and stays valid when they do not:
// pulse-response noise scales with the step, which shrinks towards a bound.
#include <Eigen/Dense>
#include <functional>
#include <span>
#include <string>
#include <vector>

namespace nvsyn::calibration {

enum class ParameterRange : std::uint8_t { any, positive, unit_interval };

struct ParameterSpec {
  std::string name;
  ParameterRange range = ParameterRange::any;
  double scale = 1.0;  // typical magnitude (same unit as the parameter), for conditioning
};

// Fills `residuals` (observed - predicted, in any consistent unit) for `parameters`.
using ResidualFunction = std::function<void(std::span<const double> parameters, std::span<double> residuals)>;

struct LeastSquaresFit {
  std::vector<double> parameters;  // natural units
  std::vector<double> residuals;
  Eigen::MatrixXd covariance;  // of the natural parameters
  std::vector<double> standard_errors;
  std::size_t rank = 0;     // of the Jacobian; < parameters.size(): not all determined
  std::size_t weakest = 0;  // index of the parameter the data determine least well
  bool converged = false;
  std::string stop_reason;
  int evaluations = 0;
  double rss() const;
};

// Minimises the sum of squared residuals from `start` (natural units, inside each range).
LeastSquaresFit fit_nonlinear(const std::vector<ParameterSpec>& specs, std::size_t residual_count,
                              const ResidualFunction& residuals, std::vector<double> start);

// Ordinary least squares y ~ X b, with the same covariance estimate.
LeastSquaresFit fit_linear(const Eigen::MatrixXd& x, const Eigen::VectorXd& y);

// The sandwich covariance above, for a Jacobian `j` (n x p) and residuals `r` (n); NaN
// when the rank is below p. `weakest` (optional) receives the parameter that dominates
// the least determined direction.
Eigen::MatrixXd robust_covariance(const Eigen::MatrixXd& j, const Eigen::VectorXd& r, std::size_t& rank,
                                  std::size_t* weakest = nullptr);

}  // namespace nvsyn::calibration
