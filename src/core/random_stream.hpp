#pragma once
// Counter-based random streams (Philox4x32-10, Salmon et al., SC'11, via Random123).
//
// A stream is keyed by (seed, purpose, entity): the numbers it yields depend on
// nothing else. Guarantee: the same seed gives the same bits for any thread count,
// process count or processing order, because no two entities ever share a stream
// and no stream depends on how many numbers other streams have drawn.
// Creating a stream is cheap (no state beyond the key and a counter), so per-synapse
// or per-neuron streams may be recreated on demand instead of stored.
#include <Random123/philox.h>

#include <array>
#include <cstdint>

namespace nvsyn {

// What the numbers are for. Values are part of the reproducibility contract:
// never renumber an existing purpose, only append.
enum class StreamPurpose : std::uint32_t {
  connectivity = 1,
  weights = 2,
  delays = 3,
  poisson = 4,
  device_variability = 5,
  device_programming_noise = 6,
  device_read_noise = 7,
  device_faults = 8,
  plasticity = 9,
  stochastic_rounding = 10,
  input_encoding = 11,
  initial_state = 12,
};

// One block of a stream without a stream object, for hot paths that need exactly one
// block (a device read, a rounding draw). `random_block(seed, purpose, entity, b)` holds
// the four words a RandomStream(seed, purpose, entity) yields after seek_block(b), so the
// numbers below equal that stream's draws bit for bit.
using RandomBlock = std::array<std::uint32_t, 4>;
inline RandomBlock random_block(std::uint64_t seed, StreamPurpose purpose, std::uint64_t entity,
                                std::uint64_t block) {
  // The key and counter layout of RandomStream (random_stream.cpp).
  const r123::Philox4x32::key_type key{{static_cast<std::uint32_t>(seed), static_cast<std::uint32_t>(seed >> 32)}};
  const r123::Philox4x32::ctr_type counter{{static_cast<std::uint32_t>(block), static_cast<std::uint32_t>(purpose),
                                           static_cast<std::uint32_t>(entity),
                                           static_cast<std::uint32_t>(entity >> 32)}};
  const auto out = r123::Philox4x32{}(counter, key);
  return {out[0], out[1], out[2], out[3]};
}
// Uniform i (0 or 1) of a block on (0, 1): RandomStream::uniform's i-th draw after seek_block.
inline double block_uniform(const RandomBlock& b, unsigned i) {
  const std::uint64_t bits = (std::uint64_t{b[2 * i]} << 32) | b[2 * i + 1];
  return (static_cast<double>(bits >> 11) + 0.5) * 0x1.0p-53;
}
// Both standard normals of a block (one Box-Muller pair): RandomStream::normal's first
// and second draws after seek_block.
std::array<double, 2> block_normals(const RandomBlock& b);

class RandomStream {
 public:
  RandomStream(std::uint64_t seed, StreamPurpose purpose, std::uint64_t entity);

  // Uniform on (0, 1): never exactly 0 or 1, so log(u) is always finite.
  double uniform();
  // Standard normal (Box-Muller; both values of a pair are used).
  double normal();
  // Exponential with mean 1.
  double exponential();
  // Uniform integer in [0, n), n > 0, without modulo bias.
  std::uint64_t below(std::uint64_t n);
  // Raw 64 random bits.
  std::uint64_t bits64();

  // Jump to an absolute block of the stream (each block holds 4 x 32 bits).
  // Lets a caller address "the k-th draw of entity e" without drawing the k-1 before.
  void seek_block(std::uint64_t block);

 private:
  void refill();

  using Engine = r123::Philox4x32;
  Engine::key_type key_{};
  Engine::ctr_type counter_{};
  std::array<std::uint32_t, 4> buffer_{};
  unsigned used_ = 4;  // words of buffer_ consumed
  double spare_normal_ = 0.0;
  bool has_spare_normal_ = false;
};

}  // namespace nvsyn
