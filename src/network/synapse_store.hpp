#pragma once
// The synapses of one pathway, structure of arrays, contiguous by source neuron
// (compressed rows): the synapses of source s are [row_begin[s], row_begin[s+1]).
// Delivering a spike of s touches one contiguous block of each array; a source
// that never fires costs nothing but its row offset.
#include <cstdint>
#include <span>
#include <vector>

namespace nvsyn {

struct Edge {
  std::uint32_t pre = 0;
  std::uint32_t post = 0;
};

struct SynapseStore {
  std::vector<std::uint64_t> row_begin;  // n_source + 1 offsets
  std::vector<std::uint32_t> post;       // target neuron within the target population
  std::vector<double> weight;            // A (current jump)
  std::vector<double> delay;             // s

  std::size_t size() const { return post.size(); }
  std::uint32_t source_count() const { return static_cast<std::uint32_t>(row_begin.size() - 1); }
  std::uint64_t begin(std::uint32_t source) const { return row_begin[source]; }
  std::uint64_t end(std::uint32_t source) const { return row_begin[source + 1]; }

  // Builds the rows from edges in any order; within a row the order of `edges` is
  // kept (stable), so identical edge lists give identical stores.
  static SynapseStore from_edges(std::uint32_t source_count, std::span<const Edge> edges);

  // Pre-synaptic index of every synapse (for writing the connectivity out).
  std::vector<std::uint32_t> pre_indices() const;

  std::size_t bytes() const;
};

}  // namespace nvsyn
