#include "cli/output_file.hpp"

#include <filesystem>
#include <fmt/format.h>
#include <unistd.h>

#include "core/error.hpp"

namespace nvsyn::cli {

void check_output_file(const std::string& output, const std::string& option) {
  namespace fs = std::filesystem;
  const fs::path path(output);
  const fs::path folder = path.has_parent_path() ? path.parent_path() : fs::path(".");
  std::error_code ec;
  if (!fs::is_directory(folder, ec))
    throw UserError({output}, option, fmt::format("the folder '{}' does not exist", folder.string()));
  if (fs::is_directory(path, ec)) throw UserError({output}, option, "is a folder; give a file name ending in .h5");
  if (::access(folder.c_str(), W_OK) != 0)
    throw UserError({output}, option, fmt::format("the folder '{}' is not writable", folder.string()));
}

void write_then_rename(const std::string& output, const std::function<void(const std::string&)>& write) {
  const std::string partial = fmt::format("{}.partial-{}", output, ::getpid());
  try {
    write(partial);
  } catch (...) {
    std::error_code ec;
    std::filesystem::remove(partial, ec);
    throw;
  }
  std::filesystem::rename(partial, output);
}

}  // namespace nvsyn::cli
