#pragma once
// Internal to src/record: the small set of HDF5 writing steps every nvsyn file
// writer shares (run files, device-bench files, weight-mapping files): checked
// calls that name the file and object on failure, attributes, groups in creation
// order, and compressed datasets written whole. Not part of nvsyn's public interface.
#include <fmt/format.h>

#include <algorithm>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "core/error.hpp"
#include "core/units.hpp"
#include "record/detail/hdf5_handle.hpp"

namespace nvsyn::detail {

// 16384 elements is 128 KiB of float64: large enough for deflate to work well,
// small enough to sit in HDF5's default 1 MiB chunk cache many times over.
inline constexpr hsize_t kChunkElements = 16384;
inline constexpr unsigned kDeflateLevel = 4;

// Failures of HDF5 calls on a file nvsyn is writing are internal errors: the path
// was checked when the file was created. `kind` names the file in messages ("run file").
class Hdf5Context {
 public:
  Hdf5Context(std::string path, std::string kind = "run file") : path_(std::move(path)), kind_(std::move(kind)) {}

  [[noreturn]] void fail(std::string_view action, std::string_view object) const;
  H5Handle checked(H5Handle handle, std::string_view action, std::string_view object) const {
    if (!handle.valid()) fail(action, object);
    return handle;
  }
  void check(herr_t status, std::string_view action, std::string_view object) const {
    if (status < 0) fail(action, object);
  }
  const std::string& path() const { return path_; }
  const std::string& kind() const { return kind_; }

 private:
  std::string path_;
  std::string kind_;
};

// SI symbol of a dimension, as stored in `units` attributes ("1" when dimensionless).
std::string_view si_symbol(Dimension d);
std::string utc_now_iso8601();
// The operating system's reason for a failed create, without HDF5's flags around it.
std::string creation_failure_reason();
// A name becomes one HDF5 link: '/' would silently create nested groups.
bool is_valid_link_name(std::string_view name);

// Creates (truncates) a file bounded to the HDF5 1.8 format, so older readers
// (MATLAB) open it while dense attribute storage allows texts above 64 KiB.
// Throws UserError naming the path when the file cannot be created.
H5Handle create_file_v18(const std::string& path, std::string_view kind);

void write_string_attr(const Hdf5Context& h5, hid_t object, const char* name, std::string_view value,
                       std::string_view object_path);

template <typename T>
void write_scalar_attr(const Hdf5Context& h5, hid_t object, const char* name, hid_t file_type, hid_t memory_type,
                       T value, std::string_view object_path) {
  const std::string what = fmt::format("{}@{}", object_path, name);
  H5Handle attr;
  if (H5Aexists(object, name) > 0) {
    attr = attribute_handle(H5Aopen(object, name, H5P_DEFAULT));
  } else {
    H5Handle space = h5.checked(space_handle(H5Screate(H5S_SCALAR)), "create dataspace for", what);
    attr = attribute_handle(H5Acreate2(object, name, file_type, space.get(), H5P_DEFAULT, H5P_DEFAULT));
  }
  attr = h5.checked(std::move(attr), "create attribute", what);
  h5.check(H5Awrite(attr.get(), memory_type, &value), "write attribute", what);
}

// Groups that list their children in creation order, so a reader can present
// members in the order they were written rather than alphabetically.
H5Handle create_group(const Hdf5Context& h5, hid_t parent, const std::string& name, std::string_view path);
H5Handle open_or_create_group(const Hdf5Context& h5, hid_t parent, const std::string& name, std::string_view path);

// Chunked, shuffled and deflated. `dims` are the initial sizes, `max_dims` may hold
// H5S_UNLIMITED. Chunk sizes must be positive even where a dimension is zero.
H5Handle create_chunked_dataset(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, int rank,
                                const hsize_t* dims, const hsize_t* max_dims, const hsize_t* chunk,
                                std::string_view path);

// A dataset of any rank whose whole content is known now (row-major `data`).
// HDF5 cannot chunk an empty fixed-size dataset, so an empty one is stored
// contiguous (and uncompressed). Chunks hold whole trailing rows where they fit.
void write_fixed_nd_raw(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, hid_t memory_type,
                        const void* data, std::span<const hsize_t> dims, std::string_view units,
                        std::string_view path);

template <typename T>
void write_fixed_nd(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, hid_t memory_type,
                    std::span<const T> data, std::span<const hsize_t> dims, std::string_view units,
                    std::string_view path) {
  hsize_t total = 1;
  for (hsize_t d : dims) total *= d;
  if (total != data.size())
    throw InternalError(fmt::format("{} '{}': dataset '{}' has {} values for a shape of {}", h5.kind(), h5.path(),
                                    path, data.size(), total));
  write_fixed_nd_raw(h5, parent, name, file_type, memory_type, data.data(), dims, units, path);
}

template <typename T>
void write_fixed_1d(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, hid_t memory_type,
                    std::span<const T> data, std::string_view units, std::string_view path) {
  const hsize_t n = data.size();
  write_fixed_nd<T>(h5, parent, name, file_type, memory_type, data, std::span<const hsize_t>(&n, 1), units, path);
}

// A scalar float64 dataset with a `units` attribute: lets a single statistic carry
// its unit the same way arrays do.
void write_scalar_dataset(const Hdf5Context& h5, hid_t parent, const char* name, double value,
                          std::string_view units, std::string_view path);

// Root attributes shared by the device files (bench and weight-mapping files):
// layout name and version, program version, time of creation, seed and the preset.
struct DeviceFileHeader {
  std::string_view layout;
  int layout_version = 1;
  std::string_view nvsyn_version;
  std::uint64_t seed = 0;
  std::string_view preset, preset_file, preset_text, device_model;
};
void write_device_file_header(const Hdf5Context& h5, hid_t root, const DeviceFileHeader& header);

}  // namespace nvsyn::detail
