#pragma once
// Measured pulse responses: what `nvsyn fit-device` calibrates a device model against.
//
// One record per conductance measurement: which device, which programming cycle,
// how many pulses of one polarity the device had received in that cycle when it was
// read (0: the state at the start of the ramp, before any pulse), and the conductance.
// The records of one (device, cycle, polarity) form a "ramp", kept in file order.
// With read times, several records of a ramp may share a pulse number: a drift series,
// the same programmed state read at increasing times after its last pulse.
//
// Readers: pulse_data_csv.hpp (CSV, here) and record/pulse_data_hdf5.hpp (HDF5).
// Conductances in S, read times in s.
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "devices/polarity.hpp"

namespace nvsyn {

struct PulseRecord {
  std::uint32_t device = 0;
  std::uint32_t cycle = 0;
  std::uint32_t pulse = 0;  // pulses of this polarity applied in this cycle before the read
  Polarity polarity = Polarity::potentiate;
  double conductance = 0.0;                                     // S
  double read_time = std::numeric_limits<double>::quiet_NaN();  // s since the last pulse; NaN if not given
  int row = 0;  // where the record came from: file line (CSV) or dataset index (HDF5)
};

// How PulseRecord::row counts, so that messages point where the user looks.
enum class RowNumbering : std::uint8_t {
  file_line,      // 1-based line of a text file: "data.csv:12: error: ..."
  dataset_index,  // 0-based index into the datasets of an HDF5 group: "... row 12: ..."
};

struct PulseData {
  std::string file;
  RowNumbering numbering = RowNumbering::file_line;
  std::string column_prefix;  // prepended to column names in messages ("/pulses/" for HDF5)
  bool has_read_time = false;
  std::vector<PulseRecord> records;

  // The rules every fit relies on, one line each; throws UserError at the first
  // offending row, naming the column:
  //  * conductances finite and not negative; read times finite and not negative
  //    when present, NaN when absent;
  //  * within a ramp, pulse numbers increase from row to row; with read times a
  //    pulse number may repeat only with a later read time (a drift series).
  void validate() const;

  // A UserError located at `row`, naming `column` ("conductance", "pulse", ...).
  UserError error_at(int row, const std::string& column, const std::string& message) const;
  // A UserError for the data as a whole (too few points), at the last record.
  UserError error_at_end(const std::string& column, const std::string& message) const;
};

}  // namespace nvsyn
