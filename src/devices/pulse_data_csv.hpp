#pragma once
// Reads measured pulse responses from a CSV file.
//
// Format: lines starting with '#' and blank lines are skipped; the first other line is
// a header naming the columns, in any order:
//   device,cycle,pulse,polarity,conductance [uS]            (required)
//   read_time [s]                                            (optional: drift series)
// device, cycle and pulse are whole numbers >= 0; polarity is potentiate or depress
// (or + and -); conductance and read_time are numbers in the unit given in brackets
// (any unit of the right dimension: S, mS, uS, nS ...; s, ms, min, h ...).
// Every error is a UserError at file:line:column naming the column; the result is
// validated (PulseData::validate) before it is returned.
#include <string>

#include "devices/pulse_data.hpp"

namespace nvsyn {

PulseData read_pulse_csv(const std::string& path);

// The same, from text already in memory; `file_name` is used in messages.
PulseData parse_pulse_csv(const std::string& text, const std::string& file_name);

}  // namespace nvsyn
