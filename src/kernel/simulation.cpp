#include "kernel/simulation.hpp"

#include <algorithm>
#include <bit>
#include <chrono>
#include <cmath>
#include <exception>
#include <fmt/format.h>
#include <tuple>
#include <utility>

#include "core/error.hpp"
#include "core/run_failure.hpp"
#include "kernel/simulation_state.hpp"
#include "kernel/worker_team.hpp"

namespace nvsyn {

Simulation::Simulation(std::unique_ptr<State> state) : state_(std::move(state)) {}
Simulation::Simulation(Simulation&&) noexcept = default;
Simulation& Simulation::operator=(Simulation&&) noexcept = default;
Simulation::~Simulation() = default;

const Network& Simulation::network() const { return state_->network; }
const std::vector<InputChannel>& Simulation::inputs() const { return state_->inputs; }
const std::vector<TraceStream>& Simulation::traces() const { return state_->traces; }
const std::vector<std::uint32_t>& Simulation::recorded_populations() const { return state_->recorded_populations; }
const std::vector<WeightRecorder>& Simulation::weight_recorders() const { return state_->weight_recorders; }
std::uint64_t Simulation::seed() const { return state_->seed; }
unsigned Simulation::threads() const { return state_->threads; }
double Simulation::duration() const { return state_->duration; }
double Simulation::window() const { return state_->window; }
double Simulation::time_reached() const {
  return std::min(static_cast<double>(state_->next_window) * state_->window, state_->duration);
}

void Simulation::add_reward(const std::string& pathway, double t, double r) {
  State& s = *state_;
  for (std::uint32_t id = 0; id < s.network.pathways.size(); ++id) {
    Pathway& p = s.network.pathways[id];
    if (p.name != pathway) continue;
    if (!p.rule || !p.rule->uses_reward())
      throw UserError({}, "reward", fmt::format("pathway '{}' has no reward-modulated rule", pathway));
    const double now = static_cast<double>(s.next_window) * s.window;
    if (t < now) throw UserError({}, "reward", fmt::format("reward at {} s lies before the present model time {} s", t, now));
    // Keep the unread part of the schedule sorted; what was delivered stays in front.
    const std::size_t first = s.next_reward.empty() ? 0 : s.next_reward[id];
    auto at = std::upper_bound(p.rewards.begin() + static_cast<std::ptrdiff_t>(first), p.rewards.end(), t,
                               [](double x, const auto& e) { return x < e.first; });
    p.rewards.insert(at, {t, r});
    return;
  }
  throw UserError({}, "reward", fmt::format("no pathway named '{}'", pathway));
}

namespace {

struct WindowSpike {
  double time;
  std::uint32_t gid;     // group-global id (tie-breaker, and which group)
  std::uint32_t group;   // population index, or P + input index
  std::uint32_t index;   // neuron / source within its group
};

struct SampleRow {
  std::uint32_t trace;
  double time;
  std::uint32_t first_slot;
};

// An event that concerns a whole pathway or recorder, applied between neuron
// updates: everything before its time is done, nothing after it has started.
enum class GlobalKind : std::uint8_t { reward, normalisation, weight_sample, snapshot };
struct GlobalEvent {
  double time;
  GlobalKind kind;
  std::uint32_t index;  // pathway or recorder
  double value;         // reward size
};

// Events of one neuron within the sorted bucket: [begin, end), next = first not yet applied.
struct NeuronRun {
  std::uint32_t neuron;
  std::size_t next, end;
};

// Order of the events of one target neuron: by time; at equal times by kind (InputKind
// order: current change, synaptic, sample), then by emitting source, pathway and synapse
// (the documented equal-time order, DEVELOPERS.md "The kernel"). Current changes have
// `order` 0 and a unique sequence number in `pathway`; samples have their slot in
// `order`, given in trace order, so samples of one time keep their trace order.
// A function object rather than a function, so that std::sort inlines the comparison.
struct TargetEventOrder {
  bool operator()(const PendingEvent& a, const PendingEvent& b) const {
    if (a.time != b.time) return a.time < b.time;
    if (a.kind != b.kind) return a.kind < b.kind;
    if (a.order != b.order) return a.order < b.order;
    if (a.pathway != b.pathway) return a.pathway < b.pathway;
    return a.kind == InputKind::synaptic && a.synapse < b.synapse;
  }
};

// Where the weight updates of one block of neurons (or of one global event) go:
// the changes that recorders log, and the pathway-wide counts and sums. Kept per
// block and merged in block order (kernel/neuron_blocks.hpp).
struct UpdateSink {
  std::vector<std::vector<WeightChange>> changes;  // per recorder
  std::vector<LedgerTotals> totals;                // per pathway
  std::vector<std::uint8_t> listed;                // per pathway: in `updated`
  std::vector<std::uint32_t> updated;              // pathways whose totals may be non-zero

