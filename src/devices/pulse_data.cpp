#include "devices/pulse_data.hpp"

#include <cmath>
#include <fmt/format.h>
#include <map>
#include <tuple>

namespace nvsyn {

UserError PulseData::error_at(int row, const std::string& column, const std::string& message) const {
  if (numbering == RowNumbering::file_line) return UserError({file, row, 0}, column_prefix + column, message);
  return UserError({file}, column_prefix + column, fmt::format("row {}: {}", row, message));
}

UserError PulseData::error_at_end(const std::string& column, const std::string& message) const {
  if (records.empty()) return UserError({file}, column_prefix + column, message);
  return error_at(records.back().row, column, message + " (at the end of the data)");
}

void PulseData::validate() const {
  // The last record seen of each ramp (device, cycle, polarity).
  std::map<std::tuple<std::uint32_t, std::uint32_t, Polarity>, const PulseRecord*> last;
  for (const PulseRecord& r : records) {
    if (!std::isfinite(r.conductance)) throw error_at(r.row, "conductance", "is not a finite number");
    if (r.conductance < 0)
      throw error_at(r.row, "conductance", fmt::format("a conductance cannot be negative, got {:g} S", r.conductance));
    if (has_read_time) {
      if (!std::isfinite(r.read_time)) throw error_at(r.row, "read_time", "is not a finite number");
      if (r.read_time < 0)
        throw error_at(r.row, "read_time", fmt::format("a read time cannot be negative, got {:g} s", r.read_time));
    } else if (!std::isnan(r.read_time)) {
      throw error_at(r.row, "read_time", "a read time is given although the data have no read_time column");
    }

    const PulseRecord*& previous = last[{r.device, r.cycle, r.polarity}];
    if (previous) {
      const auto ramp = fmt::format("device {}, cycle {}, {}", r.device, r.cycle, polarity_name(r.polarity));
      if (r.pulse < previous->pulse)
        throw error_at(r.row, "pulse",
                       fmt::format("pulse numbers of a ramp ({}) must increase; {} follows {} (row {})", ramp, r.pulse,
                                   previous->pulse, previous->row));
      if (r.pulse == previous->pulse && !has_read_time)
        throw error_at(r.row, "pulse",
                       fmt::format("pulse {} of {} appears twice (rows {} and {}); repeated reads of one state need a "
                                   "read_time column",
                                   r.pulse, ramp, previous->row, r.row));
      if (r.pulse == previous->pulse && !(r.read_time > previous->read_time))
        throw error_at(r.row, "read_time",
                       fmt::format("repeated reads of pulse {} of {} must have increasing read times; {:g} s follows "
                                   "{:g} s (row {})",
                                   r.pulse, ramp, r.read_time, previous->read_time, previous->row));
    }
    previous = &r;
  }
}

}  // namespace nvsyn
