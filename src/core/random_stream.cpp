#include "core/random_stream.hpp"

#include <cmath>
#include <numbers>

namespace nvsyn {

RandomStream::RandomStream(std::uint64_t seed, StreamPurpose purpose, std::uint64_t entity) {
  key_[0] = static_cast<std::uint32_t>(seed);
  key_[1] = static_cast<std::uint32_t>(seed >> 32);
  // counter words: [0] block index (advances), [1] purpose, [2..3] entity
  counter_[0] = 0;
  counter_[1] = static_cast<std::uint32_t>(purpose);
  counter_[2] = static_cast<std::uint32_t>(entity);
  counter_[3] = static_cast<std::uint32_t>(entity >> 32);
}

void RandomStream::seek_block(std::uint64_t block) {
  // Blocks beyond 2^32 per entity are not needed by any model: one entity drawing
  // 2^34 numbers would be ~10^10 Poisson spikes from one source.
  counter_[0] = static_cast<std::uint32_t>(block);
  used_ = 4;
  has_spare_normal_ = false;
}

void RandomStream::refill() {
  Engine engine;
  auto out = engine(counter_, key_);
  for (unsigned i = 0; i < 4; ++i) buffer_[i] = out[i];
  ++counter_[0];
  used_ = 0;
}

std::uint64_t RandomStream::bits64() {
  if (used_ > 2) refill();
  std::uint64_t hi = buffer_[used_];
  std::uint64_t lo = buffer_[used_ + 1];
  used_ += 2;
  return (hi << 32) | lo;
}

double RandomStream::uniform() {
  // 53 random bits, shifted by half an ulp so the result lies in (0, 1).
  const std::uint64_t b = bits64() >> 11;
  return (static_cast<double>(b) + 0.5) * 0x1.0p-53;
}

namespace {

// Box-Muller (Box & Muller, Ann. Math. Stat. 29:610, 1958): two independent standard
// normals from two uniforms, r cos(phi) and r sin(phi).
std::array<double, 2> box_muller(double u1, double u2) {
  const double r = std::sqrt(-2.0 * std::log(u1));
  const double phi = 2.0 * std::numbers::pi * u2;
  return {r * std::cos(phi), r * std::sin(phi)};
}

}  // namespace

std::array<double, 2> block_normals(const RandomBlock& b) { return box_muller(block_uniform(b, 0), block_uniform(b, 1)); }

double RandomStream::normal() {
  if (has_spare_normal_) {
    has_spare_normal_ = false;
    return spare_normal_;
  }
  const double u1 = uniform();
  const auto z = box_muller(u1, uniform());
  spare_normal_ = z[1];
  has_spare_normal_ = true;
  return z[0];
}

double RandomStream::exponential() { return -std::log(uniform()); }

__extension__ typedef unsigned __int128 Uint128;

std::uint64_t RandomStream::below(std::uint64_t n) {
  // Lemire's rejection keeps the draw unbiased for every n.
  const std::uint64_t limit = (0 - n) % n;
  for (;;) {
    const std::uint64_t b = bits64();
    const Uint128 m = static_cast<Uint128>(b) * n;
    if (static_cast<std::uint64_t>(m) >= limit) return static_cast<std::uint64_t>(m >> 64);
  }
}

}  // namespace nvsyn
