#include "record/mapping_writer.hpp"

#include "record/detail/hdf5_io.hpp"

namespace nvsyn {
namespace {

using namespace detail;

constexpr int kLayoutVersion = 1;

void write_doubles(const Hdf5Context& h5, hid_t parent, const char* name, std::span<const double> values,
                   std::initializer_list<hsize_t> shape, std::string_view units, const std::string& path) {
  const std::vector<hsize_t> dims(shape);
  write_fixed_nd<double>(h5, parent, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, values, dims, units, path);
}

// One group of per-time error statistics (rows follow /time).
void write_error_summaries(const Hdf5Context& h5, hid_t parent, const std::string& name,
                           const std::vector<WeightErrorSummary>& rows, const std::string& path) {
  H5Handle g = create_group(h5, parent, name, path);
  const hsize_t k = rows.size(), q = kErrorPercentiles.size();
  auto column = [&](const char* field, auto member, std::string_view units) {
    std::vector<double> values;
    for (const auto& r : rows) values.push_back(r.*member);
    write_doubles(h5, g.get(), field, values, {k}, units, path + "/" + field);
  };
  column("mean", &WeightErrorSummary::mean, "A");
  column("sd", &WeightErrorSummary::sd, "A");
  column("rms", &WeightErrorSummary::rms, "A");
  column("max_abs", &WeightErrorSummary::max_abs, "A");
  column("within_tolerance", &WeightErrorSummary::within_tolerance, "1");
  column("weight_ratio", &WeightErrorSummary::weight_ratio, "1");
  std::vector<double> percentiles;
  for (const auto& r : rows) percentiles.insert(percentiles.end(), r.percentiles.begin(), r.percentiles.end());
  write_doubles(h5, g.get(), "percentiles", percentiles, {k, q}, "A", path + "/percentiles");
}

}  // namespace

void write_mapping_file(const std::string& path, const MappingFileHeader& h, const WeightMappingResult& r) {
  H5Handle file = create_file_v18(path, "weight-mapping file");
  const Hdf5Context h5(path, "weight-mapping file");
  const hid_t root = file.get();
  detail::write_device_file_header(h5, root, {"nvsyn-weight-mapping", kLayoutVersion, h.nvsyn_version, h.seed, h.preset,
                                              h.preset_file, h.preset_text, h.device_model});
  write_string_attr(h5, root, "synapse_layout", h.synapse_layout, "/");
  write_scalar_attr(h5, root, "devices_per_synapse", H5T_STD_U32LE, H5T_NATIVE_UINT32, h.devices_per_synapse, "/");
  write_scalar_attr(h5, root, "gain", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, h.gain, "/");
  write_scalar_attr(h5, root, "weight_max", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, h.weight_max, "/");
  write_scalar_attr(h5, root, "tolerance", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.tolerance, "/");
  write_string_attr(h5, root, "weights_file", h.weights_file, "/");
  write_string_attr(h5, root, "weights_unit", h.weights_unit, "/");
  const std::uint64_t counts[4] = {r.write.written - r.write.failed, r.write.out_of_range, r.write.unresponsive,
                                   r.not_converged};
  write_scalar_attr(h5, root, "succeeded", H5T_STD_U64LE, H5T_NATIVE_UINT64, counts[0], "/");
  write_scalar_attr(h5, root, "out_of_range", H5T_STD_U64LE, H5T_NATIVE_UINT64, counts[1], "/");
  write_scalar_attr(h5, root, "unresponsive", H5T_STD_U64LE, H5T_NATIVE_UINT64, counts[2], "/");
  write_scalar_attr(h5, root, "not_converged", H5T_STD_U64LE, H5T_NATIVE_UINT64, counts[3], "/");

  const hsize_t rows = h.rows, cols = h.columns, k = r.times.size();
  write_doubles(h5, root, "target", r.target, {rows, cols}, "A", "/target");
  write_doubles(h5, root, "programmed", r.programmed, {rows, cols}, "A", "/programmed");
  write_fixed_nd<std::uint8_t>(h5, root, "status", H5T_STD_U8LE, H5T_NATIVE_UINT8, r.status,
                               std::vector<hsize_t>{rows, cols}, "", "/status");
  write_fixed_nd<std::uint32_t>(h5, root, "pulses", H5T_STD_U32LE, H5T_NATIVE_UINT32, r.pulses,
                                std::vector<hsize_t>{rows, cols}, "", "/pulses");
  write_doubles(h5, root, "time", r.times, {k}, "s", "/time");
  write_doubles(h5, root, "read", r.read, {k, rows, cols}, "A", "/read");
  write_doubles(h5, root, "drift_only", r.drift_only, {k, rows, cols}, "A", "/drift_only");
  {
    H5Handle g = create_group(h5, root, "errors", "/errors");
    std::vector<double> levels(kErrorPercentiles.begin(), kErrorPercentiles.end());
    write_doubles(h5, g.get(), "percentile_levels", levels, {levels.size()}, "1", "/errors/percentile_levels");
    write_error_summaries(h5, g.get(), "read", r.read_summary, "/errors/read");
    write_error_summaries(h5, g.get(), "drift_only", r.drift_summary, "/errors/drift_only");
  }
  h5.check(H5Fflush(root, H5F_SCOPE_GLOBAL), "flush", path);
  if (!file.close())
    throw InternalError(fmt::format("weight-mapping file '{}': cannot close file: {}", path, hdf5_error_text()));
}

}  // namespace nvsyn