  void resize(std::size_t recorders, std::size_t pathways) {
    changes.resize(recorders);
    totals.resize(pathways);
    listed.resize(pathways, 0);
  }
  LedgerTotals& totals_for(std::uint32_t path_id) {
    if (!listed[path_id]) {
      listed[path_id] = 1;
      updated.push_back(path_id);
    }
    return totals[path_id];
  }
  // Adds the totals to the pathways' ledgers and the changes to `window_changes`
  // (per recorder), and empties the sink.
  void merge_into(Network& network, std::vector<std::vector<WeightChange>>& window_changes) {
    for (std::uint32_t id : updated) {
      Pathway& p = network.pathways[id];
      if (p.devices) p.policy->merge_totals(totals[id]);
      else p.plain_ledger.totals.merge(totals[id]);
      totals[id] = {};
      listed[id] = 0;
    }
    updated.clear();
    for (std::size_t r = 0; r < changes.size(); ++r) {
      if (changes[r].empty()) continue;
      window_changes[r].insert(window_changes[r].end(), changes[r].begin(), changes[r].end());
      changes[r].clear();
    }
  }
};

// What the neurons of one block produced. Spikes and the event count gather over the
// window, updates over one segment.
struct alignas(64) BlockOutput {
  std::vector<WindowSpike> spikes;
  std::uint64_t synaptic_events = 0;
  UpdateSink updates;
  std::exception_ptr failure;  // the first failure of the block's neurons, if any
  // The block's neurons that have events this window, in neuron order, and the
  // grouped events they index (those of the block's TargetPart).
  std::vector<NeuronRun> runs;
  const PendingEvent* events = nullptr;
};

// Buffers of one thread, reused for every neuron it processes. Aligned to a cache
// line, like BlockOutput, so that threads never write to one line (false sharing).
struct alignas(64) WorkerScratch {
  std::vector<double> neuron_spikes;
  std::vector<std::uint32_t> due;  // neurons whose wake-up time falls in the segment
};

// A contiguous range of blocks whose events one thread groups by target.
struct alignas(64) TargetPart {
  std::uint32_t first_block = 0, end_block = 0;
  std::uint32_t first_gid = 0, end_gid = 0;  // the blocks' neurons, group-global ids
  std::vector<std::uint32_t> targets;        // targets with events this window
  std::vector<std::uint64_t> marks;          // bit per neuron of the range: has events
  std::vector<PendingEvent> sorted;          // the part's events, grouped by target
};

// Reusable buffers of the event loop: allocated once, reused every window.
struct Scratch {
  std::vector<WorkerScratch> workers;
  std::vector<BlockOutput> blocks;
  std::vector<std::uint32_t> active;  // blocks with work in the present segment
  UpdateSink global_updates;          // of the global events (serial)
  std::vector<WindowSpike> spikes;
  std::vector<SourceSpike> source_spikes;
  std::vector<std::vector<double>> samples;  // per population
  std::vector<std::uint32_t> sample_slots;   // per population: slots used this window
  std::vector<SampleRow> sample_rows;
  std::vector<double> sample_values;
  std::vector<double> spike_times;
  std::vector<std::uint32_t> spike_neurons;
  std::vector<std::uint64_t> next_sample;  // per trace: index of the next sample time
  std::vector<TargetPart> parts;
  // Counting sort by target (group-global neuron id): events per target, then where
  // each target's events start. Zero between windows; parts use disjoint ranges.
  std::vector<std::uint32_t> target_start;
  std::vector<GlobalEvent> globals;
  std::vector<std::vector<WeightChange>> changes;  // per recorder, this window
  std::vector<double> weights;
};

// Applies a requested change of |w| to synapse k: through the programming policy
// and devices, or to the floating-point weight within [0, w_max].
UpdateOutcome apply_change(Simulation::State& s, UpdateSink& sink, std::uint32_t path_id, std::uint64_t k, double dw,
                           double t) {
  Pathway& p = s.network.pathways[path_id];
  // A non-finite request (a trace or rule parameter that overflowed) must not reach
  // the weights, the devices or the ledgers.
  if (!std::isfinite(dw)) [[unlikely]]
    throw RunFailure(fmt::format("pathway '{}', synapse {}", p.name, k),
                     fmt::format("{} (learning rule {})", not_finite("the requested weight change", dw, "A"),
                                 p.rule ? p.rule->name() : "none"),
                     t);
  UpdateOutcome out;
  if (p.devices) {
    out = p.policy->apply(*p.devices, k, dw, t, &sink.totals_for(path_id));
    // The realised change is the difference of the synapse's programmed weights
    // before and after: non-finite if any conductance it reads became so.
    if (!std::isfinite(out.realised)) [[unlikely]]
      throw RunFailure(fmt::format("pathway '{}', synapse {}", p.name, k),
                       not_finite("the device conductance change (realised weight change)", out.realised, "A"), t);
  } else {
    const double before = std::abs(p.synapses.weight[k]);
    const double after = std::clamp(before + dw, 0.0, p.rule ? p.rule->w_max() : before + dw);
    if (!std::isfinite(after)) [[unlikely]]
      throw RunFailure(fmt::format("pathway '{}', synapse {}", p.name, k), not_finite("the weight", after, "A"), t);
    p.synapses.weight[k] = p.sign() * after;
    out.requested = dw;
    out.realised = after - before;
    out.route = out.realised != 0.0 ? UpdateRoute::direct : UpdateRoute::none;
    p.plain_ledger.add_to_synapse(k, out);
    sink.totals_for(path_id).add(out);
  }
  for (std::uint32_t r : s.change_recorders[path_id])
    if (s.weight_recorders[r].position[k] >= 0)
      sink.changes[r].push_back({t, k, out.requested, out.realised, static_cast<std::uint8_t>(out.route)});
  return out;
}

// What the neuron models call back while they work through a window.
class KernelHooks final : public SpikeHooks {
 public:
  KernelHooks(Simulation::State& s, UpdateSink& sink, std::uint32_t population)
      : s_(s), sink_(sink), population_(population) {}

