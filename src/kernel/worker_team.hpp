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
// so a slow task does not hold up the others. Which thread runs which task varies
// from run to run: callers make results independent of it (kernel/neuron_blocks.hpp).
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
  void claim_tasks(unsigned worker);

  std::vector<std::thread> workers_;
  // The current phase: published by bumping `phase_`, read by the workers after
  // they see the new value.
  Trampoline call_ = nullptr;
  void* context_ = nullptr;
  std::size_t count_ = 0;
  alignas(64) std::atomic<std::uint64_t> phase_{0};
  alignas(64) std::atomic<std::size_t> next_task_{0};
  alignas(64) std::atomic<unsigned> busy_{0};  // workers still inside the phase
  std::atomic<bool> quit_{false};
};

// The number of threads to use by default: every core this process may run on.
unsigned default_thread_count();

}  // namespace nvsyn
