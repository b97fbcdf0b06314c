#include "kernel/worker_team.hpp"

#include <sched.h>

#include <chrono>

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
  phase_.fetch_add(1, std::memory_order_release);
  phase_.notify_all();
  for (std::thread& t : workers_) t.join();
}

void WorkerTeam::claim_tasks(unsigned worker) {
  for (;;) {
    const std::size_t i = next_task_.fetch_add(1, std::memory_order_relaxed);
    if (i >= count_) return;
    call_(context_, i, worker);
  }
}

void WorkerTeam::run(std::size_t count, Trampoline call, void* context) {
  call_ = call;
  context_ = context;
  count_ = count;
  next_task_.store(0, std::memory_order_relaxed);
  busy_.store(static_cast<unsigned>(workers_.size()), std::memory_order_relaxed);
  // Publishes the phase: everything above happens before a worker's acquire load.
  phase_.fetch_add(1, std::memory_order_release);
  phase_.notify_all();
  claim_tasks(0);
  // Every worker leaves the phase (having seen the last task claimed) before the
  // next phase may overwrite call_, context_ and count_.
  for (unsigned busy = busy_.load(std::memory_order_acquire); busy != 0;)
    busy = wait_for_change(busy_, busy);
}

void WorkerTeam::work(unsigned worker) {
  std::uint64_t seen = 0;
  for (;;) {
    seen = wait_for_change(phase_, seen);
    if (quit_.load(std::memory_order_relaxed)) return;
    claim_tasks(worker);
    // The release half publishes this worker's results to the caller's acquire load.
    if (busy_.fetch_sub(1, std::memory_order_acq_rel) == 1) busy_.notify_one();
  }
}

unsigned default_thread_count() {
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof(set), &set) == 0) {
    const int n = CPU_COUNT(&set);
    if (n > 0) return static_cast<unsigned>(n);
  }
  const unsigned n = std::thread::hardware_concurrency();
  return n > 0 ? n : 1;
}

}  // namespace nvsyn
