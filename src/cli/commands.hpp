#pragma once
// The subcommands of the `nvsyn` program. Each returns the process exit status;
// user errors are thrown as UserError and turned into status 2 by main().
#include <cstdint>
#include <optional>
#include <string>

namespace nvsyn::cli {

struct RunOptions {
  std::string model;
  std::string output;
  std::optional<std::uint64_t> seed;
  std::optional<std::string> duration;  // quantity text, e.g. "2 s"
  bool quiet = false;
};

int run_command(const RunOptions& options);
int check_command(const std::string& model);
int summary_command(const std::string& run_file);

}  // namespace nvsyn::cli
