#include "kernel/run_cost.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn {
namespace {

// Samples taken at 0, interval, 2 interval, ... before the end.
double samples(double duration, double interval) {
  return interval > 0 ? std::floor(duration / interval) + 1 : 0.0;
}

std::size_t pathway_index(const Simulation& sim, const std::string& name) {
  const auto& paths = sim.network().pathways;
  return static_cast<std::size_t>(
      std::find_if(paths.begin(), paths.end(), [&](const Pathway& p) { return p.name == name; }) - paths.begin());
}

struct Culprit {
  double amount = -1.0;
  const ParamTable* table = nullptr;
  std::string key;
  std::string what;
};

void consider(Culprit& c, double amount, const ParamTable* table, std::string key, std::string what) {
  if (amount > c.amount) c = {amount, table, std::move(key), std::move(what)};
}

std::string limit_text(double limit) { return fmt::format("10^{:.0f}", std::log10(limit)); }

std::string count(double n) { return n < 1e6 ? fmt::format("{:.0f}", n) : fmt::format("{:.3g}", n); }

constexpr const char* kConsent =
    "if you really mean it, set 'allow_large_run = true' in [simulation] or pass --allow-large-run";

}  // namespace

RunCost estimate_run_cost(const Simulation& sim) {
  RunCost c;
  c.duration = sim.duration();
  c.window = sim.window();
  c.windows = c.duration / c.window;
  const Network& net = sim.network();
  std::vector<double> spikes(sim.inputs().size(), 0.0);
  for (std::size_t i = 0; i < sim.inputs().size(); ++i) {
    const InputChannel& in = sim.inputs()[i];
    if (!in.spikes) continue;
    spikes[i] = in.spikes->expected_spikes(c.duration);
    c.input_spikes += spikes[i];
  }
  for (const Pathway& p : net.pathways) {
    if (!p.source.is_input) continue;
    const double sources = sim.inputs()[p.source.index].spikes->size();
    if (sources > 0) c.input_events += spikes[p.source.index] * static_cast<double>(p.synapses.size()) / sources;
  }
  for (const TraceStream& t : sim.traces())
    c.trace_values += samples(c.duration, t.interval) * static_cast<double>(t.neurons.size());
  for (const WeightRecorder& r : sim.weight_recorders()) {
    const double synapses = static_cast<double>(net.pathways[r.pathway].synapses.size());
    c.weight_values += samples(c.duration, r.interval) * static_cast<double>(r.synapses.size());
    for (double at : r.snapshots)
      if (at <= c.duration) c.weight_values += synapses;
  }
  return c;
}

void check_run_cost(const RunCost& cost, const Simulation& sim, const Model& model, const BuildOptions& options) {
  const bool allow_large_run = options.allow_large_run || model.simulation.allow_large_run;
  auto located = [&](const ParamTable* table, const std::string& key, const std::string& message) {
    return table ? table->error(key, message) : UserError({model.file}, key, message);
  };
  // The duration as the user gave it: in the model, or overridden on the command line.
  auto at_duration = [&](const std::string& message) {
    if (options.duration) return UserError({}, "--duration", message);
    return located(model.simulation.table.get(), "duration", message);
  };

  // The window count: the kernel counts windows in 64-bit integers from doubles.
  const std::string windows_what =
      fmt::format("a run of {} in windows of {} (the shortest delay) takes {} windows",
                  format_time(cost.duration), format_quantity(cost.window, Dimension::time),
                  count(cost.windows));
  if (!(cost.windows <= RunLimits::countable_windows))
    throw at_duration(windows_what + ", more than the 2^53 that can be counted exactly; shorten the run or lengthen the "
                                 "shortest delay");
  if (allow_large_run) return;

  const std::string consent = fmt::format("; {}", kConsent);
  if (cost.windows > RunLimits::windows)
    throw at_duration(fmt::format("{}, more than the limit of {} for a run without consent{}", windows_what,
                              limit_text(RunLimits::windows), consent));

  if (cost.input_spikes > RunLimits::input_spikes || cost.input_events > RunLimits::input_events) {
    // The input that contributes most spikes (or events) is the setting to look at.
    Culprit c;
    const bool spikes_over = cost.input_spikes > RunLimits::input_spikes;
    for (std::size_t i = 0; i < model.inputs.size() && i < sim.inputs().size(); ++i) {
      const InputChannel& in = sim.inputs()[i];
      if (!in.spikes) continue;
      const double spikes = in.spikes->expected_spikes(cost.duration);
      double events = 0.0;
      for (const Pathway& p : sim.network().pathways)
        if (p.source.is_input && p.source.index == i && in.spikes->size() > 0)
          events += spikes * static_cast<double>(p.synapses.size()) / in.spikes->size();
      const InputSpec& spec = model.inputs[i];
      const std::string key = spec.kind == InputKindSpec::times ? "times" : "rate";
      consider(c, spikes_over ? spikes : events, spec.table.get(), key,
               fmt::format("input '{}' ({})", spec.name, in.spikes->describe()));
    }
    const std::string message =
        spikes_over
            ? fmt::format("the inputs are expected to emit {} spikes in {}, more than the limit of {} for a run "
                          "without consent; most come from {}{}",
                          count(cost.input_spikes), format_time(cost.duration),
                          limit_text(RunLimits::input_spikes), c.what, consent)
            : fmt::format("the input spikes are expected to cause {} synaptic events in {}, more than the limit of "
                          "{} for a run without consent; most come from {}{}",
                          count(cost.input_events), format_time(cost.duration),
                          limit_text(RunLimits::input_events), c.what, consent);
    throw located(c.table, c.key, message);
  }

  if (cost.trace_values > RunLimits::trace_values) {
    Culprit c;
    for (const TraceSpec& t : model.record.traces)
      consider(c, samples(cost.duration, t.interval) * static_cast<double>(t.neurons.size() * t.variables.size()),
               t.table.get(), "interval", fmt::format("the trace of population '{}'", t.population));
    throw located(c.table, c.key,
                  fmt::format("the traces would record {} values ({:.3g} GB) in {}, more than the limit of {} for a "
                              "run without consent; most come from {} ({} values){}",
                              count(cost.trace_values), cost.trace_values * 8e-9,
                              format_time(cost.duration), limit_text(RunLimits::trace_values), c.what,
                              count(c.amount), consent));
  }

  if (cost.weight_values > RunLimits::weight_values) {
    Culprit c;
    for (const WeightRecordSpec& w : model.record.weights) {
      const std::size_t id = pathway_index(sim, w.pathway);
      const double synapses = static_cast<double>(sim.network().pathways[id].synapses.size());
      const double periodic = samples(cost.duration, w.interval) * (w.all_synapses ? synapses : static_cast<double>(w.synapses.size()));
      double snapshots = 0.0;
      for (double at : w.snapshots)
        if (at <= cost.duration) snapshots += synapses;
      consider(c, periodic + snapshots, w.table.get(), periodic >= snapshots ? "interval" : "snapshots",
               fmt::format("the weight recording of pathway '{}'", w.pathway));
    }
    throw located(c.table, c.key,
                  fmt::format("the weight recordings would store {} values ({:.3g} GB) in {}, more than the limit of "
                              "{} for a run without consent; most come from {} ({} values){}",
                              count(cost.weight_values), cost.weight_values * 4e-9,
                              format_time(cost.duration), limit_text(RunLimits::weight_values), c.what,
                              count(c.amount), consent));
  }
}

}  // namespace nvsyn
