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
// Rejects NaN and infinities, also those that arise from the prefix ("1e300 TA"), and
// nonzero values that underflow to zero or to a subnormal number ("1e-300 fA"). Prefixes f p n u (or µ) m k M G T apply to
// s V A S F Ohm Hz J C; "min", "h", "d", "yr" are also times.
std::optional<Quantity> parse_quantity(std::string_view text, std::string& why);

// Formats an SI value with a readable prefix, e.g. 0.02 s -> "20 ms".
std::string format_quantity(double value_si, Dimension d);

// A time for messages: below a minute as format_quantity ("20 ms"), above it in min,
// h, d or yr ("33.3 min", "31.7 yr", "10000 yr"); beyond 10^6 yr in seconds ("1e+300 s").
std::string format_time(double seconds);

}  // namespace nvsyn
