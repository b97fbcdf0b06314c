#include "analysis/spike_statistics.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>

#include "core/error.hpp"
#include "core/machine_memory.hpp"
#include "record/run_reader.hpp"

namespace nvsyn {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Running statistics of one neuron's inter-spike intervals (Welford).
struct IntervalStats {
  std::uint64_t spikes = 0;
  double last_time = 0.0;  // s
  std::uint64_t intervals = 0;
  double mean = 0.0;  // s
  double sum_squared_deviation = 0.0;  // s^2

  void add_spike(double time) {
    if (spikes > 0) {
      const double interval = time - last_time;
      ++intervals;
      const double delta = interval - mean;
      mean += delta / static_cast<double>(intervals);
      sum_squared_deviation += delta * (interval - mean);
    }
    last_time = time;
    ++spikes;
  }
};

}  // namespace

struct PopulationSummariser::State {
  std::string name;
  std::uint32_t neuron_count = 0;
  std::uint64_t spikes = 0;
  std::vector<IntervalStats> per_neuron;
};

PopulationSummariser::PopulationSummariser(std::string name, std::uint32_t neuron_count)
    : state_(std::make_unique<State>()) {
  state_->name = std::move(name);
  state_->neuron_count = neuron_count;
  state_->per_neuron.resize(neuron_count);
}

PopulationSummariser::~PopulationSummariser() = default;

std::size_t PopulationSummariser::bytes_per_neuron() { return sizeof(IntervalStats); }

void PopulationSummariser::add(std::span<const double> times, std::span<const std::uint32_t> neurons) {
  const std::string& name = state_->name;
  if (times.size() != neurons.size())
    throw UserError(fmt::format("population '{}': {} spike times but {} neuron indices", name, times.size(),
                                neurons.size()));
  for (std::size_t i = 0; i < times.size(); ++i) {
    const std::uint32_t n = neurons[i];
    if (n >= state_->neuron_count)
      throw UserError(fmt::format("population '{}': spike at t = {} s names neuron {}, but the population has {} "
                                  "neurons",
                                  name, times[i], n, state_->neuron_count));
    IntervalStats& s = state_->per_neuron[n];
    if (s.spikes > 0 && times[i] < s.last_time)
      throw UserError(fmt::format("population '{}': spike times of neuron {} go backwards ({} s after {} s)", name,
                                  n, times[i], s.last_time));
    s.add_spike(times[i]);
  }
  state_->spikes += times.size();
}

PopulationSummary PopulationSummariser::finish(double duration_s) const {
  const std::uint32_t neuron_count = state_->neuron_count;
  PopulationSummary summary;
  summary.name = state_->name;
  summary.neurons = neuron_count;
  summary.spikes = state_->spikes;
  summary.mean_rate_hz = (neuron_count > 0 && duration_s > 0.0)
                             ? static_cast<double>(state_->spikes) / (neuron_count * duration_s)
                             : kNaN;
  double cv_sum = 0.0;
  for (const IntervalStats& s : state_->per_neuron) {
    if (s.intervals < 2 || s.mean <= 0.0) continue;
    const double sd = std::sqrt(s.sum_squared_deviation / static_cast<double>(s.intervals));
    cv_sum += sd / s.mean;
    ++summary.neurons_with_isi;
  }
  summary.cv_isi = summary.neurons_with_isi > 0 ? cv_sum / summary.neurons_with_isi : kNaN;
  return summary;
}

PopulationSummary summarise_population(const std::string& name, std::uint32_t neuron_count,
                                       std::span<const double> times, std::span<const std::uint32_t> neurons,
                                       double duration_s) {
  PopulationSummariser summariser(name, neuron_count);
  summariser.add(times, neurons);
  return summariser.finish(duration_s);
}

std::vector<PopulationSummary> summarise_run(const std::string& path) {
  RunReader reader(path);
  const RunFileInfo& info = reader.info();
  if (!info.time_reached)
    throw UserError(fmt::format("run file '{}' has status '{}' and no 'time_reached': the run did not finish, so "
                                "rates have no defined duration",
                                path, run_status_name(info.status)));
  std::vector<PopulationSummary> summaries;
  for (const RunPopulationInfo& population : info.populations) {
    if (!population.has_spikes) continue;
    const double needed = static_cast<double>(population.size) * PopulationSummariser::bytes_per_neuron();
    if (needed > static_cast<double>(memory_budget_bytes()))
      throw UserError(fmt::format("run file '{}': population '{}' states {} neurons; summarising it needs {} of "
                                  "memory, more than the {} (half of this machine's memory) a reader may use",
                                  path, population.name, population.size, format_bytes(needed),
                                  format_bytes(static_cast<double>(memory_budget_bytes()))));
    PopulationSummariser summariser(population.name, population.size);
    reader.for_each_spike_block(population.name, [&](std::span<const double> times,
                                                     std::span<const std::uint32_t> neurons) {
      try {
        summariser.add(times, neurons);
      } catch (const UserError& e) {
        throw e.with_context(fmt::format("in run file '{}'", path));
      }
    });
    summaries.push_back(summariser.finish(*info.time_reached));
  }
  return summaries;
}

}  // namespace nvsyn
