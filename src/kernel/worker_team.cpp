#include "kernel/worker_team.hpp"

#include <sched.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <string>

namespace nvsyn {

namespace {

// How a thread waits: spinning for up to kSpinTime, so that a phase that follows
// within microseconds is seen at once, and yielding its core now and then, so that
// with more threads than free cores the thread that holds a task gets to run; then
// sleeping, so that a thread waiting through a long serial stretch stops using a
// core. kSpinTime covers the serial stretch between two phases of one window of a
// small network; waking a sleeping thread costs several times as much.
constexpr auto kSpinTime = std::chrono::microseconds(100);
constexpr int kSpinsPerYield = 64;

inline void cpu_relax() {
#if defined(__x86_64__) || defined(__i386__)
  __builtin_ia32_pause();
#elif defined(__aarch64__)
  asm volatile("yield");
#endif
}

// Waits until `value` differs from `seen` and returns the new value.
template <class T>
T wait_for_change(const std::atomic<T>& value, T seen) {
  const auto give_up = std::chrono::steady_clock::now() + kSpinTime;
  for (int i = 1;; ++i) {
    const T now = value.load(std::memory_order_acquire);
    if (now != seen) return now;
    if (i % kSpinsPerYield != 0) {
      cpu_relax();
      continue;
    }
    if (std::chrono::steady_clock::now() > give_up) break;
    sched_yield();
  }
  for (;;) {
    value.wait(seen, std::memory_order_acquire);
    const T now = value.load(std::memory_order_acquire);
    if (now != seen) return now;
  }
}

}  // namespace

WorkerTeam::WorkerTeam(unsigned threads) {
  const unsigned extra = threads > 1 ? threads - 1 : 0;
  workers_.reserve(extra);
  for (unsigned w = 1; w <= extra; ++w) workers_.emplace_back([this, w] { work(w); });
}

WorkerTeam::~WorkerTeam() {
  quit_.store(true, std::memory_order_relaxed);
  ticket_.fetch_add(std::uint64_t{1} << 32, std::memory_order_release);
  ticket_.notify_all();
  for (std::thread& t : workers_) t.join();
}

void WorkerTeam::claim_tasks(std::uint64_t ticket, unsigned worker) {
  const std::uint64_t phase_number = ticket >> 32;
  const Phase& phase = phases_[phase_number % 2];
  for (;;) {
    const std::size_t i = ticket & 0xffffffffu;
    // Read after `ticket` was: if the phase has moved on since, the slot may hold a
    // later phase's values, but then the exchange below fails.
    const std::size_t count = phase.count.load(std::memory_order_relaxed);
    if (i >= count) return;
    if (!ticket_.compare_exchange_weak(ticket, ticket + 1, std::memory_order_acquire, std::memory_order_relaxed)) {
      // Another thread claimed task i (try the next), or the phase moved on (stop).
      if ((ticket >> 32) != phase_number) return;
      continue;
    }
    phase.call.load(std::memory_order_relaxed)(phase.context.load(std::memory_order_relaxed), i, worker);
    if (done_.fetch_add(1, std::memory_order_release) + 1 == count) done_.notify_one();
    ++ticket;
  }
}

void WorkerTeam::run(std::size_t count, Trampoline call, void* context) {
  const std::uint64_t phase_number = (ticket_.load(std::memory_order_relaxed) >> 32) + 1;
  Phase& phase = phases_[phase_number % 2];
  phase.call.store(call, std::memory_order_relaxed);
  phase.context.store(context, std::memory_order_relaxed);
  phase.count.store(count, std::memory_order_relaxed);
  done_.store(0, std::memory_order_relaxed);
  // Publishes the phase: everything above happens before a worker's acquire load.
  const std::uint64_t ticket = phase_number << 32;
  ticket_.store(ticket, std::memory_order_release);
  ticket_.notify_all();
  claim_tasks(ticket, 0);
  // Every task has been claimed; wait until the last one is finished. Its results
  // are visible here through the release/acquire pair on done_.
  for (std::size_t done = done_.load(std::memory_order_acquire); done != count;)
    done = wait_for_change(done_, done);
}

void WorkerTeam::work(unsigned worker) {
  std::uint64_t seen = 0;
  for (;;) {
    const std::uint64_t ticket = wait_for_change(ticket_, seen);
    if (quit_.load(std::memory_order_relaxed)) return;
    claim_tasks(ticket, worker);
    // Wait for the next phase, not for a change of the index within this one.
    seen = ticket_.load(std::memory_order_acquire);
    if ((seen >> 32) != (ticket >> 32)) seen = ticket;  // a new phase already started: take it next
  }
}

namespace {

// CPUs' worth of time a container's CPU quota allows (cgroup v2 cpu.max, or v1
// cfs_quota_us / cfs_period_us), rounded up; 0 when there is no quota. A quota of
// 2 CPUs on a 64-core host must give 2 threads: more would be descheduled in turn.
unsigned cpu_quota() {
  auto quota_of = [](double quota, double period) -> unsigned {
    if (!(quota > 0) || !(period > 0)) return 0;
    return static_cast<unsigned>(std::ceil(quota / period));
  };
  if (std::ifstream v2("/sys/fs/cgroup/cpu.max"); v2) {
    std::string quota;
    double period = 0;
    if (v2 >> quota >> period && quota != "max") return quota_of(std::atof(quota.c_str()), period);
    return 0;
  }
  for (const char* folder : {"/sys/fs/cgroup/cpu", "/sys/fs/cgroup/cpu,cpuacct"}) {
    std::ifstream quota_file(std::string(folder) + "/cpu.cfs_quota_us");
    std::ifstream period_file(std::string(folder) + "/cpu.cfs_period_us");
    double quota = 0, period = 0;
    if (quota_file >> quota && period_file >> period) return quota_of(quota, period);  // -1: no quota
  }
  return 0;
}

}  // namespace

unsigned default_thread_count() {
  unsigned n = 0;
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof(set), &set) == 0) n = static_cast<unsigned>(std::max(0, CPU_COUNT(&set)));
  if (n == 0) n = std::thread::hardware_concurrency();
  if (const unsigned quota = cpu_quota(); quota > 0 && (n == 0 || quota < n)) n = quota;
  return n > 0 ? n : 1;
}

}  // namespace nvsyn
