// Poisson sources against the defining properties of a Poisson process.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "inputs/poisson_trains.hpp"

using namespace nvsyn;

namespace {

// Asymptotic Kolmogorov distribution: P(sqrt(n) D > x) = 2 sum_{k>=1} (-1)^{k-1} e^{-2 k^2 x^2}
// (Kolmogorov 1933; e.g. Press et al., Numerical Recipes, 3rd ed., sec. 14.3.3).
double kolmogorov_p_value(double d, std::size_t n) {
  const double sn = std::sqrt(static_cast<double>(n));
  // Stephens' finite-n correction (Numerical Recipes, eq. 14.3.18).
  const double x = (sn + 0.12 + 0.11 / sn) * d;
  double sum = 0.0;
  for (int k = 1; k <= 100; ++k) sum += (k % 2 ? 2.0 : -2.0) * std::exp(-2.0 * k * k * x * x);
  return std::clamp(sum, 0.0, 1.0);
}

}  // namespace

TEST_CASE("Poisson spike counts have mean and variance rate x duration", "[poisson]") {
  constexpr std::uint32_t sources = 2000;
  constexpr double rate = 12.0, duration = 5.0;
  PoissonTrains group(sources, rate, 0.0, 0.0, 77, 3);
  std::vector<SourceSpike> spikes;
  // Emit in uneven windows: the result must not depend on the window length.
  for (double t = 0.0013; t < duration; t += 0.0013) group.emit(t, spikes);
  group.emit(duration, spikes);
  std::vector<double> counts(sources, 0.0);
  for (const auto& s : spikes) {
    REQUIRE(s.time < duration);
    counts[s.source] += 1;
  }
  const double lambda = rate * duration;
  double mean = 0, var = 0;
  for (double c : counts) mean += c;
  mean /= sources;
  for (double c : counts) var += (c - mean) * (c - mean);
  var /= sources - 1;
  // Standard errors: of the mean sqrt(lambda/N); of the sample variance
  // sqrt((mu4 - sigma^4)/N) with mu4 = lambda + 3 lambda^2 for a Poisson count
  // (central moments of the Poisson distribution; textbook, e.g. Johnson, Kemp & Kotz,
  // Univariate Discrete Distributions, 2005, ch. 4).
  const double se_mean = std::sqrt(lambda / sources);
  const double se_var = std::sqrt((lambda + 2 * lambda * lambda) / sources);
  CHECK(std::abs(mean - lambda) < 3 * se_mean);
  CHECK(std::abs(var - lambda) < 3 * se_var);
}

TEST_CASE("Poisson inter-spike intervals are exponential (Kolmogorov-Smirnov, 1% level)", "[poisson]") {
  constexpr double rate = 30.0;
  PoissonTrains group(50, rate, 0.0, 0.0, 2024, 0);
  std::vector<SourceSpike> spikes;
  group.emit(20.0, spikes);
  std::vector<std::vector<double>> trains(50);
  for (const auto& s : spikes) trains[s.source].push_back(s.time);
  std::vector<double> isi;
  for (auto& train : trains) {
    std::sort(train.begin(), train.end());
    for (std::size_t k = 1; k < train.size(); ++k) isi.push_back(train[k] - train[k - 1]);
  }
  std::sort(isi.begin(), isi.end());
  const std::size_t n = isi.size();
  REQUIRE(n > 20000);
  double d = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    const double f = 1.0 - std::exp(-rate * isi[i]);  // exponential CDF
    d = std::max({d, std::abs(f - static_cast<double>(i) / static_cast<double>(n)), std::abs(f - static_cast<double>(i + 1) / static_cast<double>(n))});
  }
  // With a correct generator this fails for 1% of seeds; the seed is fixed.
  CHECK(kolmogorov_p_value(d, n) > 0.01);
  // The test has power: intervals of a wrong rate are rejected.
  double d_wrong = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    const double f = 1.0 - std::exp(-1.05 * rate * isi[i]);
    d_wrong = std::max(d_wrong, std::abs(f - static_cast<double>(i) / static_cast<double>(n)));
  }
  CHECK(kolmogorov_p_value(d_wrong, n) < 0.01);
}

TEST_CASE("a Poisson source is silent outside [start, stop)", "[poisson]") {
  PoissonTrains group(100, 50.0, 0.2, 0.5, 1, 0);
  std::vector<SourceSpike> spikes;
  group.emit(1.0, spikes);
  REQUIRE_FALSE(spikes.empty());
  for (const auto& s : spikes) {
    CHECK(s.time >= 0.2);
    CHECK(s.time < 0.5);
  }
}
