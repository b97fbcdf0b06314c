#include "cli/commands.hpp"

#include <atomic>
#include <cmath>
#include <chrono>
#include <csignal>
#include <exception>
#include <fmt/format.h>

#include "analysis/spike_statistics.hpp"
#include "cli/option_values.hpp"
#include "cli/output_file.hpp"
#include "cli/progress.hpp"
#include "cli/subcommand.hpp"
#include "core/error.hpp"
#include "core/run_failure.hpp"
#include "core/machine_memory.hpp"
#include "devices/device_parameters.hpp"
#include "kernel/memory_estimate.hpp"
#include "kernel/run_cost.hpp"
#include "kernel/simulation.hpp"
#include "model/model_reader.hpp"
#include "record/run_writer.hpp"

#ifndef NVSYN_VERSION
#define NVSYN_VERSION "unknown"
#endif

namespace nvsyn::cli {
namespace {

std::atomic<bool> g_interrupted{false};
extern "C" void on_interrupt(int) { g_interrupted.store(true); }

double parse_duration_option(const std::string& text, RangePolicy* ranges) {
  const double duration = parse_quantity_option(text, "--duration", QuantityKind::duration, ranges);
  if (!(duration > 0)) throw UserError({}, "--duration", "must be positive");
  return duration;
}

// Implausible values accepted on purpose are reported, each once, on stderr.
void print_range_warnings(const Model& model) {
  if (!model.ranges) return;
  for (const std::string& warning : model.ranges->warnings()) fmt::print(stderr, "{}\n", warning);
  if (model.ranges->warnings_not_kept() > 0)
    fmt::print(stderr, "warning: {} more implausible values accepted, not shown\n", model.ranges->warnings_not_kept());
}

void add_override_flags(CLI::App& cmd, LimitOverrides& overrides) {
  cmd.add_flag("--allow-implausible", overrides.allow_implausible,
               "Accept values outside the plausible range of their kind with a warning (as [simulation] "
               "allow_implausible = true)");
  cmd.add_flag("--allow-large-run", overrides.allow_large_run,
               "Accept a run beyond the cost limits: windows, input spikes, events, recorded samples (as "
               "[simulation] allow_large_run = true)");
}

// Streams what the kernel reports into the run file.
class RunFileObserver final : public RunObserver {
 public:
  RunFileObserver(RunWriter& writer, const Simulation& sim, ProgressLine& progress)
      : writer_(writer), progress_(progress) {
    const Network& net = sim.network();
    spike_stream_.assign(net.populations.size(), -1);
    for (std::uint32_t p : sim.recorded_populations()) spike_stream_[p] = writer.open_spikes(net.populations[p].name);
    for (const TraceStream& t : sim.traces())
      trace_id_.push_back(writer.open_trace(net.populations[t.population].name, t.variable, t.dimension, t.neurons));
    for (const WeightRecorder& r : sim.weight_recorders())
      weight_id_.push_back(writer.open_weights(net.pathways[r.pathway].name, r.synapses));
    last_flush_ = std::chrono::steady_clock::now();
  }
  void on_spikes(std::uint32_t p, std::span<const double> times, std::span<const std::uint32_t> neurons) override {
    writer_.append_spikes(spike_stream_[p], times, neurons);
  }
  void on_sample(std::uint32_t trace, double time, std::span<const double> values) override {
    writer_.append_trace_row(trace_id_[trace], time, values);
  }
  void on_weight_sample(std::uint32_t r, double time, std::span<const double> weights) override {
    writer_.append_weight_sample(weight_id_[r], time, weights);
  }
  void on_weight_changes(std::uint32_t r, std::span<const WeightChange> changes) override {
    writer_.append_weight_changes(weight_id_[r], changes);
  }
  void on_weight_snapshot(std::uint32_t r, double time, std::span<const double> weights) override {
    writer_.append_weight_snapshot(weight_id_[r], time, weights);
  }
  void on_progress(double time) override {
    progress_.update(time);
    // A crash loses at most this much wall time of recording.
    const auto now = std::chrono::steady_clock::now();
    if (now - last_flush_ > std::chrono::seconds(10)) {
      writer_.flush();
      last_flush_ = now;
    }
  }

