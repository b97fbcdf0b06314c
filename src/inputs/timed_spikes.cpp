#include "inputs/timed_spikes.hpp"

#include <algorithm>
#include <fmt/format.h>

namespace nvsyn {

TimedSpikes::TimedSpikes(std::vector<std::vector<double>> times) : times_(std::move(times)), next_(times_.size(), 0) {}

TimedSpikes TimedSpikes::regular(std::uint32_t size, double rate_hz, double start, std::uint32_t count) {
  std::vector<double> train(count);
  // Multiply rather than accumulate, so the n-th spike is exactly start + n / rate.
  for (std::uint32_t n = 0; n < count; ++n) train[n] = start + static_cast<double>(n) / rate_hz;
  return TimedSpikes(std::vector<std::vector<double>>(size, train));
}

void TimedSpikes::emit(double t_end, std::vector<SourceSpike>& out) {
  for (std::uint32_t i = 0; i < times_.size(); ++i)
    for (; next_[i] < times_[i].size() && times_[i][next_[i]] < t_end; ++next_[i]) out.push_back({times_[i][next_[i]], i});
}

double TimedSpikes::expected_spikes(double t_end) const {
  double n = 0;
  for (const auto& train : times_)
    n += static_cast<double>(std::lower_bound(train.begin(), train.end(), t_end) - train.begin());
  return n;
}

std::string TimedSpikes::describe() const {
  std::size_t total = 0;
  for (const auto& t : times_) total += t.size();
  return fmt::format("sources firing at given times ({} spikes in all)", total);
}

}  // namespace nvsyn
