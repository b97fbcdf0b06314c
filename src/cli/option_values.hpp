#pragma once
// Quantities given on the command line ("5 uV", "1 s,1 h,10 yr"): parsed with the
// model files' unit rules (core/units.hpp) and checked against the plausible range
// of their kind (core/plausible_range.hpp; `ranges` may allow implausible values,
// null refuses them); a mistake is a UserError naming the option.
#include <string>
#include <vector>

#include "core/plausible_range.hpp"
#include "core/units.hpp"

namespace nvsyn::cli {

double parse_quantity_option(const std::string& text, const std::string& option, QuantityKind kind,
                             RangePolicy* ranges = nullptr);

// Comma-separated quantities of one kind, in the order given.
std::vector<double> parse_quantity_list_option(const std::string& text, const std::string& option,
                                               QuantityKind kind, RangePolicy* ranges = nullptr);

// A quantity rounded to `digits` significant digits, with the SI prefix that keeps
// the number in [1, 1000) ("12.3 uS", "1 uS"); "n/a" for NaN.
std::string format_rounded(double value_si, Dimension dimension, int digits = 3);

// A time in the largest unit of s, min, h, d, yr that keeps it at least 1 ("90 min", "10 yr").
std::string format_duration(double seconds);

}  // namespace nvsyn::cli
