#pragma once
// A running simulation that cannot go on: a state variable stopped being a finite
// number (NaN or infinity in a membrane potential, a current, a weight, a
// requested change, a conductance), so every later result would be poisoned.
//
// It is an InternalError (exit status 1, DESIGN.md "Errors") that says where and
// when: the code that notices names the neuron or synapse and the variable; the
// kernel adds the population or pathway on the way up (within()). The CLI keeps the
// run file, marked "failed" with this message.
#include <cmath>
#include <fmt/format.h>
#include <string>

#include "core/error.hpp"

namespace nvsyn {

class RunFailure : public InternalError {
 public:
  // where: "neuron 12" or "synapse 40"; problem: "i_exc = inf A is not finite".
  RunFailure(std::string where, std::string problem, double model_time)
      : InternalError(fmt::format("{}: {} at model time {} s", where, problem, model_time)),
        where_(std::move(where)),
        problem_(std::move(problem)),
        model_time_(model_time) {}

  const std::string& where() const { return where_; }
  const std::string& problem() const { return problem_; }
  double model_time() const { return model_time_; }  // s

  // The same failure located inside `owner`, e.g. "population 'exc'".
  RunFailure within(const std::string& owner) const { return {owner + ", " + where_, problem_, model_time_}; }

 private:
  std::string where_;
  std::string problem_;
  double model_time_;
};

// "<variable> = <value> <unit> is not finite", the usual problem text.
inline std::string not_finite(std::string_view variable, double value, std::string_view unit) {
  return fmt::format("{} = {}{}{} is not finite", variable, value, unit.empty() ? "" : " ", unit);
}

}  // namespace nvsyn
