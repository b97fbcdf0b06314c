#pragma once
// Output files of the subcommands (run, device, map-weights, fit-device), under one
// set of rules:
//  * an output never destroys an input: a path that is, or links to, a file the
//    command reads is refused, even with --force;
//  * an existing file is replaced only with --force;
//  * everything is checked before any work starts (check_output_file);
//  * the file is written under a temporary name beside the target and moved into
//    place only when complete, so the output path never holds a half-written file
//    (DESIGN.md, "Errors").
#include <CLI/CLI.hpp>
#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace nvsyn::cli {

// -o PATH and --force as given on the command line.
struct OutputOption {
  std::optional<std::string> path;  // nullopt when -o was not given; "" when given empty
  bool force = false;               // --force: an existing file may be replaced
};

// Adds "-o,--output" (described by `description`) and "--force" to `command`.
// Returns the -o option, e.g. to mark it required.
CLI::Option* add_output_options(CLI::App& command, OutputOption& output, const std::string& description);

// An output path that passed check_output_file: the only thing write_then_rename takes.
class CheckedOutput {
 public:
  const std::string& path() const { return path_; }
  bool may_replace() const { return may_replace_; }

 private:
  friend CheckedOutput check_output_file(const std::string& path, bool force, const std::vector<std::string>& inputs);
  CheckedOutput(std::string path, bool may_replace) : path_(std::move(path)), may_replace_(may_replace) {}
  std::string path_;
  bool may_replace_;
};

// Throws UserError (key "-o", exit status 2) unless `path` can take the command's
// output without harm. Refused: an empty path; a folder; a path in a folder that is
// missing or not writable; the same file as any of `inputs` (compared by device and
// inode, so symbolic and hard links are caught, and by the path with symbolic links
// resolved), whatever `force` says; an existing file or link when `force` is false.
// `inputs`: every file the command reads (missing ones are skipped).
CheckedOutput check_output_file(const std::string& path, bool force, const std::vector<std::string>& inputs);

// Calls write(temporary_path), then moves the temporary file to the output path,
// replacing a file there only when output.may_replace(). A file that appeared at the
// path while nvsyn worked is kept otherwise: the new output stays under its temporary
// name and a UserError says where. If write throws, the temporary file is removed and
// the exception passes on.
void write_then_rename(const CheckedOutput& output, const std::function<void(const std::string&)>& write);

}  // namespace nvsyn::cli
