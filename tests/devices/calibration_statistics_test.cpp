// The statistical tools behind calibration, against independent answers: the runs test
// against its formulas worked by hand, least squares against the normal equations.
#include <catch2/catch.hpp>
#include <algorithm>
#include <cmath>

#include "core/random_stream.hpp"
#include "devices/calibration/least_squares.hpp"
#include "devices/calibration/runs_test.hpp"

using namespace nvsyn;
using namespace nvsyn::calibration;

TEST_CASE("runs test: counts and moments of a small sequence worked by hand", "[calibration]") {
  // + + - - + : R = 3, n1 = 3, n2 = 2, n = 5;
  // E = 1 + 2*3*2/5 = 3.4; Var = 2*3*2*(2*3*2 - 5) / (5^2 * 4) = 84/100 (moments of
  // Wald & Wolfowitz 1940, from memory; checked by enumeration below).
  const RunsTest t = runs_test({{1.0, 2.0, -1.0, -0.5, 3.0}});
  CHECK(t.signs == 5);
  CHECK(t.runs == 3);
  CHECK(t.expected_runs == Approx(3.4));
  CHECK(t.variance == Approx(0.84));
  CHECK(t.z == Approx((3 - 3.4) / std::sqrt(0.84)));
}

TEST_CASE("runs test: its moments equal those of every arrangement enumerated", "[calibration]") {
  // All orders of n1 plus and n2 minus signs are equally likely under randomness; the
  // mean and variance of the run count over all of them is the exact answer.
  for (auto [n1, n2] : {std::pair{4, 3}, std::pair{5, 5}, std::pair{7, 2}}) {
    std::vector<double> signs(n1, 1.0);
    signs.insert(signs.end(), n2, -1.0);
    std::sort(signs.begin(), signs.end());
    double count = 0, sum = 0, sum2 = 0;
    do {
      int runs = 1;
      for (std::size_t i = 1; i < signs.size(); ++i) runs += signs[i] != signs[i - 1];
      count += 1;
      sum += runs;
      sum2 += double(runs) * runs;
    } while (std::next_permutation(signs.begin(), signs.end()));
    const double mean = sum / count, variance = sum2 / count - mean * mean;
    const RunsTest t = runs_test({signs});
    INFO(n1 << " plus, " << n2 << " minus");
    CHECK(t.expected_runs == Approx(mean).epsilon(1e-12));
    CHECK(t.variance == Approx(variance).epsilon(1e-12));
  }
}

TEST_CASE("runs test: groups add, zeros and one-signed groups carry no runs information", "[calibration]") {
  const RunsTest t = runs_test({{1.0, 2.0, -1.0, -0.5, 3.0}, {0.0, 1.0, 1.0}, {}, {-1.0, 0.0, 1.0}});
  // Second group: one run of 2 positives (E = 1, Var = 0); third empty; fourth: - + (R = 2,
  // E = 1 + 2/2 = 2, Var = 2*1*1*(2 - 2)/(4*1) = 0).
  CHECK(t.signs == 5 + 2 + 2);
  CHECK(t.runs == 3 + 1 + 2);
  CHECK(t.expected_runs == Approx(3.4 + 1 + 2));
  CHECK(t.variance == Approx(0.84));
}

TEST_CASE("runs test: random signs give z near 0, a trend gives a large negative z", "[calibration]") {
  RandomStream rng(11, StreamPurpose::device_programming_noise, 0);
  std::vector<std::vector<double>> random(50), trend(50);
  for (auto& g : random)
    for (int i = 0; i < 40; ++i) g.push_back(rng.normal());
  for (auto& g : trend)
    for (int i = 0; i < 40; ++i) g.push_back((i < 20 ? 1.0 : -1.0) + 0.3 * rng.normal());
  // z is standard normal for random signs: |z| < 4 fails with probability 6e-5.
  CHECK(std::abs(runs_test(random).z) < 4);
  CHECK(runs_test(trend).z < -10);
}

