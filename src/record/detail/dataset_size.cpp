#include "record/detail/dataset_size.hpp"

#include <fmt/format.h>

#include "core/machine_memory.hpp"
#include "record/detail/hdf5_handle.hpp"

namespace nvsyn::detail {
namespace {

// Deflate cannot expand storage by more than 1032:1 (zlib's technical notes, from
// memory); shuffle and the Fletcher-32 checksum do not change the size.
constexpr double kDeflateMaxExpansion = 1032.0;

// Largest expansion from storage to data the dataset's filters allow, or nullopt
// when a filter is unknown to nvsyn (no bound is claimed then).
std::optional<double> max_expansion(hid_t create_plist) {
  const int filters = H5Pget_nfilters(create_plist);
  if (filters < 0) return std::nullopt;
  double expansion = 1.0;
  for (int i = 0; i < filters; ++i) {
    unsigned flags = 0;
    std::size_t values = 0;
    unsigned config = 0;
    const H5Z_filter_t id = H5Pget_filter2(create_plist, static_cast<unsigned>(i), &flags, &values, nullptr, 0,
                                           nullptr, &config);
    if (id == H5Z_FILTER_DEFLATE)
      expansion = kDeflateMaxExpansion;
    else if (id != H5Z_FILTER_SHUFFLE && id != H5Z_FILTER_FLETCHER32)
      return std::nullopt;
  }
  return expansion;
}

std::optional<std::string> storage_problem(hid_t dataset, std::uint64_t elements) {
  H5Handle plist = plist_handle(H5Dget_create_plist(dataset));
  H5Handle type = type_handle(H5Dget_type(dataset));
  if (!plist.valid() || !type.valid()) return "cannot be inspected: " + hdf5_error_text();
  const H5D_layout_t layout = H5Pget_layout(plist.get());
  if (layout == H5D_VIRTUAL)
    return std::string("is a virtual dataset mapped from other files, which nvsyn does not read");
  if (H5Pget_external_count(plist.get()) > 0)
    return std::string("keeps its data in external files, which nvsyn does not read");

  const double data_bytes = static_cast<double>(elements) * static_cast<double>(H5Tget_size(type.get()));
  const double stored_bytes = static_cast<double>(H5Dget_storage_size(dataset));
  H5Eclear2(H5E_DEFAULT);
  H5Handle file = file_handle(H5Iget_file_id(dataset));
  hsize_t file_bytes = 0;
  if (file.valid() && H5Fget_filesize(file.get(), &file_bytes) >= 0 && stored_bytes > static_cast<double>(file_bytes))
    return fmt::format("states {} of stored data, but the whole file has {}; the file is truncated or damaged",
                       format_bytes(stored_bytes), format_bytes(static_cast<double>(file_bytes)));
  if (data_bytes <= static_cast<double>(kUnstoredAllowanceBytes) || layout == H5D_COMPACT) return std::nullopt;
  const std::optional<double> expansion = layout == H5D_CHUNKED ? max_expansion(plist.get()) : 1.0;
  if (!expansion || data_bytes <= *expansion * stored_bytes) return std::nullopt;
  return fmt::format(
      "claims {} elements ({}) but the file stores only {} for it, {}; the file is damaged or was not written "
      "completely",
      elements, format_bytes(data_bytes), format_bytes(stored_bytes),
      *expansion > 1.0 ? fmt::format("more than compression can account for (at most {:g}:1)", *expansion)
                       : std::string("so nearly all of it would be fill values"));
}

}  // namespace

DatasetSize check_dataset_size(hid_t dataset, std::span<const hsize_t> dims, double memory_bytes_per_element) {
  DatasetSize size;
  size.elements = 1;
  for (hsize_t d : dims) {
    if (d != 0 && size.elements > UINT64_MAX / d) {
      size.problem = "claims a shape whose number of elements overflows 64 bits; the file is damaged";
      return size;
    }
    size.elements *= d;
  }
  if ((size.problem = storage_problem(dataset, size.elements))) return size;
  const double needed = static_cast<double>(size.elements) * memory_bytes_per_element;
  const auto budget = static_cast<double>(memory_budget_bytes());
  if (needed > budget)
    size.problem = fmt::format(
        "holds {} elements; reading it needs {} of memory, more than the {} (half of this machine's memory) a "
        "reader may use",
        size.elements, format_bytes(needed), format_bytes(budget));
  return size;
}

std::optional<std::string> single_value_attribute_problem(hid_t attribute) {
  H5Handle space = space_handle(H5Aget_space(attribute));
  H5Handle type = type_handle(H5Aget_type(attribute));
  if (!space.valid() || !type.valid()) return "cannot be inspected: " + hdf5_error_text();
  const hssize_t points = H5Sget_simple_extent_npoints(space.get());
  if (points != 1) return fmt::format("holds {} values, expected one", points);
  const std::size_t type_bytes = H5Tget_size(type.get());
  // Attributes are stored unfiltered, so a fixed-size value larger than its storage
  // is a damaged or crafted header; small values are allowed to report no storage.
  if (type_bytes > (std::size_t{1} << 20) && type_bytes > H5Aget_storage_size(attribute))
    return fmt::format("claims a value of {} but stores {}; the file is damaged",
                       format_bytes(static_cast<double>(type_bytes)),
                       format_bytes(static_cast<double>(H5Aget_storage_size(attribute))));
  return std::nullopt;
}

}  // namespace nvsyn::detail
