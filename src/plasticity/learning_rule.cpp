#include "plasticity/learning_rule.hpp"

#include <fmt/format.h>

#include "plasticity/pair_stdp.hpp"
#include "plasticity/reward_stdp.hpp"
#include "plasticity/short_term_stdp.hpp"
#include "plasticity/triplet_stdp.hpp"

namespace nvsyn {

std::unique_ptr<LearningRule> make_learning_rule(const ParamTable& t, std::size_t synapses, std::uint32_t post) {
  const std::string rule = t.text("rule");
  if (rule == "pair_stdp") return std::make_unique<PairStdp>(PairStdpParameters::from_table(t), synapses, post);
  if (rule == "triplet_stdp")
    return std::make_unique<TripletStdp>(TripletStdpParameters::from_table(t), synapses, post);
  if (rule == "short_term_stdp")
    return std::make_unique<ShortTermStdp>(ShortTermStdpParameters::from_table(t), synapses, post);
  if (rule == "reward_stdp") return std::make_unique<RewardStdp>(RewardStdpParameters::from_table(t), synapses, post);
  throw t.error("rule", fmt::format("unknown learning rule '{}'; known rules: pair_stdp, triplet_stdp, "
                                    "short_term_stdp, reward_stdp",
                                    rule));
}

}  // namespace nvsyn
