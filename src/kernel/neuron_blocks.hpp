#pragma once
// The fixed partition of every population into blocks of consecutive neurons: the
// unit of work that threads share within a window, and the unit whose results
// (spikes, weight changes, sums over weight updates) are merged in a fixed order.
//
// Blocks depend on the population sizes alone, never on the thread count. The
// kernel merges what each block produced in block order, which is (population,
// neuron) order, the order a single thread visits neurons in; so a sum of doubles
// over weight updates is added up in the same order, and gives the same bits, for
// any number of threads.
#include <algorithm>
#include <cstdint>
#include <vector>

namespace nvsyn {

struct NeuronBlock {
  std::uint32_t population = 0;
  std::uint32_t first = 0;  // first neuron within the population
  std::uint32_t count = 0;
};

// At least 256 neurons a block (so that a block's bookkeeping is small against its
// work), and at most 256 blocks a population (so that the per-window cost of looking
// at every block stays small for a million neurons), a block never crossing
// populations. With 2-16 threads that leaves enough blocks to balance the load.
inline std::vector<NeuronBlock> partition_into_blocks(const std::vector<std::uint32_t>& population_sizes) {
  constexpr std::uint32_t kMinBlock = 256, kMaxBlocksPerPopulation = 256;
  std::vector<NeuronBlock> blocks;
  for (std::uint32_t p = 0; p < population_sizes.size(); ++p) {
    const std::uint32_t n = population_sizes[p];
    const std::uint32_t size = std::max(kMinBlock, (n + kMaxBlocksPerPopulation - 1) / kMaxBlocksPerPopulation);
    for (std::uint32_t first = 0; first < n; first += size) blocks.push_back({p, first, std::min(size, n - first)});
  }
  return blocks;
}

}  // namespace nvsyn
