#include <catch2/catch.hpp>
#include <cmath>
#include <set>

#include "network/wiring.hpp"

using namespace nvsyn;

TEST_CASE("random wiring makes each pair with probability p", "[wiring]") {
  WiringContext c{5, 1, 400, 300, false, false};
  const double p = 0.1;
  const auto edges = wire_random(c, p);
  // Binomial(n_pre n_post, p): 5 standard deviations.
  const double n = 400.0 * 300.0;
  CHECK(std::abs(static_cast<double>(edges.size()) - n * p) < 5 * std::sqrt(n * p * (1 - p)));
  std::set<std::pair<std::uint32_t, std::uint32_t>> unique;
  for (const auto& e : edges) unique.insert({e.pre, e.post});
  CHECK(unique.size() == edges.size());
}

TEST_CASE("in-degree wiring gives every target exactly k distinct sources, no self loops", "[wiring]") {
  WiringContext c{5, 2, 50, 50, true, false};
  const auto edges = wire_in_degree(c, 49);
  std::vector<std::set<std::uint32_t>> sources(50);
  for (const auto& e : edges) {
    REQUIRE(e.pre != e.post);
    sources[e.post].insert(e.pre);
  }
  for (const auto& s : sources) CHECK(s.size() == 49);
}

TEST_CASE("compressed rows keep synapses contiguous by source", "[wiring]") {
  std::vector<Edge> edges{{2, 0}, {0, 1}, {2, 3}, {0, 2}};
  auto store = SynapseStore::from_edges(3, edges);
  CHECK(store.begin(0) == 0);
  CHECK(store.end(0) == 2);
  CHECK(store.begin(1) == store.end(1));
  CHECK(store.post[0] == 1);
  CHECK(store.post[1] == 2);
  CHECK(store.post[2] == 0);
  CHECK(store.post[3] == 3);
  CHECK(store.pre_indices() == std::vector<std::uint32_t>{0, 0, 2, 2});
}
