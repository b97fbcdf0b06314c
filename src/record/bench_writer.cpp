#include "record/bench_writer.hpp"

#include <numeric>

#include "record/detail/hdf5_io.hpp"

namespace nvsyn {
namespace {

using namespace detail;

constexpr int kLayoutVersion = 1;

void write_doubles(const Hdf5Context& h5, hid_t parent, const char* name, const std::vector<double>& values,
                   std::initializer_list<hsize_t> shape, std::string_view units, const std::string& path) {
  const std::vector<hsize_t> dims(shape);
  write_fixed_nd<double>(h5, parent, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, values, dims, units, path);
}

void write_bytes(const Hdf5Context& h5, hid_t parent, const char* name, const std::vector<std::uint8_t>& values,
                 std::initializer_list<hsize_t> shape, const std::string& path) {
  const std::vector<hsize_t> dims(shape);
  write_fixed_nd<std::uint8_t>(h5, parent, name, H5T_STD_U8LE, H5T_NATIVE_UINT8, values, dims, "", path);
}

void write_u32_attr(const Hdf5Context& h5, hid_t object, const char* name, std::uint32_t value, std::string_view path) {
  write_scalar_attr(h5, object, name, H5T_STD_U32LE, H5T_NATIVE_UINT32, value, path);
}
void write_f64_attr(const Hdf5Context& h5, hid_t object, const char* name, double value, std::string_view path) {
  write_scalar_attr(h5, object, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, value, path);
}

}  // namespace

void write_bench_file(const std::string& path, const BenchFileHeader& header, const CharacterisationCurves& c,
                      const CharacterisationSummary& s) {
  H5Handle file = create_file_v18(path, "device-bench file");
  const Hdf5Context h5(path, "device-bench file");
  const hid_t root = file.get();
  const CharacterisationProtocol& p = header.protocol;

  detail::write_device_file_header(h5, root, {"nvsyn-device-bench", kLayoutVersion, header.nvsyn_version, p.seed,
                                              header.preset, header.preset_file, header.preset_text,
                                              header.device_model});

  {
    H5Handle g = create_group(h5, root, "protocol", "/protocol");
    write_u32_attr(h5, g.get(), "devices", c.devices, "/protocol");
    write_u32_attr(h5, g.get(), "cycles", c.cycles, "/protocol");
    write_u32_attr(h5, g.get(), "pulses", c.pulses, "/protocol");
    write_u32_attr(h5, g.get(), "gradual_depression", c.gradual_depression ? 1 : 0, "/protocol");
    write_f64_attr(h5, g.get(), "pulse_period", p.pulse_period, "/protocol");
    write_f64_attr(h5, g.get(), "ramp_read_delay", p.ramp_read_delay, "/protocol");
    write_doubles(h5, g.get(), "read_delays", c.read_delays, {c.read_delays.size()}, "s", "/protocol/read_delays");
    write_doubles(h5, g.get(), "drift_levels", p.drift_levels, {p.drift_levels.size()}, "1", "/protocol/drift_levels");
  }
  {
    H5Handle g = create_group(h5, root, "curves", "/curves");
    const hsize_t d = c.devices, cy = c.cycles, n = c.reads_per_ramp();
    std::vector<std::uint32_t> pulse(n);
    std::iota(pulse.begin(), pulse.end(), 0u);
    write_fixed_1d<std::uint32_t>(h5, g.get(), "pulse", H5T_STD_U32LE, H5T_NATIVE_UINT32, pulse, "", "/curves/pulse");
    write_doubles(h5, g.get(), "up", c.up, {d, cy, n}, "S", "/curves/up");
    if (c.gradual_depression) write_doubles(h5, g.get(), "down", c.down, {d, cy, n}, "S", "/curves/down");
    write_bytes(h5, g.get(), "health", c.health, {d}, "/curves/health");
    std::vector<std::uint8_t> used(c.devices);
    for (std::size_t i = 0; i < used.size(); ++i) used[i] = c.health[i] == 0 ? 1 : 0;
    write_bytes(h5, g.get(), "used", used, {d}, "/curves/used");
    write_fixed_1d<std::uint32_t>(h5, g.get(), "pulse_count", H5T_STD_U32LE, H5T_NATIVE_UINT32, c.pulse_count, "",
                                  "/curves/pulse_count");
    write_doubles(h5, g.get(), "energy", c.energy, {d}, "J", "/curves/energy");
  }
  {
    H5Handle g = create_group(h5, root, "drift", "/drift");
    const hsize_t levels = c.drift_targets.size(), d = c.devices, k = c.read_delays.size();
    write_doubles(h5, g.get(), "read_delay", c.read_delays, {k}, "s", "/drift/read_delay");
    write_doubles(h5, g.get(), "target", c.drift_targets, {levels}, "S", "/drift/target");
    write_doubles(h5, g.get(), "programmed", c.drift_programmed, {levels, d}, "S", "/drift/programmed");
    write_bytes(h5, g.get(), "verify_status", c.drift_verify_status, {levels, d}, "/drift/verify_status");
    write_doubles(h5, g.get(), "conductance", c.drift, {levels, d, k}, "S", "/drift/conductance");
    write_doubles(h5, g.get(), "nu", s.drift_nu, {levels, d}, "1", "/drift/nu");
  }
  {
    H5Handle g = create_group(h5, root, "summary", "/summary");
    write_u32_attr(h5, g.get(), "devices_used", s.devices_used, "/summary");
    write_u32_attr(h5, g.get(), "devices_excluded", s.devices_excluded, "/summary");
    write_u32_attr(h5, g.get(), "drift_fits", s.drift_fits, "/summary");
    std::string notes;
    for (const auto& note : s.notes) notes += (notes.empty() ? "" : "\n") + note;
    write_string_attr(h5, g.get(), "notes", notes, "/summary");
    for (const SummaryEntry& e : summary_entries(s)) {
      const std::string name(e.name), where = "/summary/" + name;
      write_scalar_dataset(h5, g.get(), name.c_str(), e.value, si_symbol(e.dimension), where);
      H5Handle dataset = h5.checked(dataset_handle(H5Dopen2(g.get(), name.c_str(), H5P_DEFAULT)), "open", where);
      write_string_attr(h5, dataset.get(), "description", e.description, where);
    }
  }
  h5.check(H5Fflush(root, H5F_SCOPE_GLOBAL), "flush", path);
  if (!file.close()) throw InternalError(fmt::format("device-bench file '{}': cannot close file: {}", path, hdf5_error_text()));
}

}  // namespace nvsyn
