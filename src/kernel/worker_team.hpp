#pragma once
// A fixed team of threads that runs the parallel phases of the event loop.
//
// The kernel's parallel phases are short (tens of microseconds: one window of a
// small network) and there are tens of thousands of them per model second, so the
// team is started once and its threads wait between phases by spinning briefly and
// then sleeping on an atomic (C++20 wait/notify, a futex on Linux): a phase that
// follows quickly costs no system call, a long serial stretch costs no CPU.
//
// Work is a count of independent tasks, claimed one at a time from a shared counter,
// so a slow task does not hold up the others, and a phase ends when its tasks are
// done, whether or not every thread took part: a thread the system has descheduled
// (more threads than free cores) delays a phase only if it holds one of its tasks.
// Which thread runs which task varies from run to run: callers make results
// independent of it (kernel/neuron_blocks.hpp).
#include <atomic>
#include <cstddef>
#include <cstdint>
#include <thread>
#include <vector>

namespace nvsyn {

class WorkerTeam {
 public:
  // A team of `threads` threads in all, the calling thread included (threads >= 1).
  explicit WorkerTeam(unsigned threads);
  ~WorkerTeam();
  WorkerTeam(const WorkerTeam&) = delete;
  WorkerTeam& operator=(const WorkerTeam&) = delete;

  unsigned size() const { return static_cast<unsigned>(workers_.size()) + 1; }

  // Calls task(i, worker) for every i in [0, count) and returns when all calls have
  // returned; worker < size() identifies the calling thread (0 is the caller), for
  // per-thread scratch. Runs on the calling thread alone when the team has one
  // thread or count < 2. `task` must not throw: catch inside and report afterwards.
  template <class Task>
  void for_each(std::size_t count, Task&& task) {
    if (workers_.empty() || count < 2) {
      for (std::size_t i = 0; i < count; ++i) task(i, 0u);
      return;
    }
    run(count, [](void* context, std::size_t i, unsigned worker) { (*static_cast<Task*>(context))(i, worker); },
        &task);
  }

 private:
  using Trampoline = void (*)(void*, std::size_t, unsigned);
  void run(std::size_t count, Trampoline call, void* context);
  void work(unsigned worker);
  // Claims and runs tasks of the phase `ticket` belongs to until none is left.
  void claim_tasks(std::uint64_t ticket, unsigned worker);

  // What a phase runs. Two slots, by phase parity: a slot is rewritten only two phases
  // later, when no task of its phase can be claimed any more (see claim_tasks).
  struct Phase {
    std::atomic<Trampoline> call{nullptr};
    std::atomic<void*> context{nullptr};
    std::atomic<std::size_t> count{0};
  };

  std::vector<std::thread> workers_;
  Phase phases_[2];
  // (phase number << 32) | index of the next unclaimed task. A claim is a
  // compare-and-swap on the whole word, so a thread that was descheduled and wakes
  // up late can never claim a task of a phase that has moved on.
  alignas(64) std::atomic<std::uint64_t> ticket_{0};
  alignas(64) std::atomic<std::size_t> done_{0};  // tasks of the current phase finished
  std::atomic<bool> quit_{false};
};

// The number of threads to use by default: every core this process may run on
// (its CPU affinity), at most the CPU quota of its container (cgroups) if it has one.
unsigned default_thread_count();

}  // namespace nvsyn
