// The thread team runs every task of every phase exactly once, whatever the number of
// threads (more threads than cores included) and however short the phases.
#include <catch2/catch.hpp>
#include <atomic>
#include <vector>

#include "kernel/worker_team.hpp"

using namespace nvsyn;

TEST_CASE("every task of every phase runs exactly once", "[kernel][threads]") {
  for (unsigned threads : {1u, 2u, 3u, 5u}) {
    INFO(threads << " threads");
    WorkerTeam team(threads);
    REQUIRE(team.size() == threads);
    std::vector<std::atomic<int>> runs(64);
    std::vector<int> worker_seen(threads, 0);
    std::atomic<int> bad_worker{0};
    for (int phase = 0; phase < 3000; ++phase) {
      const std::size_t count = static_cast<std::size_t>(phase % 37);  // 0, 1 (inline) and many
      for (auto& r : runs) r.store(0);
      team.for_each(count, [&](std::size_t i, unsigned worker) {
        runs[i].fetch_add(1, std::memory_order_relaxed);
        if (worker >= threads) bad_worker.fetch_add(1);
      });
      for (std::size_t i = 0; i < runs.size(); ++i) {
        // Checked only on failure, so that 3000 phases do not flood the report.
        if (runs[i].load() != (i < count ? 1 : 0)) {
          INFO("phase " << phase << ", task " << i << " of " << count);
          REQUIRE(runs[i].load() == (i < count ? 1 : 0));
        }
      }
    }
    CHECK(bad_worker.load() == 0);
  }
}

TEST_CASE("results written by tasks are visible when for_each returns", "[kernel][threads]") {
  WorkerTeam team(3);
  std::vector<double> out(1000, 0.0);
  for (int round = 1; round <= 200; ++round) {
    team.for_each(out.size(), [&](std::size_t i, unsigned) { out[i] = round * 1.0 + static_cast<double>(i); });
    double sum = 0;
    for (double v : out) sum += v;
    REQUIRE(sum == 1000.0 * round + 999.0 * 1000.0 / 2.0);
  }
}
