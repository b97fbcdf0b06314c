#pragma once
// Input files are read only when they are regular files of a sane size.
//
// A character device (an endless stream such as /dev/zero), a FIFO (whose open or
// read waits for a writer that may never come), a socket or a folder given where a
// file is expected would make a reader wait or read forever, so they are refused
// before any byte is read. Text inputs are read whole into memory and are limited
// to kMaxTextInputBytes (README, "Input files"). Every reader of a user's file goes
// through these functions, so the rule holds everywhere.
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace nvsyn {

// Largest text input (model file, device preset, connection list, weight matrix,
// pulse-data CSV). Generous: the largest shipped input is a few kilobytes, and a
// connection list of 10 million rows fits in about 200 MiB.
inline constexpr std::uint64_t kMaxTextInputBytes = std::uint64_t{256} << 20;

// Why `path` cannot be read as a `what` ("model file", "run file"), or nullopt when
// it names, directly or through symbolic links, a regular file. The reason reads
// after the path, e.g. "is a FIFO (named pipe), not a regular file; ...".
// On success stores the file's size in bytes in `size_bytes` when given.
std::optional<std::string> input_file_problem(const std::string& path, std::string_view what,
                                              std::uint64_t* size_bytes = nullptr);

// UserError naming the file (and `what`) unless `path` is a regular file;
// returns its size in bytes. For readers that open the file through a library (HDF5).
std::uint64_t check_input_file(const std::string& path, std::string_view what);

// The whole content of a regular file of at most `max_bytes`, else a UserError
// naming the file, what it is and, for a large file, the limit. The file is opened
// without waiting and checked on the open descriptor, so a FIFO put in its place
// after a check cannot block the read either; a file that grows while being read
// is still cut off at the limit.
std::string read_input_text(const std::string& path, std::string_view what,
                            std::uint64_t max_bytes = kMaxTextInputBytes);

}  // namespace nvsyn
