#pragma once
#include <cstdint>
#include <string_view>

namespace nvsyn {

// Direction of a programming pulse: potentiating pulses raise the conductance,
// depressing pulses lower it.
enum class Polarity : std::uint8_t { potentiate = 0, depress = 1 };

constexpr std::string_view polarity_name(Polarity p) { return p == Polarity::potentiate ? "potentiate" : "depress"; }

}  // namespace nvsyn
