#pragma once
// Output files of the subcommands: checked before any work starts, written under
// a temporary name beside the target and moved into place only when complete, so
// the output path never holds a half-written file (DESIGN.md, "Errors").
#include <functional>
#include <string>

namespace nvsyn::cli {

// UserError (key `option`) if the folder of `output` is missing or not writable,
// or if `output` is a folder.
void check_output_file(const std::string& output, const std::string& option);

// Calls write(temporary_path), then renames the temporary file to `output`.
// If write throws, the temporary file is removed and the exception passes on.
void write_then_rename(const std::string& output, const std::function<void(const std::string&)>& write);

}  // namespace nvsyn::cli
