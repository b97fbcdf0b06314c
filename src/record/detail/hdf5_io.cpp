#include "record/detail/hdf5_io.hpp"

#include <chrono>
#include <ctime>

namespace nvsyn::detail {

void Hdf5Context::fail(std::string_view action, std::string_view object) const {
  throw InternalError(fmt::format("{} '{}': cannot {} '{}': {}", kind_, path_, action, object, hdf5_error_text()));
}

std::string_view si_symbol(Dimension d) {
  switch (d) {
    case Dimension::dimensionless: return "1";
    case Dimension::time: return "s";
    case Dimension::voltage: return "V";
    case Dimension::current: return "A";
    case Dimension::conductance: return "S";
    case Dimension::capacitance: return "F";
    case Dimension::resistance: return "Ohm";
    case Dimension::frequency: return "Hz";
    case Dimension::energy: return "J";
    case Dimension::charge: return "C";
  }
  return "1";
}

std::string utc_now_iso8601() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm utc{};
  gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

// HDF5's message for a failed create embeds the operating system's reason among
// its own flags ("... error message = 'No such file or directory', flags = ...");
// the user needs only the reason.
std::string creation_failure_reason() {
  const std::string text = hdf5_error_text();
  constexpr std::string_view marker = "error message = '";
  const std::size_t start = text.find(marker);
  if (start == std::string::npos) return text;
  const std::size_t from = start + marker.size();
  const std::size_t end = text.find('\'', from);
  return end == std::string::npos ? text : text.substr(from, end - from);
}

bool is_valid_link_name(std::string_view name) {
  return !name.empty() && name != "." && name.find('/') == std::string_view::npos;
}

H5Handle create_file_v18(const std::string& path, std::string_view kind) {
  silence_hdf5_error_printing();
  H5Handle fapl = plist_handle(H5Pcreate(H5P_FILE_ACCESS));
  if (!fapl.valid() || H5Pset_libver_bounds(fapl.get(), H5F_LIBVER_V18, H5F_LIBVER_V18) < 0)
    throw UserError(fmt::format("cannot create {} '{}': {}", kind, path, creation_failure_reason()));
  H5Handle file = file_handle(H5Fcreate(path.c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, fapl.get()));
  if (!file.valid()) throw UserError(fmt::format("cannot create {} '{}': {}", kind, path, creation_failure_reason()));
  return file;
}

void write_string_attr(const Hdf5Context& h5, hid_t object, const char* name, std::string_view value,
                       std::string_view object_path) {
  const std::string what = fmt::format("{}@{}", object_path, name);
  H5Handle type = h5.checked(utf8_string_type(), "create string type for", what);
  H5Handle space = h5.checked(space_handle(H5Screate(H5S_SCALAR)), "create dataspace for", what);
  // Overwrite in place when the attribute exists (a run file's status is written twice).
  H5Handle attr = H5Aexists(object, name) > 0
                      ? attribute_handle(H5Aopen(object, name, H5P_DEFAULT))
                      : attribute_handle(H5Acreate2(object, name, type.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT));
  attr = h5.checked(std::move(attr), "create attribute", what);
  const std::string text(value);  // HDF5 needs a NUL-terminated string
  const char* pointer = text.c_str();
  h5.check(H5Awrite(attr.get(), type.get(), &pointer), "write attribute", what);
}

H5Handle create_group(const Hdf5Context& h5, hid_t parent, const std::string& name, std::string_view path) {
  H5Handle gcpl = h5.checked(plist_handle(H5Pcreate(H5P_GROUP_CREATE)), "create property list for", path);
  h5.check(H5Pset_link_creation_order(gcpl.get(), H5P_CRT_ORDER_TRACKED | H5P_CRT_ORDER_INDEXED),
           "set creation order for", path);
  return h5.checked(group_handle(H5Gcreate2(parent, name.c_str(), H5P_DEFAULT, gcpl.get(), H5P_DEFAULT)),
                    "create group", path);
}

H5Handle open_or_create_group(const Hdf5Context& h5, hid_t parent, const std::string& name, std::string_view path) {
  if (H5Lexists(parent, name.c_str(), H5P_DEFAULT) > 0)
    return h5.checked(group_handle(H5Gopen2(parent, name.c_str(), H5P_DEFAULT)), "open group", path);
  return create_group(h5, parent, name, path);
}

H5Handle create_chunked_dataset(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, int rank,
                                const hsize_t* dims, const hsize_t* max_dims, const hsize_t* chunk,
                                std::string_view path) {
  H5Handle space = h5.checked(space_handle(H5Screate_simple(rank, dims, max_dims)), "create dataspace for", path);
  H5Handle dcpl = h5.checked(plist_handle(H5Pcreate(H5P_DATASET_CREATE)), "create property list for", path);
  h5.check(H5Pset_chunk(dcpl.get(), rank, chunk), "set chunking for", path);
  h5.check(H5Pset_shuffle(dcpl.get()), "set shuffle filter for", path);
  h5.check(H5Pset_deflate(dcpl.get(), kDeflateLevel), "set deflate filter for", path);
  return h5.checked(
      dataset_handle(H5Dcreate2(parent, name, file_type, space.get(), H5P_DEFAULT, dcpl.get(), H5P_DEFAULT)),
      "create dataset", path);
}

void write_fixed_nd_raw(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, hid_t memory_type,
                        const void* data, std::span<const hsize_t> dims, std::string_view units,
                        std::string_view path) {
  const int rank = static_cast<int>(dims.size());
  hsize_t total = 1;
  for (hsize_t d : dims) total *= d;
  H5Handle dataset;
  if (total == 0) {
    H5Handle space =
        h5.checked(space_handle(H5Screate_simple(rank, dims.data(), nullptr)), "create dataspace for", path);
    dataset = h5.checked(
        dataset_handle(H5Dcreate2(parent, name, file_type, space.get(), H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT)),
        "create dataset", path);
  } else {
    // Whole trailing rows per chunk while they fit in kChunkElements; the last
    // dimension alone is cut when a single row is larger than that.
    std::vector<hsize_t> chunk(dims.begin(), dims.end());
    hsize_t elements = total;
    for (std::size_t i = 0; i < chunk.size() && elements > kChunkElements; ++i) {
      const hsize_t rest = elements / chunk[i];  // elements per index of dimension i
      chunk[i] = std::max<hsize_t>(1, kChunkElements / std::max<hsize_t>(rest, 1));
      chunk[i] = std::min(chunk[i], dims[i]);
      elements = chunk[i] * rest;
    }
    dataset = create_chunked_dataset(h5, parent, name, file_type, rank, dims.data(), dims.data(), chunk.data(), path);
    h5.check(H5Dwrite(dataset.get(), memory_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, data), "write dataset", path);
  }
  if (!units.empty()) write_string_attr(h5, dataset.get(), "units", units, path);
}

void write_scalar_dataset(const Hdf5Context& h5, hid_t parent, const char* name, double value,
                          std::string_view units, std::string_view path) {
  H5Handle space = h5.checked(space_handle(H5Screate(H5S_SCALAR)), "create dataspace for", path);
  H5Handle dataset = h5.checked(dataset_handle(H5Dcreate2(parent, name, H5T_IEEE_F64LE, space.get(), H5P_DEFAULT,
                                                          H5P_DEFAULT, H5P_DEFAULT)),
                                "create dataset", path);
  h5.check(H5Dwrite(dataset.get(), H5T_NATIVE_DOUBLE, H5S_ALL, H5S_ALL, H5P_DEFAULT, &value), "write dataset", path);
  if (!units.empty()) write_string_attr(h5, dataset.get(), "units", units, path);
}

void write_device_file_header(const Hdf5Context& h5, hid_t root, const DeviceFileHeader& h) {
  write_string_attr(h5, root, "layout", h.layout, "/");
  write_scalar_attr(h5, root, "layout_version", H5T_STD_I32LE, H5T_NATIVE_INT, h.layout_version, "/");
  write_string_attr(h5, root, "nvsyn_version", h.nvsyn_version, "/");
  write_string_attr(h5, root, "created", utc_now_iso8601(), "/");
  write_scalar_attr(h5, root, "seed", H5T_STD_U64LE, H5T_NATIVE_UINT64, h.seed, "/");
  write_string_attr(h5, root, "preset", h.preset, "/");
  write_string_attr(h5, root, "preset_file", h.preset_file, "/");
  write_string_attr(h5, root, "preset_text", h.preset_text, "/");
  write_string_attr(h5, root, "device_model", h.device_model, "/");
}

}  // namespace nvsyn::detail