  double synaptic_amount(std::uint32_t neuron, const NeuronInput& in) override {
    Pathway& p = s_.network.pathways[in.pathway];
    const std::uint64_t k = in.synapse;
    // The spike is transmitted with the weight it finds ...
    double w = p.weight_at(k, in.time);
    if (p.rule && p.rule->has_short_term_component())
      w = p.sign() * std::max(0.0, std::abs(w) + p.rule->short_term_component(k, in.time));
    if (p.short_term) w *= p.short_term->transmit(k, in.time);
    // ... then the rule may change it.
    if (p.rule) {
      const double dw = p.rule->on_pre(k, neuron, in.time, p.magnitude(k));
      if (dw != 0.0 && p.learning_at(in.time)) apply_change(s_, sink_, in.pathway, k, dw, in.time);
    }
    return w;
  }

  void on_spike(std::uint32_t neuron, double t) override {
    for (std::uint32_t id : s_.learning_inputs[population_]) {
      Pathway& p = s_.network.pathways[id];
      const bool learning = p.learning_at(t);
      for (std::uint64_t i = p.incoming_begin[neuron]; i < p.incoming_begin[neuron + 1]; ++i) {
        const std::uint64_t k = p.incoming[i];
        const double dw = p.rule->on_post(k, neuron, t, p.magnitude(k));
        if (dw != 0.0 && learning) apply_change(s_, sink_, id, k, dw, t);
      }
      p.rule->post_spike_end(neuron, t);
    }
  }