 private:
  RunWriter& writer_;
  ProgressLine& progress_;
  std::vector<int> spike_stream_;
  std::vector<int> trace_id_;
  std::vector<int> weight_id_;
  std::chrono::steady_clock::time_point last_flush_;
};

void write_network(RunWriter& writer, const Simulation& sim, bool connectivity) {
  const Network& net = sim.network();
  for (const Population& p : net.populations)
    writer.describe_population(p.name, p.size(), p.neurons->model_name());
  for (const Pathway& path : net.pathways) {
    std::vector<std::uint32_t> pre;
    if (connectivity) pre = path.synapses.pre_indices();
    PathwayRecord r;
    r.name = path.name;
    r.source = path.from;
    r.target = path.to;
    r.rule = path.rule ? std::string(path.rule->name()) : "none";
    r.device = path.devices ? std::string(device_kind_name(path.devices->devices().parameters().kind)) : "none";
    r.receptor = path.receptor == Receptor::excitatory ? "excitatory" : "inhibitory";
    if (connectivity) {
      r.pre = pre;
      r.post = path.synapses.post;
      r.delay = path.synapses.delay;
      r.weight = path.synapses.weight;
    }
    writer.write_pathway(r);
  }
}

// Requested versus realised changes and final weights of every learning pathway.
void write_learning_records(RunWriter& writer, const Simulation& sim, double t_end) {
  for (const Pathway& path : sim.network().pathways) {
    if (!path.rule) continue;
    const UpdateLedger& ledger = path.ledger();
    std::vector<double> final_weight(path.synapses.size());
    for (std::uint64_t k = 0; k < path.synapses.size(); ++k) final_weight[k] = path.weight_record(k, t_end);
    LearningRecord r;
    r.pathway = path.name;
    r.rule = std::string(path.rule->name());
    r.updates = ledger.totals.updates;
    r.pulses = ledger.totals.pulses;
    r.routed_partner = ledger.totals.routed_partner;
    r.unrealisable = ledger.totals.unrealisable;
    r.sum_requested = ledger.totals.sum_requested;
    r.sum_realised = ledger.totals.sum_realised;
    r.sum_squared_error = ledger.totals.sum_squared_error;
    r.requested = ledger.requested;
    r.realised = ledger.realised;
    r.final_weight = final_weight;
    writer.write_learning(r);
  }
}

// Final state of every device pathway: conductances, pulses, energy, requested
// versus realised changes, initial programming.
void write_device_records(RunWriter& writer, const Simulation& sim, double t_end) {
  for (const Pathway& path : sim.network().pathways) {
    if (!path.devices) continue;
    const SynapseDevices& syn = *path.devices;
    const DeviceArray& dev = syn.devices();
    const std::size_t n = dev.size();
    std::vector<double> conductance(n), programmed(n), energy(n);
    std::vector<std::uint32_t> pulses(n);
    std::vector<std::uint8_t> health(n);
    for (std::size_t d = 0; d < n; ++d) {
      conductance[d] = dev.read_mean(d, t_end);
      programmed[d] = dev.programmed(d);
      energy[d] = dev.energy(d);
      pulses[d] = dev.pulse_count(d);
      health[d] = static_cast<std::uint8_t>(dev.health(d));
    }
    DeviceRecord r;
    r.pathway = path.name;
    r.device_model = std::string(device_kind_name(dev.parameters().kind));
    r.layout = std::string(synapse_layout_name(syn.layout().layout));
    r.rounding = std::string(rounding_name(path.policy->parameters().rounding));
    r.preset = path.device_preset;
    r.preset_text = path.device_preset_text;
    r.gain = syn.layout().gain;
    r.devices_per_synapse = syn.layout().devices();
    r.conductance = conductance;
    r.programmed = programmed;
    r.pulses = pulses;
    r.energy = energy;
    r.health = health;
    r.requested = path.policy->ledger().requested;
    r.realised = path.policy->ledger().realised;
    r.target_weight = path.synapses.weight;
    r.initial_weight = path.initial_weight;
    r.initial_failed = path.initial_write.failed;
    r.initial_out_of_range = path.initial_write.out_of_range;
    r.initial_unresponsive = path.initial_write.unresponsive;
    writer.write_devices(r);
  }
}

// What `run` checks before it starts, with the limits (README, "Limits and plausible ranges").
void print_estimates(const MemoryEstimate& memory, const RunCost& cost) {
  auto n = [](double x) { return x < 1e6 ? fmt::format("{:.0f}", x) : fmt::format("{:.3g}", x); };
  fmt::print("\nestimates before the run (limit without --allow-large-run in brackets)\n");
  const MemoryItem* big = memory.largest();
  fmt::print("  {:<16} {} (this machine has {}){}\n", "memory", format_bytes(memory.total_bytes),
             format_bytes(static_cast<double>(physical_memory_bytes())),
             big ? fmt::format("; largest part {} ({})", big->what, format_bytes(big->bytes)) : "");
  auto limit = [](double x) { return fmt::format("10^{:.0f}", std::log10(x)); };
  fmt::print("  {:<16} {} of {} ({})\n", "windows", n(cost.windows), format_quantity(cost.window, Dimension::time),
             limit(RunLimits::windows));
  fmt::print("  {:<16} {} ({})\n", "input spikes", n(cost.input_spikes), limit(RunLimits::input_spikes));
  fmt::print("  {:<16} {} caused by input spikes ({}); those of the network's own spikes depend on its activity\n",
             "synaptic events", n(cost.input_events), limit(RunLimits::input_events));
  fmt::print("  {:<16} {} ({})\n", "trace values", n(cost.trace_values), limit(RunLimits::trace_values));
  fmt::print("  {:<16} {} ({})\n", "weight values", n(cost.weight_values), limit(RunLimits::weight_values));
}

void print_summary_table(const std::vector<PopulationSummary>& rows) {
  fmt::print("{:<20} {:>9} {:>10} {:>10} {:>8}\n", "population", "neurons", "spikes", "rate_hz", "cv_isi");
  for (const auto& r : rows)
    fmt::print("{:<20} {:>9} {:>10} {:>10.3f} {:>8.3f}\n", r.name, r.neurons, r.spikes, r.mean_rate_hz, r.cv_isi);
}

}  // namespace

int run_command(const RunOptions& options) {
  const Model model = read_model_file(options.model, {options.overrides.allow_implausible});
  BuildOptions build;
  build.seed = options.seed;
  build.allow_large_run = options.overrides.allow_large_run;
  build.threads = options.threads;
  if (options.duration) build.duration = parse_duration_option(*options.duration, model.ranges.get());
  // The output is checked against every file the model names before any work starts.
  const CheckedOutput output = check_output_file(options.output, options.force, model.input_files());
  Simulation sim = Simulation::build(model, build);
  print_range_warnings(model);

  RunSummary summary;
  // A failure while the run goes on (a state that became NaN or infinite, a broken
  // invariant) keeps the file, marked "failed" with the message, for diagnosis; it
  // is thrown again once the file is in place. Failures before the run leave nothing.
  std::exception_ptr run_failure;
  write_then_rename(output, [&](const std::string& partial) {
    RunHeader header{NVSYN_VERSION, sim.seed(), sim.duration(), model.text, model.file, sim.threads()};
    RunWriter writer(partial, header);
    try {
      write_network(writer, sim, model.record.connectivity);
      ProgressLine progress(sim.duration());
      RunFileObserver observer(writer, sim, progress);
      g_interrupted = false;
      auto previous = std::signal(SIGINT, on_interrupt);
      try {
        summary = sim.run(observer, &g_interrupted);
      } catch (const UserError&) {
        throw;
      } catch (const std::exception& e) {
        std::signal(SIGINT, previous);
        progress.finish();
        // End-state records (final weights, conductances) are left out: they may hold
        // the very values that failed.
        const bool internal = dynamic_cast<const RunFailure*>(&e) == nullptr;
        writer.finish(RunStatus::failed, sim.time_reached(),
                      internal ? fmt::format("internal error: {}", e.what()) : std::string(e.what()));
        run_failure = std::current_exception();
        return;
      }
      std::signal(SIGINT, previous);
      progress.finish();
      write_learning_records(writer, sim, summary.time_reached);
      write_device_records(writer, sim, summary.time_reached);
      writer.finish(summary.reason == EndReason::complete ? RunStatus::complete : RunStatus::interrupted,
                    summary.time_reached);
    } catch (...) {
      std::signal(SIGINT, SIG_DFL);
      // Mark the file failed if it is still open; write_then_rename then removes it.
      try {
        writer.finish(RunStatus::failed, 0.0);
      } catch (...) {
      }
      throw;
    }
  });

  if (run_failure) {
    fmt::print("run file: {} (failed; complete up to model time {:g} s)\n", options.output, sim.time_reached());
    std::rethrow_exception(run_failure);
  }
  const bool complete = summary.reason == EndReason::complete;
  fmt::print("run file: {} ({})\n", options.output, complete ? "complete" : "interrupted");
  fmt::print("model time {:g} s in {:.2f} s wall ({:.3g}x real time); {} synaptic events, {} input spikes\n",
             summary.time_reached, summary.wall_seconds,
             summary.wall_seconds > 0 ? summary.time_reached / summary.wall_seconds : 0.0,
             summary.synaptic_events, summary.input_spikes);
  if (!options.quiet) print_summary_table(summarise_run(options.output));
  return complete ? 0 : 130;
}

int check_command(const std::string& model_path, const LimitOverrides& overrides) {
  const Model model = read_model_file(model_path, {overrides.allow_implausible});
  BuildOptions build;
  build.allow_large_run = overrides.allow_large_run;
  Simulation sim = Simulation::build(model, build);
  print_range_warnings(model);
  const Network& net = sim.network();
  std::size_t bytes = 0;
  fmt::print("model {}: OK\n", model_path);
  fmt::print("simulation: {} of model time, seed {}, window (minimum delay) {}\n",
             format_quantity(sim.duration(), Dimension::time), sim.seed(),
             format_quantity(sim.window(), Dimension::time));
  fmt::print("\npopulations\n");
  for (const Population& p : net.populations) {
    const std::size_t b = p.size() * p.neurons->bytes_per_neuron();
    bytes += b;
    fmt::print("  {:<20} {:>9} neurons  model {:<8} {} bytes/neuron\n", p.name, p.size(), p.neurons->model_name(),
               p.neurons->bytes_per_neuron());
  }
  fmt::print("\ninputs\n");
  if (sim.inputs().empty()) fmt::print("  (none)\n");
  for (std::size_t i = 0; i < sim.inputs().size(); ++i) {
    const InputChannel& in = sim.inputs()[i];
    if (in.spikes)
      fmt::print("  {:<20} {:>9} {}\n", in.name, in.spikes->size(), in.spikes->describe());
    else
      fmt::print("  {:<20} injected current\n", in.name);
  }
  fmt::print("\npathways\n");
  if (net.pathways.empty()) fmt::print("  (none)\n");
  for (std::size_t i = 0; i < net.pathways.size(); ++i) {
    const Pathway& p = net.pathways[i];
    const PathwaySpec& spec = model.pathways[i];
    bytes += p.synapses.bytes();
    fmt::print("  {:<20} {} -> {} ({}, {})  {} synapses  weight {}  delay {}\n", p.name, p.from, p.to, p.wiring,
               p.receptor == Receptor::excitatory ? "excitatory" : "inhibitory", p.synapses.size(),
               spec.wiring == WiringRule::list ? "from list" : spec.weight.describe(Dimension::current),
               spec.wiring == WiringRule::list ? "from list" : spec.delay.describe(Dimension::time));
  }
  bool any_learning = false;
  for (const Pathway& p : net.pathways) {
    if (!p.rule && !p.short_term) continue;
    if (!any_learning) fmt::print("\nplasticity\n");
    any_learning = true;
    std::size_t per_synapse = 0;
    std::string what;
    if (p.rule) {
      per_synapse += p.rule->bytes_per_synapse();
      bytes += p.rule->bytes_per_neuron() * p.target_size;
      what = fmt::format("rule {} (w_max {})", p.rule->name(), format_quantity(p.rule->w_max(), Dimension::current));
      if (!p.rewards.empty()) what += fmt::format(", {} scheduled rewards", p.rewards.size());
      if (p.normalise_interval > 0)
        what += fmt::format(", incoming weights normalised to {} every {}", format_quantity(p.normalise_total, Dimension::current),
                            format_quantity(p.normalise_interval, Dimension::time));
      if (std::isfinite(p.learn_until) || p.learn_from > 0)
        what += fmt::format(", learning from {} to {}", format_quantity(p.learn_from, Dimension::time),
                            std::isfinite(p.learn_until) ? format_quantity(p.learn_until, Dimension::time) : "the end");
      if (!p.devices) per_synapse += 2 * sizeof(double) + sizeof(std::uint32_t);  // requested/realised ledger
    }
    if (p.short_term) {
      per_synapse += ShortTermPlasticity::bytes_per_synapse();
      const auto& stp = p.short_term->parameters();
      what += fmt::format("{}short-term plasticity U = {:g}, tau_rec {}, tau_facil {}", what.empty() ? "" : "; ", stp.u,
                          format_quantity(stp.tau_rec, Dimension::time), format_quantity(stp.tau_facil, Dimension::time));
    }
    bytes += per_synapse * p.synapses.size();
    fmt::print("  {:<20} {}; {} bytes/synapse of learning state\n", p.name, what, per_synapse);
  }
  bool any_devices = false;
  for (const Pathway& p : net.pathways) {
    if (!p.devices) continue;
    if (!any_devices) fmt::print("\ndevice synapses\n");
    any_devices = true;
    const SynapseDevices& syn = *p.devices;
    const std::size_t per_synapse = device_bytes_per_synapse(p);
    bytes += per_synapse * p.synapses.size();
    const WriteSummary& w = p.initial_write;
    fmt::print("  {:<20} device {} ({}), layout {}, {} device(s)/synapse, rounding {}, gain {}\n", p.name,
               device_kind_name(syn.devices().parameters().kind),
               p.device_preset.empty() ? "inline" : "preset " + p.device_preset, synapse_layout_name(syn.layout().layout),
               syn.devices_per_synapse(), rounding_name(p.policy->parameters().rounding),
               format_quantity(syn.layout().gain, Dimension::voltage));
    fmt::print("  {:<20} {} bytes/synapse of device and policy state; initial weights: {} of {} written within "
               "tolerance, mean |error| {}, max {}\n",
               "", per_synapse, w.written - w.failed, w.written,
               format_quantity(w.written ? w.sum_abs_error / static_cast<double>(w.written) : 0.0, Dimension::current),
               format_quantity(w.max_abs_error, Dimension::current));
    if (w.failed)
      fmt::print("  {:<20} failures: {} out of range, {} on stuck or worn-out devices, {} not converged\n", "",
                 w.out_of_range, w.unresponsive, w.failed - w.out_of_range - w.unresponsive);
  }
  fmt::print("\ntotal: {} neurons, {} synapses; memory of the built network {:.1f} MiB\n", net.neuron_count(),
             net.synapse_count(), static_cast<double>(bytes) / (1024.0 * 1024.0));
  print_estimates(estimate_memory(model), estimate_run_cost(sim));
  return 0;
}

int summary_command(const std::string& run_file) {
  print_summary_table(summarise_run(run_file));
  return 0;
}

}  // namespace nvsyn::cli

