#pragma once
// The wake-up calendar of one population: for each neuron, the earliest time at
// which it can reach threshold without further input (NeuronBank::
// earliest_threshold_time), kept in a min-heap keyed by (time, neuron) so that the
// kernel finds the neurons due in a segment without looking at the others.
//
// Entries are never removed when a neuron's time changes: a new entry is pushed
// and the old one is recognised as stale when it surfaces (its time differs from
// the neuron's current wake-up time). When stale entries outnumber live ones the
// heap is rebuilt from the per-neuron times, so its size stays below about three
// entries per neuron and, once grown, it never allocates again.
#include <algorithm>
#include <cstdint>
#include <limits>
#include <vector>

namespace nvsyn {

class WakeCalendar {
 public:
  WakeCalendar() = default;
  explicit WakeCalendar(std::uint32_t size) : wake_(size, kNever) {}

  // Sets neuron n's wake-up time (s); +infinity: never without input.
  void set(std::uint32_t n, double t) {
    wake_[n] = t;
    if (!(t < kNever)) return;
    if (heap_.size() >= 2 * wake_.size() + 64) rebuild();
    heap_.push_back({t, n});
    std::push_heap(heap_.begin(), heap_.end(), later);
  }

  // A lower bound of the earliest wake-up time (+infinity when none is pending).
  double earliest() const { return heap_.empty() ? kNever : heap_.front().time; }

  // Removes the neurons whose wake-up time lies before t_end and appends them to
  // `due` in increasing neuron index (each neuron once); their times become
  // +infinity until the caller sets new ones after visiting them.
  void take_before(double t_end, std::vector<std::uint32_t>& due) {
    const std::size_t first = due.size();
    while (!heap_.empty() && heap_.front().time < t_end) {
      const Entry e = heap_.front();
      std::pop_heap(heap_.begin(), heap_.end(), later);
      heap_.pop_back();
      if (e.time != wake_[e.neuron]) continue;  // stale, or a duplicate already taken
      wake_[e.neuron] = kNever;
      due.push_back(e.neuron);
    }
    std::sort(due.begin() + static_cast<std::ptrdiff_t>(first), due.end());
  }

 private:
  static constexpr double kNever = std::numeric_limits<double>::infinity();
  struct Entry {
    double time;
    std::uint32_t neuron;
  };
  // Heap order: the smallest (time, neuron) at the front. A function object, not a
  // function pointer, so that the heap operations inline it.
  struct Later {
    bool operator()(const Entry& a, const Entry& b) const {
      return a.time > b.time || (a.time == b.time && a.neuron > b.neuron);
    }
  };
  static constexpr Later later{};
  void rebuild() {
    heap_.clear();
    for (std::uint32_t n = 0; n < wake_.size(); ++n)
      if (wake_[n] < kNever) heap_.push_back({wake_[n], n});
    std::make_heap(heap_.begin(), heap_.end(), later);
  }

  std::vector<double> wake_;  // per neuron, s
  std::vector<Entry> heap_;
};

}  // namespace nvsyn
