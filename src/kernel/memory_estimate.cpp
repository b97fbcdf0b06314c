#include "kernel/memory_estimate.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <fstream>
#include <limits>

#include "core/input_file.hpp"
#include "core/machine_memory.hpp"
#include "core/random_stream.hpp"
#include "devices/device_array.hpp"
#include "devices/device_parameters.hpp"
#include "devices/synapse_devices.hpp"
#include "inputs/current_schedule.hpp"
#include "network/synapse_store.hpp"
#include "network/wiring.hpp"
#include "neurons/registry.hpp"
#include "plasticity/learning_rule.hpp"
#include "plasticity/programming_policy.hpp"
#include "plasticity/short_term_plasticity.hpp"

namespace nvsyn {
namespace {

// Per neuron, besides the model's own state: its entry in the kernel's list of
// neurons that may fire without input.
constexpr double kKernelBytesPerNeuron = sizeof(std::uint32_t);
// SynapseStore: target index, weight and delay per synapse; a row offset per source.
constexpr double kStoreBytesPerSynapse = sizeof(std::uint32_t) + 2 * sizeof(double);
constexpr double kStoreBytesPerSource = sizeof(std::uint64_t);
// While building: the edge list the wiring rule returns, beside the store.
constexpr double kEdgeBytes = sizeof(Edge);
// Writing the connectivity into the run file: presynaptic indices and copies of
// pre, post, delay and weight (cli write_network).
constexpr double kConnectivityBytesPerSynapse = 3 * sizeof(std::uint32_t) + 2 * sizeof(double);
// A bucket of the kernel's event ring (an empty std::vector).
constexpr double kRingBucketBytes = sizeof(std::vector<int>);

// Spike-emitting size of a population or input, as the reader checked it.
double group_size(const Model& model, const std::string& name) {
  if (const PopulationSpec* p = model.find_population(name)) return p->size;
  if (const InputSpec* in = model.find_input(name)) return in->emits_spikes() ? in->size : 0;
  return 0;
}

// Rows of a connection list: its line count bounds them. Files the reader refuses
// (not regular, too large) count nothing here; the reader reports them.
double list_rows(const std::string& path) {
  std::uint64_t size = 0;
  if (input_file_problem(path, "connection list", &size) || size > kMaxTextInputBytes) return 0;
  std::ifstream in(path, std::ios::binary);
  std::vector<char> buffer(std::size_t{1} << 20);
  double lines = 1;
  while (in) {
    in.read(buffer.data(), static_cast<std::streamsize>(buffer.size()));
    lines += static_cast<double>(std::count(buffer.data(), buffer.data() + in.gcount(), '\n'));
  }
  return lines;
}

MemoryItem population_item(const Model& model, std::uint32_t id) {
  const PopulationSpec& spec = model.populations[id];
  // A group of no neurons validates the parameters and states the model's figure.
  const auto probe = make_neuron_bank(spec.neuron_model, 0, *spec.table, model.simulation.seed, id);
  MemoryItem item;
  item.what = fmt::format("population '{}'", spec.name);
  item.count = spec.size;
  item.unit = "neurons";
  item.bytes_each = static_cast<double>(probe->bytes_per_neuron()) + kKernelBytesPerNeuron;
  item.bytes = item.count * item.bytes_each;
  item.how = fmt::format("size {}", spec.size);
  item.table = spec.table.get();
  item.key = "size";
  return item;
}

MemoryItem input_item(const Model& model, std::uint32_t id) {
  const InputSpec& spec = model.inputs[id];
  MemoryItem item;
  item.what = fmt::format("input '{}'", spec.name);
  item.table = spec.table.get();
  item.key = "size";
  switch (spec.kind) {
    case InputKindSpec::poisson:
      item.count = spec.size;
      item.unit = "sources";
      item.bytes_each = sizeof(double) + sizeof(RandomStream);
      item.how = fmt::format("size {}", spec.size);
      break;
    case InputKindSpec::times: {
      double spikes = 0;
      for (const auto& train : spec.spike_times) spikes += static_cast<double>(train.size());
      item.count = spikes;
      item.unit = "spike times";
      item.bytes_each = sizeof(double);  // the copy the source keeps (the model holds the other)
      item.how = fmt::format("{} sources", spec.spike_times.size());
      item.key = "times";
      break;
    }
    case InputKindSpec::regular:
      // Every source keeps its own copy of the train.
      item.count = static_cast<double>(spec.size) * spec.count;
      item.unit = "spike times";
      item.bytes_each = sizeof(double);
      item.how = fmt::format("size {} x count {}", spec.size, spec.count);
      item.key = "count";
      break;
    case InputKindSpec::current: {
      const double neurons = spec.neurons.empty() ? model.find_population(spec.target)->size
                                                  : static_cast<double>(spec.neurons.size());
      item.count = neurons * static_cast<double>(spec.steps.size());
      item.unit = "current changes";
      item.bytes_each = sizeof(CurrentChange);
      item.how = fmt::format("{} neurons x {} steps", neurons, spec.steps.size());
      item.key = spec.table->has("steps") ? "steps" : "amplitude";
      // Changes are numbered in 32 bits to break ties between equal times.
      if (item.count > std::numeric_limits<std::uint32_t>::max())
        throw spec.table->error(item.key, fmt::format("{} makes {:g} current changes, more than the {} that nvsyn "
                                                      "numbers in 32 bits",
                                                      item.how, item.count, std::numeric_limits<std::uint32_t>::max()));
      break;
    }
  }
  item.bytes = item.count * item.bytes_each;
  return item;
}

// Expected synapses of a pathway's wiring rule, the key that states it, and how.
void expected_synapses(const Model& model, const PathwaySpec& spec, MemoryItem& item) {
  const double n_pre = group_size(model, spec.from), n_post = group_size(model, spec.to);
  const bool no_self = spec.from == spec.to && !spec.self_connections;
  switch (spec.wiring) {
    case WiringRule::one_to_one:
      item.count = std::min(n_pre, n_post);
      item.how = fmt::format("one_to_one of {}", n_pre);
      item.key = "wiring";
      break;
    case WiringRule::all_to_all:
      item.count = n_pre * n_post - (no_self ? std::min(n_pre, n_post) : 0.0);
      item.how = fmt::format("all_to_all {} x {}", n_pre, n_post);
      item.key = "wiring";
      break;
    case WiringRule::random:
      item.count = spec.probability * n_pre * n_post;
      item.how = fmt::format("p {:g} x {} x {}", spec.probability, n_pre, n_post);
      item.key = "p";
      break;
    case WiringRule::in_degree:
      item.count = static_cast<double>(spec.in_degree) * n_post;
      item.how = fmt::format("in_degree {} x {}", spec.in_degree, n_post);
      item.key = "in_degree";
      break;
    case WiringRule::list:
      item.count = list_rows(spec.list_file);
      item.how = fmt::format("rows of {}", spec.list_file);
      item.key = "file";
      break;
  }
  item.unit = "expected synapses";
}

// Bytes per synapse of a pathway: storage, build-time copies, devices, learning and
// short-term state, recorders; per-neuron parts of rules are added to item.bytes.
MemoryItem pathway_item(const Model& model, const PathwaySpec& spec) {
  MemoryItem item;
  item.what = fmt::format("pathway '{}'", spec.name);
  item.table = spec.table.get();
  expected_synapses(model, spec, item);
  const double n_pre = group_size(model, spec.from), n_post = group_size(model, spec.to);

  double per_synapse = kStoreBytesPerSynapse + kEdgeBytes;
  double fixed = kStoreBytesPerSource * (n_pre + 1);
  if (spec.wiring == WiringRule::list) per_synapse += sizeof(ListedConnection);
  if (spec.wiring == WiringRule::in_degree) fixed += n_pre;  // Floyd sampling marks
  if (model.record.connectivity) per_synapse += kConnectivityBytesPerSynapse;
  if (spec.device) {
    const DeviceParameters device = DeviceParameters::from_table(*spec.device);
    const SynapseLayoutParameters layout = SynapseLayoutParameters::from_table(*spec.synapse, device);
    const PolicyParameters policy = PolicyParameters::from_table(*spec.synapse);
    per_synapse += static_cast<double>(layout.devices() * DeviceArray::bytes_per_device() +
                                       ProgrammingPolicy::bytes_per_synapse(policy)) +
                   sizeof(double);  // the weight as initially programmed
    if (layout.layout == SynapseLayout::multi) per_synapse += sizeof(std::uint32_t);
    if (layout.refresh_interval > 0) per_synapse += sizeof(double);
  }
  if (spec.plasticity) {
    const auto rule = make_learning_rule(*spec.plasticity, 0, 0);
    per_synapse += static_cast<double>(rule->bytes_per_synapse()) + sizeof(std::uint64_t);  // + incoming index
    if (!spec.device) per_synapse += 2 * sizeof(double) + sizeof(std::uint32_t);              // update ledger
    per_synapse += sizeof(double);  // final weights written at the end
    fixed += (static_cast<double>(rule->bytes_per_neuron()) + sizeof(std::uint64_t)) * (n_post + 1);
  }
  if (spec.short_term) per_synapse += static_cast<double>(ShortTermPlasticity::bytes_per_synapse());
  for (const WeightRecordSpec& w : model.record.weights) {
    if (w.pathway != spec.name) continue;
    if (w.all_synapses) per_synapse += sizeof(std::uint64_t);  // the list of recorded synapses
    if (w.every_change) per_synapse += sizeof(std::int64_t);   // position of each synapse in it
  }
  item.bytes_each = per_synapse;
  item.bytes = item.count * per_synapse + fixed;
  return item;
}

// The kernel's ring holds one bucket per window up to the longest delay. Only
// known here when every pathway states finite delay bounds; the builder checks the
// real ring before allocating it.
void add_ring_item(const Model& model, MemoryEstimate& e) {
  double d_min = std::numeric_limits<double>::infinity(), d_max = 0.0;
  const PathwaySpec* shortest = nullptr;
  for (const PathwaySpec& p : model.pathways) {
    if (p.wiring == WiringRule::list && !p.table->has("delay")) return;
    if (p.delay.min_value() < d_min) {
      d_min = p.delay.min_value();
      shortest = &p;
    }
    d_max = std::max(d_max, p.delay.max_value());
  }
  if (!shortest || !(d_min > 0) || !std::isfinite(d_max)) return;
  MemoryItem item;
  item.what = "the kernel's event ring";
  item.count = std::ceil(d_max / d_min) + 2;
  item.unit = "windows of the longest delay";
  item.bytes_each = kRingBucketBytes;
  item.bytes = item.count * item.bytes_each;
  item.how = fmt::format("longest delay {} / shortest {}", format_quantity(d_max, Dimension::time),
                         format_quantity(d_min, Dimension::time));
  item.table = shortest->table.get();
  item.key = "delay";
  e.items.push_back(std::move(item));
}

}  // namespace

const MemoryItem* MemoryEstimate::largest() const {
  const MemoryItem* best = nullptr;
  for (const MemoryItem& item : items)
    if (!best || item.bytes > best->bytes) best = &item;
  return best;
}

MemoryEstimate estimate_memory(const Model& model) {
  MemoryEstimate e;
  for (std::uint32_t i = 0; i < model.populations.size(); ++i) e.items.push_back(population_item(model, i));
  for (std::uint32_t i = 0; i < model.inputs.size(); ++i) e.items.push_back(input_item(model, i));
  for (const PathwaySpec& spec : model.pathways) {
    try {
      e.items.push_back(pathway_item(model, spec));
    } catch (const UserError& error) {
      // As when building: errors from the pathway's own tables already name it.
      const std::string name = fmt::format("pathway '{}'", spec.name);
      if (error.message().find(name) != std::string::npos) throw;
      throw error.with_context("while building " + name);
    }
  }
  add_ring_item(model, e);
  for (const MemoryItem& item : e.items) e.total_bytes += item.bytes;
  return e;
}

void check_memory(const MemoryEstimate& estimate) {
  const double physical = static_cast<double>(physical_memory_bytes());
  if (physical == 0 || estimate.total_bytes <= physical) return;
  const MemoryItem& big = *estimate.largest();
  const std::string message = fmt::format(
      "the model needs an estimated {} of memory, more than this machine's {} of physical memory; the largest part "
      "is {}: {:.4g} {} ({}) x {:.0f} bytes = {}; make it smaller or run it on a larger machine",
      format_bytes(estimate.total_bytes), format_bytes(physical), big.what, big.count, big.unit, big.how,
      big.bytes_each, format_bytes(big.bytes));
  if (big.table) throw big.table->error(big.key, message);
  throw UserError(message);
}

}  // namespace nvsyn
