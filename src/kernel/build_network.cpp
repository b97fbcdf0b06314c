// Turns a checked Model into a Simulation: neurons, inputs, synapses, traces.
#include <algorithm>
#include <fmt/format.h>
#include <limits>

#include "core/error.hpp"
#include "core/machine_memory.hpp"
#include "kernel/memory_estimate.hpp"
#include "kernel/run_cost.hpp"
#include "kernel/simulation_state.hpp"
#include "network/wiring.hpp"
#include "devices/device_parameters.hpp"
#include "inputs/poisson_trains.hpp"
#include "inputs/timed_spikes.hpp"
#include "neurons/registry.hpp"
#include "plasticity/learning_rule.hpp"

namespace nvsyn {
namespace {

std::uint64_t entity(std::uint32_t pathway, std::uint32_t neuron) {
  return (std::uint64_t{pathway} << 32) | neuron;
}

void build_populations(const Model& model, Simulation::State& s) {
  for (std::uint32_t i = 0; i < model.populations.size(); ++i) {
    const PopulationSpec& spec = model.populations[i];
    spec.table->mark_used("size");
    spec.table->mark_used("neuron");
    Population pop;
    pop.name = spec.name;
    pop.neurons = make_neuron_bank(spec.neuron_model, spec.size, *spec.table, s.seed, i);
    spec.table->reject_unknown_keys();
    s.network.populations.push_back(std::move(pop));
  }
}

void build_inputs(const Model& model, Simulation::State& s) {
  for (std::uint32_t i = 0; i < model.inputs.size(); ++i) {
    const InputSpec& spec = model.inputs[i];
    InputChannel group;
    group.name = spec.name;
    if (spec.kind == InputKindSpec::poisson) {
      group.spikes = std::make_unique<PoissonTrains>(spec.size, spec.rate, spec.start, spec.stop, s.seed, i);
    } else if (spec.kind == InputKindSpec::times) {
      group.spikes = std::make_unique<TimedSpikes>(spec.spike_times);
    } else if (spec.kind == InputKindSpec::regular) {
      group.spikes = std::make_unique<TimedSpikes>(TimedSpikes::regular(spec.size, spec.rate, spec.start, spec.count));
    } else {
      std::uint32_t target = 0;
      while (model.populations[target].name != spec.target) ++target;
      std::vector<std::uint32_t> neurons = spec.neurons;
      if (neurons.empty())
        for (std::uint32_t n = 0; n < model.populations[target].size; ++n) neurons.push_back(n);
      for (std::uint32_t n : neurons) {
        double previous = 0.0;
        for (const CurrentStep& step : spec.steps) {
          s.currents.add(step.time, step.amplitude - previous, target, n);
          previous = step.amplitude;
        }
      }
    }
    s.inputs.push_back(std::move(group));
  }
  s.currents.finalise();
}

GroupRef find_group(const Model& model, const std::string& name) {
  for (std::uint32_t i = 0; i < model.populations.size(); ++i)
    if (model.populations[i].name == name) return {false, i};
  for (std::uint32_t i = 0; i < model.inputs.size(); ++i)
    if (model.inputs[i].name == name) return {true, i};
  throw InternalError(fmt::format("group '{}' vanished after model checking", name));
}

// Puts the pathway's weights into devices: each target weight is written with
// program-and-verify at t = 0, and what the devices could not reach is recorded.
void build_devices(const PathwaySpec& spec, std::uint32_t id, std::uint64_t seed, Pathway& p) {
  const DeviceParameters device = DeviceParameters::from_table(*spec.device);
  spec.device->reject_unknown_keys();
  spec.synapse->mark_used("preset");
  spec.synapse->mark_used("device");
  const SynapseLayoutParameters layout = SynapseLayoutParameters::from_table(*spec.synapse, device);
  const PolicyParameters policy = PolicyParameters::from_table(*spec.synapse);
  spec.synapse->reject_unknown_keys();
  const std::size_t n = p.synapses.size();
  p.devices = std::make_unique<SynapseDevices>(device, layout, n, seed, id);
  p.policy = std::make_unique<ProgrammingPolicy>(policy, n, seed, id);
  p.device_preset = spec.device_preset;
  p.device_preset_text = spec.device_preset_text;
  p.initial_weight.resize(n);
  for (std::size_t k = 0; k < n; ++k) {
    const double target = std::abs(p.synapses.weight[k]);
    const VerifyResult r = p.devices->write_weight(k, target, 0.0);
    p.initial_weight[k] = p.sign() * p.devices->weight_programmed(k);
    p.initial_write.add(r, p.devices->weight_programmed(k) - target);
  }
}

// Synapses grouped by target neuron: what a postsynaptic spike or a normalisation touches.
void index_incoming(Pathway& p, std::uint32_t n_post) {
  const SynapseStore& st = p.synapses;
  p.incoming_begin.assign(std::size_t{n_post} + 1, 0);
  for (std::uint32_t post : st.post) ++p.incoming_begin[post + 1];
  for (std::uint32_t j = 0; j < n_post; ++j) p.incoming_begin[j + 1] += p.incoming_begin[j];
  p.incoming.resize(st.size());
  std::vector<std::uint64_t> fill(p.incoming_begin.begin(), p.incoming_begin.end() - 1);
  for (std::uint64_t k = 0; k < st.size(); ++k) p.incoming[fill[st.post[k]]++] = k;
}

// [pathway.<name>.plasticity]: the rule and its parameters, when it learns, rewards
// and normalisation of each neuron's incoming weights.
void build_learning(const PathwaySpec& spec, Pathway& p) {
  const ParamTable& t = *spec.plasticity;
  p.learn_from = t.quantity_or("active_from", QuantityKind::time_point, 0.0);
  p.learn_until = t.quantity_or("active_until", QuantityKind::time_point, p.learn_until);
  if (p.learn_from < 0) throw t.error("active_from", "must not be negative");
  if (!(p.learn_until > p.learn_from)) throw t.error("active_until", "must be later than active_from");
  if (t.has("rewards"))
    for (const ParamValue& item : t.array("rewards")) {
      const auto* pair = std::get_if<std::shared_ptr<ParamValue::Array>>(&item.value);
      if (!pair || (*pair)->size() != 2)
        throw UserError(item.where, "rewards", "each reward is a pair [\"<time>\", <size>], e.g. [\"1.5 s\", 1.0]");
      const double at = t.to_quantity((**pair)[0], "rewards", QuantityKind::time_point);
      const double size = t.to_quantity((**pair)[1], "rewards", QuantityKind::reward);
      if (at < 0) throw UserError(item.where, "rewards", "reward times must not be negative");
      p.rewards.emplace_back(at, size);
    }
  std::stable_sort(p.rewards.begin(), p.rewards.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
  p.normalise_interval = t.quantity_or("normalise_interval", QuantityKind::interval, 0.0);
  if (p.normalise_interval < 0) throw t.error("normalise_interval", "must not be negative (0: off)");
  if (p.normalise_interval > 0) {
    p.normalise_total = t.quantity("normalise_total", QuantityKind::weight_scale);
    if (!(p.normalise_total > 0)) throw t.error("normalise_total", "must be positive: the sum of |w| onto each neuron");
  }
  t.mark_used("normalise_total");
  p.rule = make_learning_rule(t, p.synapses.size(), p.target_size);
  if (!p.rewards.empty() && !p.rule->uses_reward())
    throw t.error("rewards", fmt::format("rule '{}' does not use rewards; use rule = \"reward_stdp\"", p.rule->name()));
  t.reject_unknown_keys();
  if (!p.devices) p.plain_ledger = UpdateLedger(p.synapses.size());
}

void build_pathway(const Model& model, std::uint32_t id, Simulation::State& s) {
  const PathwaySpec& spec = model.pathways[id];
  Pathway p;
  p.name = spec.name;
  p.from = spec.from;
  p.to = spec.to;
  p.source = find_group(model, spec.from);
  p.target = find_group(model, spec.to).index;
  p.receptor = spec.receptor == "inhibitory" ? Receptor::inhibitory : Receptor::excitatory;
  p.wiring = std::string(wiring_rule_name(spec.wiring));

  WiringContext c;
  c.seed = s.seed;
  c.pathway_id = id;
  c.n_pre = p.source.is_input ? s.inputs[p.source.index].spikes->size()
                              : s.network.populations[p.source.index].size();
  c.n_post = s.network.populations[p.target].size();
  c.same_group = !p.source.is_input && p.source.index == p.target;
  c.self_connections = spec.self_connections;

  std::vector<Edge> edges;
  ConnectionList listed;
  switch (spec.wiring) {
    case WiringRule::one_to_one: edges = wire_one_to_one(c); break;
    case WiringRule::all_to_all: edges = wire_all_to_all(c); break;
    case WiringRule::random: edges = wire_random(c, spec.probability); break;
    case WiringRule::in_degree: edges = wire_in_degree(c, spec.in_degree); break;
    case WiringRule::list:
      listed = read_connection_list(spec.list_file, c.n_pre, c.n_post, model.ranges.get());
      if (!listed.has_weight && !spec.table->has("weight"))
        throw spec.table->error("file", "the list has no weight column, so the pathway needs 'weight'");
      if (!listed.has_delay && !spec.table->has("delay"))
        throw spec.table->error("file", "the list has no delay column, so the pathway needs 'delay'");
      for (const auto& row : listed.rows) edges.push_back(row.edge);
      break;
  }
  p.synapses = SynapseStore::from_edges(c.n_pre, edges);
  p.target_size = c.n_post;

  // Draw weights and delays per source neuron, in row order: independent of how
  // sources are later distributed over threads or processes.
  SynapseStore& st = p.synapses;
  for (std::uint32_t pre = 0; pre < c.n_pre; ++pre) {
    if (st.begin(pre) == st.end(pre)) continue;
    RandomStream wr(s.seed, StreamPurpose::weights, entity(id, pre));
    RandomStream dr(s.seed, StreamPurpose::delays, entity(id, pre));
    for (std::uint64_t k = st.begin(pre); k < st.end(pre); ++k) {
      st.weight[k] = spec.weight.draw(wr);
      st.delay[k] = spec.delay.draw(dr);
    }
  }
  if (spec.wiring == WiringRule::list && (listed.has_weight || listed.has_delay)) {
    // from_edges keeps the list's order within each row; walk it the same way.
    std::vector<std::uint64_t> fill(st.row_begin.begin(), st.row_begin.end() - 1);
    for (const auto& row : listed.rows) {
      const std::uint64_t k = fill[row.edge.pre]++;
      if (listed.has_weight) {
        const bool bad = p.receptor == Receptor::excitatory ? row.weight < 0 : row.weight > 0;
        if (bad)
          throw spec.table->error("file", fmt::format("{}: weight {} has the wrong sign for a {} pathway", spec.list_file, row.weight, spec.receptor));
        st.weight[k] = row.weight;
      }
      if (listed.has_delay) st.delay[k] = row.delay;
    }
  }
  if (spec.device) build_devices(spec, id, s.seed, p);
  if (spec.plasticity) build_learning(spec, p);
  if (spec.short_term) {
    p.short_term = std::make_unique<ShortTermPlasticity>(ShortTermPlasticityParameters::from_table(*spec.short_term),
                                                         p.synapses.size());
    spec.short_term->reject_unknown_keys();
  }
  s.network.pathways.push_back(std::move(p));
}

void build_traces(const Model& model, Simulation::State& s) {
  for (const TraceSpec& spec : model.record.traces) {
    std::uint32_t pop = 0;
    while (model.populations[pop].name != spec.population) ++pop;
    const auto vars = s.network.populations[pop].neurons->variables();
    for (const std::string& name : spec.variables) {
      auto it = std::find_if(vars.begin(), vars.end(), [&](const TraceVariable& v) { return v.name == name; });
      if (it == vars.end()) {
        std::string known;
        for (const auto& v : vars) known += (known.empty() ? "" : ", ") + std::string(v.name);
        throw spec.table->error("variables", fmt::format("model '{}' has no variable '{}'; it records {}",
                                                         s.network.populations[pop].neurons->model_name(), name, known));
      }
      TraceStream t;
      t.population = pop;
      t.variable = name;
      t.variable_index = static_cast<std::uint32_t>(it - vars.begin());
      t.dimension = it->dimension;
      t.neurons = spec.neurons;
      t.interval = spec.interval;
      s.traces.push_back(std::move(t));
    }
  }
}

void build_learning_indices(Simulation::State& s) {
  s.learning_inputs.assign(s.network.populations.size(), {});
  for (std::uint32_t id = 0; id < s.network.pathways.size(); ++id) {
    Pathway& p = s.network.pathways[id];
    if (!p.rule) continue;
    index_incoming(p, p.target_size);
    s.learning_inputs[p.target].push_back(id);
  }
}

void build_weight_recorders(const Model& model, Simulation::State& s) {
  s.change_recorders.assign(s.network.pathways.size(), {});
  for (const WeightRecordSpec& spec : model.record.weights) {
    WeightRecorder r;
    r.name = spec.pathway;
    while (s.network.pathways[r.pathway].name != spec.pathway) ++r.pathway;
    const Pathway& p = s.network.pathways[r.pathway];
    if (spec.all_synapses) {
      r.synapses.resize(p.synapses.size());
      for (std::uint64_t k = 0; k < p.synapses.size(); ++k) r.synapses[k] = k;
    } else {
      r.synapses = spec.synapses;
      for (std::uint64_t k : r.synapses)
        if (k >= p.synapses.size())
          throw spec.table->error("synapses", fmt::format("synapse {} does not exist: pathway '{}' has {} synapses",
                                                          k, p.name, p.synapses.size()));
    }
    r.interval = spec.interval;
    r.every_change = spec.every_change;
    r.snapshots = spec.snapshots;
    if (r.every_change) {
      r.position.assign(p.synapses.size(), -1);
      for (std::size_t i = 0; i < r.synapses.size(); ++i) r.position[r.synapses[i]] = static_cast<std::int64_t>(i);
      s.change_recorders[r.pathway].push_back(static_cast<std::uint32_t>(s.weight_recorders.size()));
    }
    s.weight_recorders.push_back(std::move(r));
  }
}

}  // namespace

Simulation Simulation::build(const Model& model, const BuildOptions& options) {
  // Nothing is allocated before the model is known to fit into this machine.
  check_memory(estimate_memory(model));
  auto s = std::make_unique<State>();
  s->seed = options.seed.value_or(model.simulation.seed);
  s->duration = options.duration.value_or(model.simulation.duration);
  build_populations(model, *s);
  build_inputs(model, *s);
  for (std::uint32_t id = 0; id < model.pathways.size(); ++id) {
    try {
      build_pathway(model, id, *s);
    } catch (const UserError& e) {
      // Errors from the pathway's own table already say which pathway they are in.
      const std::string name = fmt::format("pathway '{}'", model.pathways[id].name);
      if (e.message().find(name) != std::string::npos) throw;
      throw e.with_context("while building " + name);
    }
  }
  build_traces(model, *s);
  build_learning_indices(*s);
  build_weight_recorders(model, *s);
  for (const auto& name : model.record.spike_populations)
    s->recorded_populations.push_back(find_group(model, name).index);

  // Group-global ids and outgoing pathway lists.
  const std::size_t groups = s->network.populations.size() + s->inputs.size();
  s->group_offset.resize(groups + 1, 0);
  for (std::size_t g = 0; g < groups; ++g) {
    const std::uint32_t size = g < s->network.populations.size()
                                   ? s->network.populations[g].size()
                                   : (s->inputs[g - s->network.populations.size()].spikes
                                          ? s->inputs[g - s->network.populations.size()].spikes->size()
                                          : 0);
    s->group_offset[g + 1] = s->group_offset[g] + size;
  }
  s->outgoing.resize(groups);
  double d_min = std::numeric_limits<double>::infinity(), d_max = 0.0;
  std::uint32_t shortest = 0;
  for (std::uint32_t id = 0; id < s->network.pathways.size(); ++id) {
    const Pathway& p = s->network.pathways[id];
    const std::size_t g = p.source.is_input ? s->network.populations.size() + p.source.index : p.source.index;
    s->outgoing[g].push_back(id);
    for (double d : p.synapses.delay) {
      if (d < d_min) shortest = id;
      d_min = std::min(d_min, d);
      d_max = std::max(d_max, d);
    }
  }
  // Without synapses any window length is exact; 1 ms keeps progress reports regular.
  if (!std::isfinite(d_min)) d_min = d_max = 1e-3;
  s->network.min_delay = d_min;
  s->network.max_delay = d_max;
  s->window = d_min;
  // One bucket per window up to the longest delay: checked before allocating, since
  // implausible delays (allowed on purpose) can ask for more than any machine holds.
  const double buckets = std::ceil(d_max / d_min) + 2;
  const double ring_bytes = buckets * sizeof(s->ring[0]);
  const double physical = static_cast<double>(physical_memory_bytes());
  if (physical > 0 && !(ring_bytes <= physical))
    throw model.pathways[shortest].table->error(
        model.pathways[shortest].wiring == WiringRule::list && !model.pathways[shortest].table->has("delay") ? "file"
                                                                                                           : "delay",
        fmt::format("the delays range from {} to {}: the kernel's event ring needs {:.3g} windows ({}), more than "
                    "this machine's {} of physical memory",
                    format_quantity(d_min, Dimension::time), format_quantity(d_max, Dimension::time), buckets,
                    format_bytes(ring_bytes), format_bytes(physical)));
  s->ring.resize(static_cast<std::size_t>(buckets));
  std::vector<std::uint32_t> sizes;
  for (const Population& pop : s->network.populations) sizes.push_back(pop.neurons->size());
  s->blocks = partition_into_blocks(sizes);
  s->block_calendar.reserve(s->blocks.size());
  for (const NeuronBlock& block : s->blocks) {
    const NeuronBank& g = *s->network.populations[block.population].neurons;
    WakeCalendar& calendar = s->block_calendar.emplace_back(block.count);
    for (std::uint32_t i = 0; i < block.count; ++i) calendar.set(i, g.earliest_threshold_time(block.first + i));
  }
  s->threads = options.threads > 0 ? options.threads : default_thread_count();
  Simulation sim(std::move(s));
  check_run_cost(estimate_run_cost(sim), sim, model, options);
  return sim;
}

}  // namespace nvsyn
