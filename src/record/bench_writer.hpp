#pragma once
// Writes a device-bench file: HDF5, layout "nvsyn-device-bench" version 1
// (src/record/LAYOUT.md, "Device-bench files"): the protocol, the pulse-response
// and drift curves and the summary statistics of `nvsyn device`.
// Every dataset holding a quantity has a `units` attribute (SI).
#include <string>

#include "devices/characterisation.hpp"
#include "devices/characterisation_statistics.hpp"

namespace nvsyn {

struct BenchFileHeader {
  std::string nvsyn_version;
  std::string preset;       // name as given
  std::string preset_file;  // resolved path
  std::string preset_text;  // full text of the preset file
  std::string device_model; // device kind
  CharacterisationProtocol protocol;  // as run (pulses resolved)
};

// Creates (truncates) `path` and writes everything; throws UserError if the file
// cannot be created, InternalError if HDF5 fails later. The caller writes to a
// temporary name and renames, so a failure leaves nothing at the final path.
void write_bench_file(const std::string& path, const BenchFileHeader& header, const CharacterisationCurves& curves,
                      const CharacterisationSummary& summary);

}  // namespace nvsyn