TEST_CASE("linear least squares matches the normal equations and the sandwich formula", "[calibration]") {
  // y = 1 + 2 x with residuals that grow with x (heteroscedastic).
  const int n = 12;
  Eigen::MatrixXd x(n, 2);
  Eigen::VectorXd y(n);
  for (int i = 0; i < n; ++i) {
    x(i, 0) = 1.0;
    x(i, 1) = i;
    y[i] = 1.0 + 2.0 * i + (i % 2 ? 1.0 : -1.0) * 0.1 * (1 + i);
  }
  const LeastSquaresFit f = fit_linear(x, y);
  const Eigen::MatrixXd xtx_inv = (x.transpose() * x).inverse();
  const Eigen::VectorXd b = xtx_inv * x.transpose() * y;
  const Eigen::VectorXd r = y - x * b;
  const Eigen::MatrixXd meat = x.transpose() * r.array().square().matrix().asDiagonal() * x;
  const Eigen::MatrixXd cov = double(n) / (n - 2) * xtx_inv * meat * xtx_inv;
  REQUIRE(f.rank == 2);
  CHECK(f.parameters[0] == Approx(b[0]).epsilon(1e-12));
  CHECK(f.parameters[1] == Approx(b[1]).epsilon(1e-12));
  CHECK(f.standard_errors[0] == Approx(std::sqrt(cov(0, 0))).epsilon(1e-9));
  CHECK(f.standard_errors[1] == Approx(std::sqrt(cov(1, 1))).epsilon(1e-9));
}

TEST_CASE("Levenberg-Marquardt recovers an exponential decay; the covariance matches the linearised one",
          "[calibration]") {
  // y = a exp(-t / tau) + noise, a = 3, tau = 7 (an independent model, not a device law).
  const int n = 60;
  RandomStream rng(5, StreamPurpose::device_read_noise, 1);
  std::vector<double> t(n), y(n);
  for (int i = 0; i < n; ++i) {
    t[i] = 0.5 * i;
    y[i] = 3.0 * std::exp(-t[i] / 7.0) + 0.02 * rng.normal();
  }
  const std::vector<ParameterSpec> specs{{"a", ParameterRange::positive, 1.0}, {"tau", ParameterRange::positive, 1.0}};
  const LeastSquaresFit f = fit_nonlinear(specs, n,
                                          [&](std::span<const double> p, std::span<double> r) {
                                            for (int i = 0; i < n; ++i) r[i] = y[i] - p[0] * std::exp(-t[i] / p[1]);
                                          },
                                          {1.0, 2.0});
  REQUIRE(f.converged);
  REQUIRE(f.rank == 2);
  // Independent covariance: analytic Jacobian at the optimum in the sandwich formula.
  Eigen::MatrixXd j(n, 2);
  Eigen::VectorXd r(n);
  for (int i = 0; i < n; ++i) {
    const double e = std::exp(-t[i] / f.parameters[1]);
    j(i, 0) = -e;
    j(i, 1) = -f.parameters[0] * e * t[i] / (f.parameters[1] * f.parameters[1]);
    r[i] = y[i] - f.parameters[0] * e;
  }
  const Eigen::MatrixXd a = (j.transpose() * j).inverse();
  const Eigen::MatrixXd cov =
      double(n) / (n - 2) * a * (j.transpose() * r.array().square().matrix().asDiagonal() * j) * a;
  // The gradient vanishes at a least-squares optimum.
  CHECK(std::abs((j.transpose() * r)[0]) < 1e-8);
  CHECK(std::abs((j.transpose() * r)[1]) < 1e-8);
  CHECK(f.standard_errors[0] == Approx(std::sqrt(cov(0, 0))).epsilon(1e-4));
  CHECK(f.standard_errors[1] == Approx(std::sqrt(cov(1, 1))).epsilon(1e-4));
  CHECK(std::abs(f.parameters[0] - 3.0) < 4 * f.standard_errors[0]);
  CHECK(std::abs(f.parameters[1] - 7.0) < 4 * f.standard_errors[1]);
}

TEST_CASE("least squares reports a parameter the data cannot determine", "[calibration]") {
  // y = (a + b) x: only the sum is determined.
  const int n = 10;
  const std::vector<ParameterSpec> specs{{"a", ParameterRange::any, 1.0}, {"b", ParameterRange::any, 1.0}};
  const LeastSquaresFit f = fit_nonlinear(specs, n,
                                          [&](std::span<const double> p, std::span<double> r) {
                                            for (int i = 0; i < n; ++i)
                                              r[i] = 3.0 * i + (i % 3 - 1) * 0.01 - (p[0] + p[1]) * i;
                                          },
                                          {1.0, 1.0});
  CHECK(f.rank == 1);
  CHECK(std::isnan(f.standard_errors[0]));
}
