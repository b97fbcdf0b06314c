#pragma once
// Connectivity rules. Each draws from streams keyed by (seed, connectivity,
// pathway, neuron), so the same seed gives the same synapses however the work
// is split between threads or processes.
#include <cstdint>
#include <string>
#include <vector>

#include "core/plausible_range.hpp"
#include "network/synapse_store.hpp"

namespace nvsyn {

struct WiringContext {
  std::uint64_t seed = 0;
  std::uint32_t pathway_id = 0;
  std::uint32_t n_pre = 0;
  std::uint32_t n_post = 0;
  bool same_group = false;        // pre and post are the same population
  bool self_connections = false;  // allow pre == post when same_group
};

std::vector<Edge> wire_one_to_one(const WiringContext& c);
std::vector<Edge> wire_all_to_all(const WiringContext& c);
// Each (pre, post) pair independently with probability p (geometric skipping:
// cost proportional to the synapses made, not to n_pre * n_post).
std::vector<Edge> wire_random(const WiringContext& c, double p);
// Every post neuron receives exactly k distinct pre neurons (Floyd's sampling).
std::vector<Edge> wire_in_degree(const WiringContext& c, std::uint32_t k);

// A connection list from a CSV file with header "pre,post" and optionally
// "weight [<unit>]" and "delay [<unit>]" columns, e.g.
//   pre,post,weight [nA],delay [ms]
//   0,3,0.25,1.5
// Errors name the file and row. Weights and delays are checked like those of model
// files (finite, within the plausible range of a current and a delay, as `ranges`
// says: core/plausible_range.hpp).
struct ListedConnection {
  Edge edge;
  double weight = 0.0;  // A, when has_weight
  double delay = 0.0;   // s, when has_delay
};
struct ConnectionList {
  std::vector<ListedConnection> rows;
  bool has_weight = false;
  bool has_delay = false;
};
ConnectionList read_connection_list(const std::string& path, std::uint32_t n_pre, std::uint32_t n_post,
                                    RangePolicy* ranges = nullptr);

}  // namespace nvsyn
