#include "cli/output_file.hpp"

#include <stdio.h>  // renameat2
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fmt/format.h>

#include "core/error.hpp"

namespace nvsyn::cli {
namespace {

namespace fs = std::filesystem;
constexpr const char* kOption = "-o";

struct FileId {
  dev_t device;
  ino_t inode;
  bool operator==(const FileId&) const = default;
};

// The file a path leads to, through any symbolic links; nullopt if there is none.
std::optional<FileId> file_id(const std::string& path) {
  struct stat info {};
  if (::stat(path.c_str(), &info) != 0) return std::nullopt;
  return FileId{info.st_dev, info.st_ino};
}

// The path with symbolic links in its existing part resolved, for comparing a path
// that leads to no file yet.
std::string resolved(const std::string& path) {
  std::error_code ec;
  const fs::path p = fs::weakly_canonical(fs::absolute(path, ec), ec);
  return ec ? path : p.lexically_normal().string();
}

bool same_file(const std::string& output, const std::string& input) {
  const auto out = file_id(output);
  if (out) return out == file_id(input);
  return resolved(output) == resolved(input);
}

}  // namespace

CLI::Option* add_output_options(CLI::App& command, OutputOption& output, const std::string& description) {
  CLI::Option* option = command.add_option_function<std::string>(
      "-o,--output", [&output](const std::string& path) { output.path = path; }, description);
  command.add_flag("--force", output.force, "Replace the output file if it exists (never an input of the command)");
  return option;
}

CheckedOutput check_output_file(const std::string& output, bool force, const std::vector<std::string>& inputs) {
  if (output.empty()) throw UserError({}, kOption, "the output path is empty; give a file name");
  const fs::path path(output);
  const fs::path folder = path.has_parent_path() ? path.parent_path() : fs::path(".");
  std::error_code ec;
  if (!fs::is_directory(folder, ec))
    throw UserError({output}, kOption, fmt::format("the folder '{}' does not exist", folder.string()));
  if (fs::is_directory(path, ec)) throw UserError({output}, kOption, "is a folder; give a file name");
  if (::access(folder.c_str(), W_OK) != 0)
    throw UserError({output}, kOption, fmt::format("the folder '{}' is not writable", folder.string()));
  for (const std::string& input : inputs) {
    if (!same_file(output, input)) continue;
    const bool linked = fs::absolute(output, ec).lexically_normal() != fs::absolute(input, ec).lexically_normal();
    throw UserError({output}, kOption,
                    fmt::format("is {}the input '{}' of this command; writing the output there would destroy it, so "
                                "nvsyn refuses even with --force: choose another output name",
                                linked ? "a link to " : "", input));
  }
  if (!force && fs::exists(fs::symlink_status(path, ec)))
    throw UserError({output}, kOption,
                    "already exists; nvsyn replaces an existing file only when asked: add --force to replace it, or "
                    "choose another name");
  return CheckedOutput(output, force);
}

void write_then_rename(const CheckedOutput& output, const std::function<void(const std::string&)>& write) {
  const std::string& target = output.path();
  const std::string partial = fmt::format("{}.partial-{}", target, ::getpid());
  try {
    write(partial);
  } catch (...) {
    std::error_code ec;
    fs::remove(partial, ec);
    throw;
  }
  int error = 0;
  if (output.may_replace()) {
    if (::rename(partial.c_str(), target.c_str()) != 0) error = errno;
  } else if (::renameat2(AT_FDCWD, partial.c_str(), AT_FDCWD, target.c_str(), RENAME_NOREPLACE) != 0) {
    error = errno;
    // File systems without RENAME_NOREPLACE: a hard link also refuses to replace.
    if (error == EINVAL || error == ENOSYS || error == EOPNOTSUPP) {
      error = ::link(partial.c_str(), target.c_str()) == 0 ? 0 : errno;
      if (error == 0) ::unlink(partial.c_str());
    }
  }
  if (error == EEXIST)
    throw UserError({target}, kOption,
                    fmt::format("appeared while nvsyn was working and was kept; the new output is complete at '{}' "
                                "(use --force to replace existing files)",
                                partial));
  if (error != 0)
    throw UserError({target}, kOption,
                    fmt::format("cannot move the finished output into place ({}); it is complete at '{}'",
                                std::strerror(error), partial));
}

}  // namespace nvsyn::cli
