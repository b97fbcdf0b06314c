#pragma once
// Writes a weight-mapping file: HDF5, layout "nvsyn-weight-mapping" version 1
// (src/record/LAYOUT.md, "Weight-mapping files"): the target weights, the weights
// programmed into devices, the weights read at later times and their error
// statistics, from `nvsyn map-weights`. SI units with a `units` attribute on
// every dataset holding a quantity.
#include <cstdint>
#include <string>

#include "devices/weight_mapping.hpp"

namespace nvsyn {

struct MappingFileHeader {
  std::string nvsyn_version;
  std::uint64_t seed = 0;
  std::string preset, preset_file, preset_text, device_model;
  std::string synapse_layout;  // single | differential | multi
  std::uint32_t devices_per_synapse = 1;
  double gain = 0.0;           // V
  double weight_max = 0.0;     // A, weight of a fully programmed synapse
  std::string weights_file, weights_unit;
  std::size_t rows = 0, columns = 0;
};

// Creates (truncates) `path`; UserError if it cannot, InternalError if HDF5 fails.
void write_mapping_file(const std::string& path, const MappingFileHeader& header, const WeightMappingResult& result);

}  // namespace nvsyn
