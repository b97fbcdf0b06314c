#include "network/synapse_store.hpp"

namespace nvsyn {

SynapseStore SynapseStore::from_edges(std::uint32_t source_count, std::span<const Edge> edges) {
  SynapseStore s;
  s.row_begin.assign(std::size_t{source_count} + 1, 0);
  for (const Edge& e : edges) ++s.row_begin[e.pre + 1];
  for (std::uint32_t i = 0; i < source_count; ++i) s.row_begin[i + 1] += s.row_begin[i];
  s.post.resize(edges.size());
  std::vector<std::uint64_t> fill(s.row_begin.begin(), s.row_begin.end() - 1);
  for (const Edge& e : edges) s.post[fill[e.pre]++] = e.post;
  s.weight.assign(edges.size(), 0.0);
  s.delay.assign(edges.size(), 0.0);
  return s;
}

std::vector<std::uint32_t> SynapseStore::pre_indices() const {
  std::vector<std::uint32_t> pre(size());
  for (std::uint32_t s = 0; s < source_count(); ++s)
    for (std::uint64_t k = begin(s); k < end(s); ++k) pre[k] = s;
  return pre;
}

std::size_t SynapseStore::bytes() const {
  return row_begin.size() * sizeof(std::uint64_t) +
         size() * (sizeof(std::uint32_t) + 2 * sizeof(double));
}

}  // namespace nvsyn