namespace nvsyn::cli {

Subcommand register_run(CLI::App& app) {
  struct Args {
    RunOptions run;
    OutputOption output;
    std::uint64_t seed = 0;
    std::string duration;
  };
  auto args = std::make_shared<Args>();
  auto* cmd = app.add_subcommand("run", "Run a model and write a run file (HDF5)");
  cmd->add_option("model", args->run.model, "Model file (TOML)")->required();
  add_output_options(*cmd, args->output, "Run file to write, e.g. run.h5")->required();
  auto* seed_opt = cmd->add_option("--seed", args->seed, "Override the model's random seed");
  auto* duration_opt = cmd->add_option("--duration", args->duration, "Override the model time to simulate, e.g. \"2 s\"");
  cmd->add_flag("-q,--quiet", args->run.quiet, "Print no per-population summary at the end");
  cmd->add_option("--threads", args->run.threads,
                  "Threads of the event loop (default: every core this process may use); spikes and weights are "
                  "identical for any count")
      ->check(CLI::Range(1u, 4096u));
  add_override_flags(*cmd, args->run.overrides);
  return {cmd, [args, seed_opt, duration_opt] {
            args->run.output = args->output.path.value_or("");
            args->run.force = args->output.force;
            if (*seed_opt) args->run.seed = args->seed;
            if (*duration_opt) args->run.duration = args->duration;
            return run_command(args->run);
          }};
}

Subcommand register_check(CLI::App& app) {
  struct Args {
    std::string model;
    LimitOverrides overrides;
  };
  auto args = std::make_shared<Args>();
  auto* cmd = app.add_subcommand(
      "check", "Validate a model and print what would be built, with estimates of memory, windows, events and samples");
  cmd->add_option("model", args->model, "Model file (TOML)")->required();
  add_override_flags(*cmd, args->overrides);
  return {cmd, [args] { return check_command(args->model, args->overrides); }};
}

Subcommand register_summary(CLI::App& app) {
  auto file = std::make_shared<std::string>();
  auto* cmd = app.add_subcommand("summary", "Per-population neurons, spikes, mean rate and CV of inter-spike intervals");
  cmd->add_option("run_file", *file, "Run file (HDF5) written by 'nvsyn run'")->required();
  return {cmd, [file] { return summary_command(*file); }};
}

}  // namespace nvsyn::cli
