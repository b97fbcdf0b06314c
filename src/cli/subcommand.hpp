#pragma once
// How a subcommand joins the `nvsyn` program: a registration function adds the
// subcommand and its options to the app and returns what to run when it is chosen.
// main() calls every registration function once (cli/main.cpp, one line each).
#include <CLI/CLI.hpp>
#include <functional>

namespace nvsyn::cli {

struct Subcommand {
  CLI::App* app = nullptr;
  std::function<int()> action;  // returns the exit status; throws UserError for user mistakes
};

Subcommand register_run(CLI::App& app);
Subcommand register_check(CLI::App& app);
Subcommand register_summary(CLI::App& app);
Subcommand register_device_bench(CLI::App& app);
Subcommand register_map_weights(CLI::App& app);
Subcommand register_fit_device(CLI::App& app);

}  // namespace nvsyn::cli
