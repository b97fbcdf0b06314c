#include "inputs/poisson_trains.hpp"

#include <algorithm>
#include <fmt/format.h>
#include <limits>

#include "core/units.hpp"

namespace nvsyn {

PoissonTrains::PoissonTrains(std::uint32_t size, double rate_hz, double start, double stop,
                           std::uint64_t seed, std::uint32_t group_id)
    : rate_(rate_hz), start_(start), stop_(stop > start ? stop : std::numeric_limits<double>::infinity()) {
  next_.resize(size);
  rng_.reserve(size);
  for (std::uint32_t i = 0; i < size; ++i) {
    rng_.emplace_back(seed, StreamPurpose::poisson, (std::uint64_t{group_id} << 32) | i);
    next_[i] = rate_ > 0 ? start + rng_[i].exponential() / rate_ : std::numeric_limits<double>::infinity();
  }
}

std::string PoissonTrains::describe() const {
  return fmt::format("Poisson sources at {}", format_quantity(rate_, Dimension::frequency));
}

double PoissonTrains::expected_spikes(double t_end) const {
  const double active = std::min(t_end, stop_) - start_;
  return active > 0 ? rate_ * active * static_cast<double>(size()) : 0.0;
}

void PoissonTrains::emit(double t_end, std::vector<SourceSpike>& out) {
  for (std::uint32_t i = 0; i < size(); ++i) {
    while (next_[i] < t_end && next_[i] < stop_) {
      out.push_back({next_[i], i});
      next_[i] += rng_[i].exponential() / rate_;
    }
  }
}

}  // namespace nvsyn
