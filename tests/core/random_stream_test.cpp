#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "core/random_stream.hpp"

using namespace nvsyn;

TEST_CASE("streams are determined by (seed, purpose, entity) alone", "[random]") {
  RandomStream a(42, StreamPurpose::poisson, 7), b(42, StreamPurpose::poisson, 7);
  for (int i = 0; i < 100; ++i) REQUIRE(a.bits64() == b.bits64());
  RandomStream c(42, StreamPurpose::poisson, 8), d(43, StreamPurpose::poisson, 7), e(42, StreamPurpose::weights, 7);
  RandomStream ref(42, StreamPurpose::poisson, 7);
  const auto first = ref.bits64();
  CHECK(c.bits64() != first);
  CHECK(d.bits64() != first);
  CHECK(e.bits64() != first);
}

TEST_CASE("seek_block addresses a draw without drawing the ones before", "[random]") {
  RandomStream a(1, StreamPurpose::connectivity, 3);
  for (int i = 0; i < 10; ++i) a.bits64();  // 10 x 64 bits = 5 blocks of 128 bits
  const auto sixth_block = a.bits64();
  RandomStream b(1, StreamPurpose::connectivity, 3);
  b.seek_block(5);
  CHECK(b.bits64() == sixth_block);
}

TEST_CASE("uniform and normal draws have the right moments", "[random]") {
  // Moments of 10^5 draws: tolerances are 5 standard errors, so a correct
  // generator fails with probability below 1e-6 (the seed is fixed anyway).
  constexpr int n = 100000;
  RandomStream rng(2024, StreamPurpose::weights, 0);
  double su = 0, suu = 0, sn = 0, snn = 0, umin = 1, umax = 0;
  for (int i = 0; i < n; ++i) {
    const double u = rng.uniform();
    su += u; suu += u * u;
    umin = std::min(umin, u); umax = std::max(umax, u);
    const double z = rng.normal();
    sn += z; snn += z * z;
  }
  CHECK(umin > 0.0);
  CHECK(umax < 1.0);
  // Uniform(0,1): mean 1/2, variance 1/12 (textbook).
  CHECK(std::abs(su / n - 0.5) < 5 * std::sqrt(1.0 / 12 / n));
  CHECK(std::abs(suu / n - su * su / n / n - 1.0 / 12) < 5 * std::sqrt(1.0 / 180 / n));
  // Standard normal: mean 0, variance 1 (var of z^2 is 2).
  CHECK(std::abs(sn / n) < 5 * std::sqrt(1.0 / n));
  CHECK(std::abs(snn / n - 1.0) < 5 * std::sqrt(2.0 / n));
}

TEST_CASE("below(n) covers [0, n) evenly", "[random]") {
  RandomStream rng(9, StreamPurpose::connectivity, 1);
  std::vector<int> counts(7, 0);
  constexpr int n = 70000;
  for (int i = 0; i < n; ++i) {
    const auto k = rng.below(7);
    REQUIRE(k < 7);
    ++counts[k];
  }
  // Each count is binomial(n, 1/7): 5 standard deviations.
  const double sd = std::sqrt(n * (1.0 / 7) * (6.0 / 7));
  for (int c : counts) CHECK(std::abs(c - n / 7.0) < 5 * sd);
}

TEST_CASE("a block drawn without a stream equals the stream's draws after seek_block", "[random]") {
  // Hot paths (device reads, stochastic rounding) take one block directly; their
  // numbers must be the stream's, bit for bit, so either way of drawing can be used.
  for (std::uint64_t block : {std::uint64_t{0}, std::uint64_t{1}, std::uint64_t{77}, std::uint64_t{4'000'000'000}}) {
    const std::uint64_t entity = (std::uint64_t{3} << 40) | 12345;
    const RandomBlock b = random_block(2024, StreamPurpose::device_read_noise, entity, block);

    RandomStream uniforms(2024, StreamPurpose::device_read_noise, entity);
    uniforms.seek_block(block);
    CHECK(block_uniform(b, 0) == uniforms.uniform());
    CHECK(block_uniform(b, 1) == uniforms.uniform());

    RandomStream normals(2024, StreamPurpose::device_read_noise, entity);
    normals.seek_block(block);
    const std::array<double, 2> z = block_normals(b);
    CHECK(z[0] == normals.normal());
    CHECK(z[1] == normals.normal());
  }
}

TEST_CASE("both normals of a block are standard and uncorrelated", "[random]") {
  // 10^5 blocks; 5 standard errors per moment (false failure below 1e-6 each).
  // The correlation of independent normals has standard error 1/sqrt(n).
  constexpr int n = 100000;
  double s0 = 0, s1 = 0, s00 = 0, s11 = 0, s01 = 0;
  for (int i = 0; i < n; ++i) {
    const std::array<double, 2> z = block_normals(random_block(7, StreamPurpose::device_read_noise, 1, i));
    s0 += z[0]; s1 += z[1];
    s00 += z[0] * z[0]; s11 += z[1] * z[1]; s01 += z[0] * z[1];
  }
  CHECK(std::abs(s0 / n) < 5 * std::sqrt(1.0 / n));
  CHECK(std::abs(s1 / n) < 5 * std::sqrt(1.0 / n));
  CHECK(std::abs(s00 / n - 1.0) < 5 * std::sqrt(2.0 / n));
  CHECK(std::abs(s11 / n - 1.0) < 5 * std::sqrt(2.0 / n));
  CHECK(std::abs(s01 / n) < 5 * std::sqrt(1.0 / n));
}
