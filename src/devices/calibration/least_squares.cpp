#include "devices/calibration/least_squares.hpp"

#include <cmath>
#include <limits>
#include <unsupported/Eigen/NonLinearOptimization>

namespace nvsyn::calibration {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Singular values below this fraction of the largest (columns scaled to unit norm) mark
// a combination of parameters the data do not determine: its uncertainty would exceed
// that of the best-determined one by this factor's inverse.
constexpr double kRankTolerance = 1e-8;

// Natural value of internal coordinate u, and d(natural)/du.
double to_natural(const ParameterSpec& s, double u) {
  switch (s.range) {
    case ParameterRange::any:
      return u * s.scale;
    case ParameterRange::positive:
      return s.scale * std::exp(u);
    case ParameterRange::unit_interval:
      return 1.0 / (1.0 + std::exp(-u));
  }
  return kNaN;
}

double to_internal(const ParameterSpec& s, double x) {
  switch (s.range) {
    case ParameterRange::any:
      return x / s.scale;
    case ParameterRange::positive:
      return std::log(x / s.scale);
    case ParameterRange::unit_interval:
      return std::log(x / (1.0 - x));
  }
  return kNaN;
}

double natural_per_internal(const ParameterSpec& s, double x) {
  switch (s.range) {
    case ParameterRange::any:
      return s.scale;
    case ParameterRange::positive:
      return x;
    case ParameterRange::unit_interval:
      return x * (1.0 - x);
  }
  return kNaN;
}

// The functor interface Eigen's LevenbergMarquardt expects, over internal coordinates.
struct Problem {
  Problem(const std::vector<ParameterSpec>& s, std::size_t count, const ResidualFunction& function)
      : specs(s), m(count), f(function) {}

  const std::vector<ParameterSpec>& specs;
  std::size_t m;
  const ResidualFunction& f;
  mutable std::vector<double> natural;
  mutable int evaluations = 0;
  mutable bool finite = true;

  int values() const { return static_cast<int>(m); }
  int inputs() const { return static_cast<int>(specs.size()); }

  int operator()(const Eigen::VectorXd& u, Eigen::VectorXd& r) const {
    natural.resize(specs.size());
    for (std::size_t k = 0; k < specs.size(); ++k) natural[k] = to_natural(specs[k], u[static_cast<Eigen::Index>(k)]);
    r.resize(static_cast<Eigen::Index>(m));
    f(natural, std::span<double>(r.data(), m));
    ++evaluations;
    // A non-finite residual (an overflow far from the optimum) becomes a very large
    // one, so that the optimiser rejects the step and shrinks its trust region
    // instead of stopping; a non-finite value at the end fails the fit.
    finite = r.allFinite();
    if (!finite) r = r.unaryExpr([](double v) { return std::isfinite(v) ? v : 1e6; });
    return 0;
  }

  // Central differences: the laws have kinks (clamps at the bounds) where a one-sided
  // difference would pick a side at random.
  int df(const Eigen::VectorXd& u, Eigen::MatrixXd& jac) const {
    Eigen::VectorXd plus, minus, v = u;
    jac.resize(static_cast<Eigen::Index>(m), u.size());
    for (Eigen::Index k = 0; k < u.size(); ++k) {
      const double h = 1e-6 * std::max(1.0, std::abs(u[k]));
      v[k] = u[k] + h;
      (*this)(v, plus);
      v[k] = u[k] - h;
      (*this)(v, minus);
      v[k] = u[k];
      jac.col(k) = (plus - minus) / (2 * h);
    }
    return 0;
  }
};

const char* stop_reason_text(Eigen::LevenbergMarquardtSpace::Status s) {
  using namespace Eigen::LevenbergMarquardtSpace;
  switch (s) {
    case RelativeReductionTooSmall:
      return "the sum of squares stopped decreasing";
    case RelativeErrorTooSmall:
      return "the parameters stopped changing";
    case RelativeErrorAndReductionTooSmall:
      return "the sum of squares and the parameters stopped changing";
    case CosinusTooSmall:
      return "the residuals are orthogonal to the Jacobian (a minimum)";
    case TooManyFunctionEvaluation:
      return "too many evaluations without convergence";
    case FtolTooSmall:
    case XtolTooSmall:
    case GtolTooSmall:
      return "no further improvement is possible at machine precision";
    case UserAsked:
      return "the model gave a non-finite value";
    default:
      return "improper input";
  }
}

bool converged_status(Eigen::LevenbergMarquardtSpace::Status s) {
  using namespace Eigen::LevenbergMarquardtSpace;
  return s == RelativeReductionTooSmall || s == RelativeErrorTooSmall || s == RelativeErrorAndReductionTooSmall ||
         s == CosinusTooSmall || s == FtolTooSmall || s == XtolTooSmall || s == GtolTooSmall;
}

void fill_standard_errors(LeastSquaresFit& fit) {
  fit.standard_errors.resize(fit.parameters.size());
  for (std::size_t k = 0; k < fit.parameters.size(); ++k) {
    const double v = fit.covariance(static_cast<Eigen::Index>(k), static_cast<Eigen::Index>(k));
    fit.standard_errors[k] = v >= 0 ? std::sqrt(v) : kNaN;
  }
}

}  // namespace

