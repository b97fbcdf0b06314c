#pragma once
// The subcommands of the `nvsyn` program. Each returns the process exit status;
// user errors are thrown as UserError and turned into status 2 by main().
#include <cstdint>
#include <optional>
#include <string>

namespace nvsyn::cli {

// Consent to go beyond the limits (README, "Limits and plausible ranges"), as the
// model keys [simulation] allow_implausible and allow_large_run do.
struct LimitOverrides {
  bool allow_implausible = false;  // --allow-implausible: out-of-range values warn instead of failing
  bool allow_large_run = false;    // --allow-large-run: runs beyond the cost limits are accepted
};

struct RunOptions {
  std::string model;
  std::string output;
  bool force = false;  // --force: replace an existing output file
  std::optional<std::uint64_t> seed;
  std::optional<std::string> duration;  // quantity text, e.g. "2 s"
  bool quiet = false;
  unsigned threads = 0;  // --threads; 0: every core
  LimitOverrides overrides;
};

int run_command(const RunOptions& options);
int check_command(const std::string& model, const LimitOverrides& overrides = {});
int summary_command(const std::string& run_file);

}  // namespace nvsyn::cli
