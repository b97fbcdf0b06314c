#pragma once
// Physical quantities as they are written in model files ("20 ms", "-65 mV", "1.5 uS").
// Inside nvsyn every quantity is a double in SI units (s, V, A, S, F, Ohm, Hz, J).
// Parsing checks the dimension: "5 nS" where a time is expected is an error.
#include <optional>
#include <string>
#include <string_view>

namespace nvsyn {

enum class Dimension {
  dimensionless,
  time,
  voltage,
  current,
  conductance,
  capacitance,
  resistance,
  frequency,
  energy,
  charge,
};

// Human name ("time") and an example unit ("ms") for messages.
std::string_view dimension_name(Dimension d);
std::string_view example_unit(Dimension d);

struct Quantity {
  double value_si = 0.0;
  Dimension dimension = Dimension::dimensionless;
};

// Parses "<number> <unit>" (space optional). Returns nullopt and sets `why` on failure.
// Rejects NaN and infinities. Prefixes f p n u (or µ) m k M G T apply to
// s V A S F Ohm Hz J C; "min", "h", "d", "yr" are also times.
std::optional<Quantity> parse_quantity(std::string_view text, std::string& why);

// Formats an SI value with a readable prefix, e.g. 0.02 s -> "20 ms".
std::string format_quantity(double value_si, Dimension d);

}  // namespace nvsyn