double LeastSquaresFit::rss() const {
  double s = 0;
  for (double r : residuals) s += r * r;
  return s;
}

Eigen::MatrixXd robust_covariance(const Eigen::MatrixXd& j, const Eigen::VectorXd& r, std::size_t& rank,
                                  std::size_t* weakest) {
  const Eigen::Index n = j.rows(), p = j.cols();
  // Columns scaled to unit norm so that the rank test and the inverse do not depend
  // on the parameters' units.
  Eigen::VectorXd norms = j.colwise().norm();
  for (Eigen::Index k = 0; k < p; ++k)
    if (norms[k] == 0) norms[k] = 1;
  const Eigen::MatrixXd js = j * norms.cwiseInverse().asDiagonal();
  // (J^T J)^-1 = V S^-2 V^T from the singular values of J itself: accurate where forming
  // J^T J would square the condition number, and positive definite by construction.
  Eigen::JacobiSVD<Eigen::MatrixXd> svd(js, Eigen::ComputeThinV);
  const Eigen::VectorXd sv = svd.singularValues();
  const double largest = sv.size() ? sv.maxCoeff() : 0.0;
  rank = 0;
  for (Eigen::Index k = 0; k < sv.size(); ++k)
    if (sv[k] > kRankTolerance * largest) ++rank;
  if (weakest && sv.size()) {
    // The parameter that dominates the least determined direction.
    Eigen::Index k = 0;
    svd.matrixV().col(sv.size() - 1).cwiseAbs().maxCoeff(&k);
    *weakest = static_cast<std::size_t>(k);
  }
  if (rank < static_cast<std::size_t>(p) || n <= p) return Eigen::MatrixXd::Constant(p, p, kNaN);
  const Eigen::MatrixXd bread =
      svd.matrixV() * sv.array().square().inverse().matrix().asDiagonal() * svd.matrixV().transpose();
  const Eigen::MatrixXd meat = js.transpose() * r.array().square().matrix().asDiagonal() * js;
  const double small_sample = static_cast<double>(n) / static_cast<double>(n - p);
  const Eigen::MatrixXd scaled = small_sample * bread * meat * bread;
  return norms.cwiseInverse().asDiagonal() * scaled * norms.cwiseInverse().asDiagonal();
}

LeastSquaresFit fit_nonlinear(const std::vector<ParameterSpec>& specs, std::size_t residual_count,
                              const ResidualFunction& residuals, std::vector<double> start) {
  const auto p = static_cast<Eigen::Index>(specs.size());
  Problem problem(specs, residual_count, residuals);
  Eigen::VectorXd u(p);
  for (Eigen::Index k = 0; k < p; ++k) u[k] = to_internal(specs[k], start[k]);

  Eigen::LevenbergMarquardt<Problem> lm(problem);
  lm.parameters.maxfev = 400 * (p + 1);
  lm.parameters.xtol = 1e-12;
  lm.parameters.ftol = 1e-14;
  const auto status = lm.minimize(u);

  LeastSquaresFit fit;
  fit.converged = converged_status(status);
  fit.stop_reason = stop_reason_text(status);
  fit.parameters.resize(specs.size());
  for (Eigen::Index k = 0; k < p; ++k) fit.parameters[k] = to_natural(specs[k], u[k]);

  Eigen::VectorXd r;
  Eigen::MatrixXd ju;
  problem.df(u, ju);
  problem(u, r);
  if (!problem.finite || !ju.allFinite()) {
    fit.converged = false;
    fit.stop_reason = stop_reason_text(Eigen::LevenbergMarquardtSpace::UserAsked);
    fit.covariance = Eigen::MatrixXd::Constant(p, p, kNaN);
  } else {
    fit.residuals.assign(r.data(), r.data() + r.size());
    // Chain rule to the natural parameters: dr/dx = dr/du / (dx/du).
    Eigen::MatrixXd jx = ju;
    for (Eigen::Index k = 0; k < p; ++k) jx.col(k) /= natural_per_internal(specs[k], fit.parameters[k]);
    fit.covariance = robust_covariance(jx, r, fit.rank, &fit.weakest);
  }
  fit.evaluations = problem.evaluations;
  fill_standard_errors(fit);
  return fit;
}

LeastSquaresFit fit_linear(const Eigen::MatrixXd& x, const Eigen::VectorXd& y) {
  LeastSquaresFit fit;
  const Eigen::VectorXd b = x.colPivHouseholderQr().solve(y);
  const Eigen::VectorXd r = y - x * b;
  fit.parameters.assign(b.data(), b.data() + b.size());
  fit.residuals.assign(r.data(), r.data() + r.size());
  // Residuals are observed - predicted, so their Jacobian is -X; the sign cancels.
  fit.covariance = robust_covariance(x, r, fit.rank, &fit.weakest);
  fit.converged = true;
  fit.stop_reason = "closed form";
  fit.evaluations = 1;
  fill_standard_errors(fit);
  return fit;
}

}  // namespace nvsyn::calibration
