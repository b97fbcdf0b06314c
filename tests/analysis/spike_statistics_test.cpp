// Spike statistics against answers worked out by hand.
#include "analysis/spike_statistics.hpp"

#include <unistd.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <random>
#include <span>
#include <vector>

#include "core/error.hpp"
#include "record/run_writer.hpp"

namespace {

using nvsyn::summarise_population;

struct Spikes {
  std::vector<double> times;
  std::vector<std::uint32_t> neurons;
  void add(double t, std::uint32_t n) {
    times.push_back(t);
    neurons.push_back(n);
  }
};

}  // namespace

TEST_CASE("a regular spike train has CV 0 and its rate is count over time", "[analysis]") {
  // 0.125 s is a power of two, so every time and interval is exact in binary and
  // the CV is exactly 0, not merely small.
  Spikes s;
  for (int k = 0; k <= 8; ++k) s.add(0.125 * k, 0);
  const auto summary = summarise_population("exc", 1, s.times, s.neurons, 2.0);
  CHECK(summary.name == "exc");
  CHECK(summary.neurons == 1);
  CHECK(summary.spikes == 9);
  CHECK(summary.mean_rate_hz == 4.5);  // 9 spikes / (1 neuron * 2 s)
  CHECK(summary.neurons_with_isi == 1);
  CHECK(summary.cv_isi == 0.0);
}

TEST_CASE("a regular train with inexact intervals has CV 0 to rounding", "[analysis]") {
  // Times k * 10 ms up to 1 s carry rounding of about 1e-16 s, so intervals of
  // 10 ms differ by about 1e-16 s: relative spread ~1e-14. 1e-12 leaves a margin
  // of 100 above that and is still 10 orders below any real irregularity.
  Spikes s;
  for (int k = 0; k < 100; ++k) s.add(0.01 * k, 0);
  const auto summary = summarise_population("exc", 1, s.times, s.neurons, 1.0);
  CHECK(summary.cv_isi < 1e-12);
}

TEST_CASE("CV of intervals with known mean and standard deviation", "[analysis]") {
  // Neuron 1 fires at 10, 11, 13, 16, 22 ms: intervals 1, 2, 3, 6 ms.
  //   mean = 12 / 4 = 3 ms
  //   deviations -2, -1, 0, 3 ms; squares 4, 1, 0, 9; sum 14 ms^2
  //   population variance 14 / 4 = 3.5 ms^2, sd = sqrt(3.5) ms
  //   CV = sqrt(3.5) / 3 = 0.62360956...
  const double cv_neuron_1 = std::sqrt(3.5) / 3.0;
  // Neuron 0 fires every 4 ms (CV 0); neuron 2 fires twice (one interval: left out);
  // neuron 3 never fires. Spikes interleave in time as a run file stores them.
  Spikes s;
  s.add(0.000, 0);
  s.add(0.004, 0);
  s.add(0.005, 2);
  s.add(0.008, 0);
  s.add(0.010, 1);
  s.add(0.011, 1);
  s.add(0.012, 0);
  s.add(0.013, 1);
  s.add(0.015, 2);
  s.add(0.016, 1);
  s.add(0.016, 0);
  s.add(0.022, 1);
  const auto summary = summarise_population("mixed", 4, s.times, s.neurons, 0.05);
  CHECK(summary.spikes == 12);
  CHECK(summary.neurons_with_isi == 2);
  // Millisecond times in binary carry relative rounding ~1e-16 s / 1e-3 s = 1e-13
  // in each interval; 1e-10 relative covers the few operations that follow.
  CHECK(summary.cv_isi == Approx((0.0 + cv_neuron_1) / 2.0).epsilon(1e-10));
  CHECK(summary.mean_rate_hz == Approx(12.0 / (4 * 0.05)).epsilon(1e-15));
}

TEST_CASE("CV of exponential intervals is near 1", "[analysis]") {
  // A Poisson train has exponential intervals, whose CV is 1. For n = 20000
  // intervals the estimate's standard error is about 1/sqrt(n) = 0.007, so a
  // tolerance of 0.04 is more than 5 standard errors: a false failure for a fresh
  // seed has probability below 1e-7. The seed is fixed, so the test is repeatable.
  std::mt19937_64 engine(20240611);
  std::exponential_distribution<double> interval(50.0);  // 50 Hz
  Spikes s;
  double t = 0.0;
  for (int k = 0; k <= 20000; ++k) {
    s.add(t, 0);
    t += interval(engine);
  }
  const auto summary = summarise_population("poisson", 1, s.times, s.neurons, t);
  CHECK(std::abs(summary.cv_isi - 1.0) < 0.04);
}