 private:
  Simulation::State& s_;
  UpdateSink& sink_;
  std::uint32_t population_;
};

void gather_globals(Simulation::State& s, double t_end, std::vector<GlobalEvent>& out) {
  out.clear();
  const double limit = std::min(t_end, s.duration);
  for (std::uint32_t id = 0; id < s.network.pathways.size(); ++id) {
    Pathway& p = s.network.pathways[id];
    for (; s.next_reward[id] < p.rewards.size() && p.rewards[s.next_reward[id]].first < limit; ++s.next_reward[id])
      out.push_back({p.rewards[s.next_reward[id]].first, GlobalKind::reward, id, p.rewards[s.next_reward[id]].second});
    if (p.normalise_interval > 0)
      for (;;) {
        const double t = static_cast<double>(s.next_normalisation[id]) * p.normalise_interval;
        if (t >= limit) break;
        out.push_back({t, GlobalKind::normalisation, id, 0.0});
        ++s.next_normalisation[id];
      }
  }
  for (std::uint32_t r = 0; r < s.weight_recorders.size(); ++r) {
    const WeightRecorder& rec = s.weight_recorders[r];
    if (rec.interval > 0)
      for (;;) {
        const double t = static_cast<double>(s.next_weight_sample[r]) * rec.interval;
        if (t >= limit) break;
        out.push_back({t, GlobalKind::weight_sample, r, 0.0});
        ++s.next_weight_sample[r];
      }
    for (; s.next_snapshot[r] < rec.snapshots.size() && rec.snapshots[s.next_snapshot[r]] < limit; ++s.next_snapshot[r])
      out.push_back({rec.snapshots[s.next_snapshot[r]], GlobalKind::snapshot, r, 0.0});
  }
  std::stable_sort(out.begin(), out.end(), [](const GlobalEvent& a, const GlobalEvent& b) {
    return std::tie(a.time, a.kind, a.index) < std::tie(b.time, b.kind, b.index);
  });
}

// Scales the incoming weights of every target neuron so that their magnitudes sum
// to normalise_total; each change goes through the pathway's policy and devices.
void normalise(Simulation::State& s, UpdateSink& sink, std::uint32_t id, double t) {
  Pathway& p = s.network.pathways[id];
  if (p.incoming_begin.empty()) return;
  for (std::uint32_t j = 0; j + 1 < p.incoming_begin.size(); ++j) {
    double total = 0.0;
    for (std::uint64_t i = p.incoming_begin[j]; i < p.incoming_begin[j + 1]; ++i) total += p.magnitude(p.incoming[i]);
    if (total <= 0.0) continue;
    const double factor = p.normalise_total / total;
    for (std::uint64_t i = p.incoming_begin[j]; i < p.incoming_begin[j + 1]; ++i) {
      const std::uint64_t k = p.incoming[i];
      const double w = p.magnitude(k);
      apply_change(s, sink, id, k, w * factor - w, t);
    }
  }
}

void apply_global(Simulation::State& s, Scratch& scratch, RunObserver& observer, const GlobalEvent& g) {
  switch (g.kind) {
    case GlobalKind::reward: {
      Pathway& p = s.network.pathways[g.index];
      if (!p.learning_at(g.time)) return;
      for (std::uint64_t k = 0; k < p.synapses.size(); ++k) {
        const double dw = p.rule->on_reward(k, g.time, g.value);
        if (dw != 0.0) apply_change(s, scratch.global_updates, g.index, k, dw, g.time);
      }
      return;
    }
    case GlobalKind::normalisation:
      if (s.network.pathways[g.index].learning_at(g.time)) normalise(s, scratch.global_updates, g.index, g.time);
      return;
    case GlobalKind::weight_sample:
    case GlobalKind::snapshot: {
      const WeightRecorder& rec = s.weight_recorders[g.index];
      const Pathway& p = s.network.pathways[rec.pathway];
      scratch.weights.clear();
      if (g.kind == GlobalKind::weight_sample) {
        for (std::uint64_t k : rec.synapses) scratch.weights.push_back(p.weight_record(k, g.time));
        observer.on_weight_sample(g.index, g.time, scratch.weights);
      } else {
        for (std::uint64_t k = 0; k < p.synapses.size(); ++k) scratch.weights.push_back(p.weight_record(k, g.time));
        observer.on_weight_snapshot(g.index, g.time, scratch.weights);
      }
      return;
    }
  }
}

// Cuts the blocks into `count` parts of about equal numbers of neurons.
std::vector<TargetPart> make_parts(const std::vector<NeuronBlock>& blocks, const std::vector<std::uint32_t>& group_offset,
                                   std::size_t count) {
  std::uint64_t total = 0;
  for (const NeuronBlock& b : blocks) total += b.count;
  std::vector<TargetPart> parts;
  std::uint64_t seen = 0;
  std::uint32_t first = 0;
  for (std::uint32_t b = 0; b < blocks.size(); ++b) {
    seen += blocks[b].count;
    const bool last = b + 1 == blocks.size();
    if (!last && seen * count < total * (parts.size() + 1)) continue;
    TargetPart& part = parts.emplace_back();
    part.first_block = first;
    part.end_block = b + 1;
    part.first_gid = group_offset[blocks[first].population] + blocks[first].first;
    part.end_gid = group_offset[blocks[b].population] + blocks[b].first + blocks[b].count;
    part.marks.assign((part.end_gid - part.first_gid + 63) / 64, 0);
    first = b + 1;
  }
  return parts;
}

// Groups the window's events whose targets lie in `part` by target: targets in
// increasing id, each target's events in TargetEventOrder, and gives each block of
// the part the list of its targets (BlockOutput::runs). A counting sort: no
// comparison between events of different targets; the cost follows the events, not
// the number of neurons. `start` is used only at the part's ids.
void group_part(const std::vector<std::vector<PendingEvent>>& buckets, const Simulation::State& s,
                std::vector<std::uint32_t>& start, TargetPart& part, std::vector<BlockOutput>& outputs) {
  const std::uint32_t lo = part.first_gid, width = part.end_gid - part.first_gid;
  std::vector<std::uint32_t>& targets = part.targets;
  targets.clear();
  std::size_t events = 0;
  for (const auto& bucket : buckets)
    for (const PendingEvent& e : bucket) {
      const std::uint32_t id = e.target;
      if (id - lo >= width) continue;
      ++events;
      if (start[id]++ == 0) targets.push_back(id);
    }
  // Targets in increasing id: few are sorted; many are read off a bitmap of the range.
  if (targets.size() * 512 < width) {
    std::sort(targets.begin(), targets.end());
  } else {
    for (std::uint32_t id : targets) part.marks[(id - lo) / 64] |= std::uint64_t{1} << ((id - lo) % 64);
    targets.clear();
    for (std::size_t word = 0; word < part.marks.size(); ++word)
      for (std::uint64_t bits = std::exchange(part.marks[word], 0); bits != 0; bits &= bits - 1)
        targets.push_back(lo + static_cast<std::uint32_t>(word * 64 + std::countr_zero(bits)));
  }
  std::uint32_t offset = 0;
  for (std::uint32_t id : targets) {
    const std::uint32_t count = start[id];
    start[id] = offset;
    offset += count;
  }
  std::vector<PendingEvent>& sorted = part.sorted;
  sorted.resize(events);
  for (const auto& bucket : buckets)
    for (const PendingEvent& e : bucket)
      if (e.target - lo < width) sorted[start[e.target]++] = e;
  // start[id] is now the end of target id's events; its start is the previous target's end.
  for (std::uint32_t b = part.first_block; b < part.end_block; ++b) {
    outputs[b].runs.clear();
    outputs[b].events = sorted.data();
  }
  std::size_t begin = 0;
  std::uint32_t b = part.first_block;  // of the target: targets come in increasing id order
  for (std::uint32_t id : targets) {
    while (id >= s.group_offset[s.blocks[b].population] + s.blocks[b].first + s.blocks[b].count) ++b;
    const std::size_t end = start[id];
    start[id] = 0;
    // Most targets receive a few events per window: insertion sort; long lists use std::sort.
    if (end - begin <= 32) {
      for (std::size_t i = begin + 1; i < end; ++i) {
        PendingEvent e = sorted[i];
        std::size_t j = i;
        for (; j > begin && TargetEventOrder{}(e, sorted[j - 1]); --j) sorted[j] = sorted[j - 1];
        sorted[j] = e;
      }
    } else {
      std::sort(sorted.begin() + static_cast<std::ptrdiff_t>(begin), sorted.begin() + static_cast<std::ptrdiff_t>(end),
                TargetEventOrder{});
    }
    outputs[b].runs.push_back({id - s.group_offset[s.blocks[b].population], begin, end});
    begin = end;
  }
}

// Processes, in neuron order, the neurons of block b that have input before
// segment_end or whose wake-up time lies before it. Runs on any thread: it touches
// only the block's neurons, their incoming synapses and `out`. Returns early when a
// stop is requested (setting `stopped`: the window is then abandoned) and at the
// block's first failure, kept in out.failure for the caller to report in block order.
void process_block(Simulation::State& s, std::uint32_t b, double segment_end, std::vector<double>& samples,
                   BlockOutput& out, WorkerScratch& w, const std::atomic<bool>* stop, std::atomic<bool>& stopped) {
  const NeuronBlock& block = s.blocks[b];
  const std::uint32_t p = block.population;
  NeuronBank& group = *s.network.populations[p].neurons;
  WakeCalendar& calendar = s.block_calendar[b];
  KernelHooks hooks(s, out.updates, p);
  w.due.clear();
  calendar.take_before(segment_end, w.due);  // indices within the block
  const PendingEvent* events = out.events;
  std::vector<NeuronRun>& runs = out.runs;
  std::size_t a = 0, r = 0;
  try {
    for (;;) {
      while (r < runs.size() && (runs[r].next == runs[r].end || events[runs[r].next].time >= segment_end)) ++r;
      const bool has_event = r < runs.size();
      const bool has_due = a < w.due.size();
      if (!has_event && !has_due) break;
      // A window can hold long work (many spikes, each updating many synapses): a
      // stop request is honoured between neurons, not only between windows.
      if ((stop && stop->load(std::memory_order_relaxed)) || stopped.load(std::memory_order_relaxed)) {
        stopped.store(true, std::memory_order_relaxed);
        return;
      }
      const std::uint32_t due_neuron = has_due ? block.first + w.due[a] : 0;
      const std::uint32_t n = has_event && (!has_due || runs[r].neuron <= due_neuron) ? runs[r].neuron : due_neuron;
      if (has_due && due_neuron == n) ++a;

      // The neuron's inputs in this segment, where the grouping left them.
      std::span<const PendingEvent> inputs;
      if (has_event && runs[r].neuron == n) {
        NeuronRun& run = runs[r];
        const std::size_t first = run.next;
        for (; run.next < run.end && events[run.next].time < segment_end; ++run.next)
          out.synaptic_events += events[run.next].kind == InputKind::synaptic;
        inputs = std::span(events + first, run.next - first);
        ++r;
      }
      w.neuron_spikes.clear();
      group.process(n, inputs, segment_end, w.neuron_spikes, samples, hooks);
      for (double t : w.neuron_spikes) out.spikes.push_back({t, s.group_offset[p] + n, p, n});
      calendar.set(n - block.first, group.earliest_threshold_time(n));
    }
  } catch (const RunFailure& e) {
    // Failures of learning and devices already name their pathway; those of the
    // neuron model get its population.
    out.failure = e.where().starts_with("pathway ")
                      ? std::current_exception()
                      : std::make_exception_ptr(e.within(fmt::format("population '{}'", s.network.populations[p].name)));
  } catch (...) {
    out.failure = std::current_exception();
  }
}

// Turns spikes of window w into one event per outgoing synapse, each in the bucket of
// the window it arrives in, of producer `producer` (one per thread).
void deliver(Simulation::State& s, std::span<const WindowSpike> spikes, std::uint64_t w, std::size_t producer) {
  const Network& net = s.network;
  const std::size_t ring_size = s.ring.size();
  for (const WindowSpike& sp : spikes) {
    for (std::uint32_t path_id : s.outgoing[sp.group]) {
      const Pathway& path = net.pathways[path_id];
      const SynapseStore& st = path.synapses;
      const std::uint32_t target_offset = s.group_offset[path.target];
      for (std::uint64_t k = st.begin(sp.index); k < st.end(sp.index); ++k) {
        const double arrival = sp.time + st.delay[k];
        if (arrival >= s.duration) continue;
        const auto target_window = std::max<std::uint64_t>(w + 1, static_cast<std::uint64_t>(arrival / s.window));
        PendingEvent ev;
        ev.time = arrival;
        ev.synapse = k;
        ev.target = target_offset + st.post[k];
        ev.order = sp.gid;
        ev.pathway = path_id;
        ev.kind = InputKind::synaptic;
        ev.receptor = path.receptor;
        s.ring[target_window % ring_size][producer].push_back(ev);
      }
    }
  }
}

// The number of windows that cover [0, duration), each ending at (w + 1) * window and
// the last at the duration. Never silently 0: a count that cannot be held exactly
// (a tiny window against a huge or infinite duration) is refused. Model checks
// refuse such runs before building (kernel/run_cost.hpp); this keeps the kernel
// itself from wrapping a 64-bit count or converting an out-of-range double.
std::uint64_t count_windows(double duration, double window) {
  constexpr double kCountable = 9007199254740992.0;  // 2^53: every whole number below is a double
  const double n = std::ceil(duration / window - 1e-12);
  if (!(duration >= 0.0) || !(window > 0.0) || !(n <= kCountable))
    throw UserError({}, "duration",
                    fmt::format("a run of {} s in windows of {} s (the shortest delay) needs {:.3g} windows, more than "
                                "the 2^53 the kernel can count; shorten the run or lengthen the shortest delay",
                                duration, window, n));
  return duration > 0.0 ? std::max<std::uint64_t>(1, static_cast<std::uint64_t>(n)) : 0;
}

}  // namespace

RunSummary Simulation::run(RunObserver& observer, const std::atomic<bool>* stop) {
  State& s = *state_;
  if (s.unusable)
    throw InternalError("Simulation::run: this simulation stopped inside a window (interrupted or failed) and cannot "
                        "continue; build a new one");
  Network& net = s.network;
  const std::size_t n_pop = net.populations.size();
  const auto wall_start = std::chrono::steady_clock::now();

  RunSummary summary;
  summary.spikes.assign(n_pop, 0);
  Scratch scratch;
  scratch.samples.resize(n_pop);
  scratch.sample_slots.resize(n_pop);
  scratch.next_sample.assign(s.traces.size(), 0);
  scratch.target_start.assign(s.group_offset[n_pop], 0);
  scratch.changes.resize(s.weight_recorders.size());
  scratch.blocks.resize(s.blocks.size());
  for (BlockOutput& out : scratch.blocks) out.updates.resize(s.weight_recorders.size(), net.pathways.size());
  scratch.global_updates.resize(s.weight_recorders.size(), net.pathways.size());
  if (!s.team) s.team = std::make_unique<WorkerTeam>(s.threads);
  WorkerTeam& team = *s.team;
  scratch.workers.resize(team.size());
  for (auto& slot : s.ring) slot.resize(std::max<std::size_t>(slot.size(), team.size()));
  scratch.parts = make_parts(s.blocks, s.group_offset, team.size());
  s.next_reward.resize(net.pathways.size(), 0);
  s.next_normalisation.resize(net.pathways.size(), 1);  // the first normalisation after one interval
  s.next_weight_sample.resize(s.weight_recorders.size(), 0);
  s.next_snapshot.resize(s.weight_recorders.size(), 0);

  const std::size_t ring_size = s.ring.size();
  const std::uint64_t window_count = count_windows(s.duration, s.window);
  summary.time_reached = time_reached();
  // Set when a stop request arrives while a window is being processed.
  bool stopped_inside = false;
  auto stop_requested = [stop] { return stop && stop->load(std::memory_order_relaxed); };

  for (; s.next_window < window_count; ++s.next_window) {
    if (stop_requested()) {
      summary.reason = EndReason::interrupted;
      break;
    }
    const std::uint64_t w = s.next_window;
    // The last window ends exactly at the duration, whatever the rounding of w * window.
    const double t_end =
        w + 1 == window_count ? s.duration : std::min(static_cast<double>(w + 1) * s.window, s.duration);
    std::vector<std::vector<PendingEvent>>& buckets = s.ring[w % ring_size];
    std::vector<PendingEvent>& bucket = buckets[0];  // for the events made here

    // Injected-current changes and trace samples of this window join the bucket.
    s.currents.take_until(t_end, [&](const CurrentChange& c) {
      PendingEvent e;
      e.time = c.time;
      e.amount = c.delta;
      e.target = s.group_offset[c.population] + c.neuron;
      e.pathway = c.sequence;
      e.kind = InputKind::current_change;
      bucket.push_back(e);
    });
    scratch.sample_rows.clear();
    std::fill(scratch.sample_slots.begin(), scratch.sample_slots.end(), 0);
    for (std::uint32_t tr = 0; tr < s.traces.size(); ++tr) {
      const TraceStream& trace = s.traces[tr];
      for (;;) {
        const double t = static_cast<double>(scratch.next_sample[tr]) * trace.interval;
        if (t >= t_end || t >= s.duration) break;
        ++scratch.next_sample[tr];
        std::uint32_t& slot = scratch.sample_slots[trace.population];
        scratch.sample_rows.push_back({tr, t, slot});
        for (std::uint32_t n : trace.neurons) {
          PendingEvent e;
          e.time = t;
          e.target = s.group_offset[trace.population] + n;
          e.pathway = tr;
          e.order = slot++;
          e.kind = InputKind::sample;
          bucket.push_back(e);
        }
      }
    }
    for (std::size_t p = 0; p < n_pop; ++p) {
      const std::size_t need = std::size_t{scratch.sample_slots[p]} * net.populations[p].neurons->variables().size();
      if (scratch.samples[p].size() < need) scratch.samples[p].resize(need);
    }

    // Group the window's events by target, a part of the neurons per thread (all on
    // this thread when the window holds few events).
    std::size_t window_events = 0;
    for (const auto& b : buckets) window_events += b.size();
    if (window_events >= 2048) {
      team.for_each(scratch.parts.size(), [&](std::size_t q, unsigned) {
        group_part(buckets, s, scratch.target_start, scratch.parts[q], scratch.blocks);
      });
    } else {
      for (TargetPart& part : scratch.parts) group_part(buckets, s, scratch.target_start, part, scratch.blocks);
    }
    gather_globals(s, t_end, scratch.globals);

    // The window is cut at the times of global events into segments; in each, every
    // neuron with input there, or whose wake-up time falls before the segment's end,
    // is processed, in neuron index order within its block, blocks shared among the
    // threads; afterwards its wake-up time is predicted again from its new state.
    // What the blocks produced is then merged in block order.
    scratch.spikes.clear();
    for (std::size_t g = 0; g <= scratch.globals.size(); ++g) {
      const double segment_end = g < scratch.globals.size() ? scratch.globals[g].time : t_end;
      scratch.active.clear();
      for (std::uint32_t b = 0; b < s.blocks.size(); ++b)
        if (!scratch.blocks[b].runs.empty() || s.block_calendar[b].earliest() < segment_end)
          scratch.active.push_back(b);
      std::atomic<bool> stopped{false};
      team.for_each(scratch.active.size(), [&](std::size_t i, unsigned worker) {
        const std::uint32_t b = scratch.active[i];
        process_block(s, b, segment_end, scratch.samples[s.blocks[b].population], scratch.blocks[b],
                      scratch.workers[worker], stop, stopped);
      });
      if (stopped.load()) {
        stopped_inside = true;
        break;
      }
      for (std::uint32_t b : scratch.active) {
        BlockOutput& out = scratch.blocks[b];
        if (out.failure) {
          s.unusable = true;
          std::rethrow_exception(out.failure);
        }
        out.updates.merge_into(net, scratch.changes);
      }
      if (g < scratch.globals.size()) {
        try {
          apply_global(s, scratch, observer, scratch.globals[g]);
        } catch (const RunFailure&) {
          s.unusable = true;
          throw;
        }
        scratch.global_updates.merge_into(net, scratch.changes);
      }
    }
    for (BlockOutput& out : scratch.blocks) {
      scratch.spikes.insert(scratch.spikes.end(), out.spikes.begin(), out.spikes.end());
      out.spikes.clear();
      summary.synaptic_events += out.synaptic_events;
      out.synaptic_events = 0;
    }
    if (stopped_inside) {
      // The window is abandoned: its spikes, samples and weight changes are not
      // reported, and the run ends at the previous window (time_reached). Neurons already processed are ahead of
      // that time, so this simulation cannot continue.
      s.unusable = true;
      summary.reason = EndReason::interrupted;
      break;
    }
    for (auto& b : buckets) b.clear();

    // Spikes of the inputs.
    for (std::uint32_t i = 0; i < s.inputs.size(); ++i) {
      if (!s.inputs[i].spikes) continue;
      scratch.source_spikes.clear();
      s.inputs[i].spikes->emit(t_end, scratch.source_spikes);
      const auto g = static_cast<std::uint32_t>(n_pop + i);
      for (const SourceSpike& sp : scratch.source_spikes)
        scratch.spikes.push_back({sp.time, s.group_offset[g] + sp.source, g, sp.source});
      summary.input_spikes += scratch.source_spikes.size();
    }
    std::sort(scratch.spikes.begin(), scratch.spikes.end(),
              [](const WindowSpike& x, const WindowSpike& y) { return std::tie(x.time, x.gid) < std::tie(y.time, y.gid); });

    // Record.
    for (std::uint32_t p : s.recorded_populations) {
      scratch.spike_times.clear();
      scratch.spike_neurons.clear();
      for (const WindowSpike& sp : scratch.spikes)
        if (sp.group == p) {
          scratch.spike_times.push_back(sp.time);
          scratch.spike_neurons.push_back(sp.index);
        }
      if (!scratch.spike_times.empty()) observer.on_spikes(p, scratch.spike_times, scratch.spike_neurons);
    }
    for (const WindowSpike& sp : scratch.spikes)
      if (sp.group < n_pop) ++summary.spikes[sp.group];
    for (const SampleRow& row : scratch.sample_rows) {
      const TraceStream& trace = s.traces[row.trace];
      const std::size_t stride = net.populations[trace.population].neurons->variables().size();
      scratch.sample_values.clear();
      for (std::size_t j = 0; j < trace.neurons.size(); ++j)
        scratch.sample_values.push_back(
            scratch.samples[trace.population][(row.first_slot + j) * stride + trace.variable_index]);
      observer.on_sample(row.trace, row.time, scratch.sample_values);
    }
    for (std::uint32_t r = 0; r < scratch.changes.size(); ++r) {
      auto& changes = scratch.changes[r];
      if (changes.empty()) continue;
      std::stable_sort(changes.begin(), changes.end(), [](const WeightChange& a, const WeightChange& b) {
        return std::tie(a.time, a.synapse) < std::tie(b.time, b.synapse);
      });
      observer.on_weight_changes(r, changes);
      changes.clear();
    }

    // Deliver: each spike becomes one event per outgoing synapse, in a later window.
    // The spikes are cut into one share per thread, each filling buckets of its own;
    // the order of events within and across buckets does not matter, since
    // group_by_target orders each target's events completely.
    const std::size_t shares = scratch.spikes.size() >= 16 ? team.size() : 1;
    team.for_each(shares, [&](std::size_t share, unsigned) {
      const std::size_t n = scratch.spikes.size();
      deliver(s, std::span(scratch.spikes).subspan(n * share / shares, n * (share + 1) / shares - n * share / shares),
              w, share);
    });
    summary.windows++;
    summary.time_reached = t_end;
    observer.on_progress(t_end);
  }
  summary.wall_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start).count();
  // How a run ended is data: "complete" only when the whole duration was simulated.
  if (summary.reason == EndReason::complete && summary.time_reached != s.duration)
    throw InternalError(fmt::format("the event loop ended at model time {} s, before the duration {} s, without "
                                    "being stopped ({} of {} windows)",
                                    summary.time_reached, s.duration, s.next_window, window_count));
  return summary;
}

}  // namespace nvsyn
