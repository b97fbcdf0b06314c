#pragma once
// Reads measured pulse responses from an HDF5 file (the same content as the CSV form,
// devices/pulse_data_csv.hpp), one 1-D dataset per column in the group /pulses:
//
//   /pulses/device       integer [n]   >= 0
//   /pulses/cycle        integer [n]   >= 0
//   /pulses/pulse        integer [n]   >= 0, pulses of this polarity before the read
//   /pulses/polarity     integer [n]   +1 potentiate, -1 depress
//                        or strings    "potentiate" / "depress" (or "+" / "-")
//   /pulses/conductance  float [n]     attribute units: a conductance unit ("S", "uS", ...)
//   /pulses/read_time    float [n]     optional; attribute units: a time unit ("s", "ms", ...)
//
// Errors are UserErrors naming the file, the dataset as key and the 0-based index
// into the datasets as the row: "data.h5: error: '/pulses/conductance': row 12: ...".
// The result is validated (PulseData::validate).
#include <string>

#include "devices/pulse_data.hpp"

namespace nvsyn {

PulseData read_pulse_hdf5(const std::string& path);

// True when the file starts with the HDF5 signature (so a data file may be given
// under any name).
bool looks_like_hdf5(const std::string& path);

}  // namespace nvsyn