TEST_CASE("statistics with too few spikes are NaN, not zero", "[analysis]") {
  Spikes s;
  s.add(0.1, 0);
  s.add(0.2, 0);
  s.add(0.3, 1);
  const auto summary = summarise_population("sparse", 2, s.times, s.neurons, 1.0);
  CHECK(summary.neurons_with_isi == 0);
  CHECK(std::isnan(summary.cv_isi));
  CHECK(summary.mean_rate_hz == 1.5);
  CHECK(std::isnan(summarise_population("none", 0, {}, {}, 1.0).mean_rate_hz));
  CHECK(std::isnan(summarise_population("instant", 2, s.times, s.neurons, 0.0).mean_rate_hz));
}

TEST_CASE("invalid spike data is reported with the population", "[analysis]") {
  Spikes s;
  s.add(0.1, 0);
  s.add(0.2, 5);
  REQUIRE_THROWS_WITH(summarise_population("exc", 3, s.times, s.neurons, 1.0),
                      "error: population 'exc': spike at t = 0.2 s names neuron 5, but the population has 3 neurons");
  Spikes backwards;
  backwards.add(0.2, 1);
  backwards.add(0.1, 1);
  REQUIRE_THROWS_WITH(summarise_population("exc", 3, backwards.times, backwards.neurons, 1.0),
                      "error: population 'exc': spike times of neuron 1 go backwards (0.1 s after 0.2 s)");
}

TEST_CASE("spikes given in blocks give the same summary, bit for bit", "[analysis]") {
  // The run-file summary reads spikes in blocks; the running statistics see the
  // same spikes in the same order, so every block split must give identical bits.
  std::mt19937_64 rng(7);
  std::exponential_distribution<double> interval(20.0);
  std::uniform_int_distribution<std::uint32_t> neuron(0, 9);
  Spikes s;
  double t = 0.0;
  for (int k = 0; k < 1000; ++k) s.add(t += interval(rng), neuron(rng));
  const auto whole = summarise_population("exc", 10, s.times, s.neurons, t);
  for (std::size_t block : {std::size_t{1}, std::size_t{7}, std::size_t{999}, std::size_t{1000}}) {
    nvsyn::PopulationSummariser summariser("exc", 10);
    for (std::size_t start = 0; start < s.times.size(); start += block) {
      const std::size_t n = std::min(block, s.times.size() - start);
      summariser.add(std::span<const double>(s.times).subspan(start, n),
                     std::span<const std::uint32_t>(s.neurons).subspan(start, n));
    }
    const auto parts = summariser.finish(t);
    INFO("block " << block);
    CHECK(parts.spikes == whole.spikes);
    CHECK(parts.mean_rate_hz == whole.mean_rate_hz);
    CHECK(parts.cv_isi == whole.cv_isi);
    CHECK(parts.neurons_with_isi == whole.neurons_with_isi);
  }
}

TEST_CASE("summarise_run reads a run file", "[analysis]") {
  const std::string path = (std::filesystem::temp_directory_path() /
                            ("nvsyn_summary_" + std::to_string(::getpid()) + ".h5"))
                               .string();
  nvsyn::RunHeader header;
  header.duration = 1.0;
  Spikes exc;
  for (int k = 0; k < 4; ++k) exc.add(0.25 * k, 1);  // regular: CV 0
  {
    nvsyn::RunWriter writer(path, header);
    writer.describe_population("exc", 2, "lif");
    writer.describe_population("unrecorded", 5, "lif");
    writer.describe_population("inh", 1, "lif");
    writer.append_spikes(writer.open_spikes("exc"), exc.times, exc.neurons);
    writer.open_spikes("inh");
    // Stopped early: rates are over the time reached, not the requested duration.
    writer.finish(nvsyn::RunStatus::interrupted, 0.8);
  }
  const auto summaries = nvsyn::summarise_run(path);
  REQUIRE(summaries.size() == 2);
  CHECK(summaries[0].name == "exc");
  CHECK(summaries[0].spikes == 4);
  CHECK(summaries[0].mean_rate_hz == Approx(4.0 / (2 * 0.8)).epsilon(1e-15));
  CHECK(summaries[0].cv_isi == 0.0);
  CHECK(summaries[1].name == "inh");
  CHECK(summaries[1].spikes == 0);
  CHECK(summaries[1].mean_rate_hz == 0.0);

  {
    nvsyn::RunWriter unfinished(path, header);
  }
  REQUIRE_THROWS_WITH(nvsyn::summarise_run(path),
                      "error: run file '" + path +
                          "' has status 'running' and no 'time_reached': the run did not finish, so rates have no "
                          "defined duration");
  std::filesystem::remove(path);
}
