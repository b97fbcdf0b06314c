#include "kernel/simulation.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <tuple>

#include "kernel/simulation_state.hpp"

namespace nvsyn {

Simulation::Simulation(std::unique_ptr<State> state) : state_(std::move(state)) {}
Simulation::Simulation(Simulation&&) noexcept = default;
Simulation& Simulation::operator=(Simulation&&) noexcept = default;
Simulation::~Simulation() = default;

const Network& Simulation::network() const { return state_->network; }
const std::vector<InputGroup>& Simulation::inputs() const { return state_->inputs; }
const std::vector<TraceStream>& Simulation::traces() const { return state_->traces; }
const std::vector<std::uint32_t>& Simulation::recorded_populations() const { return state_->recorded_populations; }
std::uint64_t Simulation::seed() const { return state_->seed; }
double Simulation::duration() const { return state_->duration; }
double Simulation::window() const { return state_->window; }

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

bool event_order(const PendingEvent& a, const PendingEvent& b) {
  return std::tie(a.population, a.neuron, a.time, a.kind, a.source, a.pathway, a.synapse) <
         std::tie(b.population, b.neuron, b.time, b.kind, b.source, b.pathway, b.synapse);
}

// Reusable buffers of the event loop: allocated once, reused every window.
struct Scratch {
  std::vector<NeuronInput> inputs;
  std::vector<double> neuron_spikes;
  std::vector<WindowSpike> spikes;
  std::vector<SourceSpike> source_spikes;
  std::vector<std::uint32_t> next_active;
  std::vector<std::vector<double>> samples;  // per population
  std::vector<std::uint32_t> sample_slots;   // per population: slots used this window
  std::vector<SampleRow> sample_rows;
  std::vector<double> sample_values;
  std::vector<double> spike_times;
  std::vector<std::uint32_t> spike_neurons;
  std::vector<std::uint64_t> next_sample;  // per trace: index of the next sample time
};

}  // namespace

RunSummary Simulation::run(RunObserver& observer, const std::atomic<bool>* stop) {
  State& s = *state_;
  Network& net = s.network;
  const std::size_t n_pop = net.populations.size();
  const auto wall_start = std::chrono::steady_clock::now();

  RunSummary summary;
  summary.spikes.assign(n_pop, 0);
  Scratch scratch;
  scratch.samples.resize(n_pop);
  scratch.sample_slots.resize(n_pop);
  scratch.next_sample.assign(s.traces.size(), 0);

  const std::size_t ring_size = s.ring.size();
  const auto window_count = static_cast<std::uint64_t>(std::ceil(s.duration / s.window - 1e-12));

  for (; s.next_window < window_count; ++s.next_window) {
    if (stop && stop->load(std::memory_order_relaxed)) {
      summary.reason = EndReason::interrupted;
      break;
    }
    const std::uint64_t w = s.next_window;
    const double t_end = std::min(static_cast<double>(w + 1) * s.window, s.duration);
    auto& bucket = s.ring[w % ring_size];

    // Injected-current changes and trace samples of this window join the bucket.
    s.currents.take_until(t_end, [&](const CurrentChange& c) {
      PendingEvent e;
      e.time = c.time;
      e.amount = c.delta;
      e.population = c.population;
      e.neuron = c.neuron;
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
          e.population = trace.population;
          e.neuron = n;
          e.pathway = tr;
          e.slot = slot++;
          e.kind = InputKind::sample;
          bucket.push_back(e);
        }
      }
    }
    for (std::size_t p = 0; p < n_pop; ++p) {
      const std::size_t need = std::size_t{scratch.sample_slots[p]} * net.populations[p].neurons->variables().size();
      if (scratch.samples[p].size() < need) scratch.samples[p].resize(need);
    }

    std::sort(bucket.begin(), bucket.end(), event_order);

    // Visit every neuron that has input or may fire on its own, in index order.
    scratch.spikes.clear();
    std::size_t e = 0;
    for (std::uint32_t p = 0; p < n_pop; ++p) {
      NeuronGroup& group = *net.populations[p].neurons;
      const std::vector<std::uint32_t>& active = s.active[p];
      scratch.next_active.clear();
      std::size_t a = 0;
      for (;;) {
        const bool has_event = e < bucket.size() && bucket[e].population == p;
        const bool has_active = a < active.size();
        if (!has_event && !has_active) break;
        std::uint32_t n;
        if (has_event && (!has_active || bucket[e].neuron <= active[a])) n = bucket[e].neuron;
        else n = active[a];
        if (has_active && active[a] == n) ++a;

        scratch.inputs.clear();
        for (; e < bucket.size() && bucket[e].population == p && bucket[e].neuron == n; ++e) {
          const PendingEvent& ev = bucket[e];
          NeuronInput in;
          in.time = ev.time;
          in.kind = ev.kind;
          in.slot = ev.slot;
          if (ev.kind == InputKind::synaptic) {
            const Pathway& path = net.pathways[ev.pathway];
            in.amount = path.weight_at(ev.synapse, ev.time);
            in.receptor = path.receptor;
            ++summary.synaptic_events;
          } else {
            in.amount = ev.amount;
          }
          scratch.inputs.push_back(in);
        }
        scratch.neuron_spikes.clear();
        group.process(n, scratch.inputs, t_end, scratch.neuron_spikes, scratch.samples[p]);
        for (double t : scratch.neuron_spikes) scratch.spikes.push_back({t, s.group_offset[p] + n, p, n});
        if (group.may_fire_without_input(n)) scratch.next_active.push_back(n);
      }
      s.active[p].swap(scratch.next_active);
    }
    bucket.clear();

    // Spikes of the inputs.
    for (std::uint32_t i = 0; i < s.inputs.size(); ++i) {
      if (!s.inputs[i].poisson) continue;
      scratch.source_spikes.clear();
      s.inputs[i].poisson->emit(t_end, scratch.source_spikes);
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

    // Deliver: each spike becomes one event per outgoing synapse, in a later window.
    for (const WindowSpike& sp : scratch.spikes) {
      for (std::uint32_t path_id : s.outgoing[sp.group]) {
        const Pathway& path = net.pathways[path_id];
        const SynapseStore& st = path.synapses;
        for (std::uint64_t k = st.begin(sp.index); k < st.end(sp.index); ++k) {
          const double arrival = sp.time + st.delay[k];
          if (arrival >= s.duration) continue;
          const auto target_window = std::max<std::uint64_t>(w + 1, static_cast<std::uint64_t>(arrival / s.window));
          PendingEvent ev;
          ev.time = arrival;
          ev.synapse = k;
          ev.population = path.target;
          ev.neuron = st.post[k];
          ev.source = sp.gid;
          ev.pathway = path_id;
          ev.kind = InputKind::synaptic;
          s.ring[target_window % ring_size].push_back(ev);
        }
      }
    }
    summary.windows++;
    summary.time_reached = t_end;
    observer.on_progress(t_end);
  }
  summary.wall_seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start).count();
  return summary;
}

}  // namespace nvsyn
