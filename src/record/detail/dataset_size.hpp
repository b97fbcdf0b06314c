#pragma once
// Internal to src/record: the sizes a file being read states for its datasets,
// checked before anything is allocated for them. Not part of nvsyn's public interface.
//
// A dataset's shape is a claim. HDF5 lets a chunked dataset declare any shape while
// storing almost nothing (the rest reads as its fill value), and a damaged file can
// state anything, so a reader that allocates what the shape says can be made to
// exhaust memory or to read gigabytes of nothing. Three checks, in this order:
//  * where the data lives: datasets stored in external files or mapped from other
//    files (virtual datasets) are refused; those files could be devices or pipes.
//  * storage: the bytes the file holds for the dataset must account for its shape.
//    Compression legitimately makes a dataset larger than its storage, but deflate
//    (the filter nvsyn writes, with shuffle) expands at most 1032-fold, so a deflated
//    dataset claiming more is refused, as is unfiltered data missing most of its
//    bytes. Up to kUnstoredAllowanceBytes may be unstored (fill values, e.g. the
//    last chunks of a crashed run). Other filters are not checked this way.
//  * memory: a reader holding `memory_bytes_per_element` for every element must stay
//    within memory_budget_bytes() (core/machine_memory.hpp). Readers that go through
//    a dataset in blocks pass 0.
#include <hdf5.h>

#include <cstdint>
#include <optional>
#include <span>
#include <string>

namespace nvsyn::detail {

// Below this many bytes a dataset's claim is read without checking its storage:
// harmless in memory and time even if all of it is fill values.
inline constexpr std::uint64_t kUnstoredAllowanceBytes = std::uint64_t{64} << 20;

struct DatasetSize {
  std::uint64_t elements = 0;          // product of the dimensions
  std::optional<std::string> problem;  // why the claim cannot be read, to follow the dataset's name
};

DatasetSize check_dataset_size(hid_t dataset, std::span<const hsize_t> dims, double memory_bytes_per_element);

// The attribute holds exactly one element whose stored type fits its storage, so
// reading it into one value (or one fixed-size string of H5Tget_size bytes) is safe.
// The reason otherwise, to follow the attribute's name.
std::optional<std::string> single_value_attribute_problem(hid_t attribute);

}  // namespace nvsyn::detail
