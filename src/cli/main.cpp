// nvsyn: command-line entry point. Wires the library's steps together; owns no
// simulation logic. Exit status: 0 complete, 2 user error, 1 internal error,
// 130 interrupted (the run file is kept, with status "interrupted").
#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include "cli/commands.hpp"
#include "core/error.hpp"

#ifndef NVSYN_VERSION
#define NVSYN_VERSION "unknown"
#endif

int main(int argc, char** argv) {
  CLI::App app{"nvsyn " NVSYN_VERSION
               ": spiking networks whose synapses live in simulated non-volatile memory devices.\n"
               "Describe a network in a TOML model file, run it, and read the HDF5 run file in your own tools."};
  app.require_subcommand(1);
  app.set_version_flag("--version", std::string(NVSYN_VERSION));

  nvsyn::cli::RunOptions run;
  std::uint64_t seed = 0;
  std::string duration;
  auto* run_cmd = app.add_subcommand("run", "Run a model and write a run file (HDF5)");
  run_cmd->add_option("model", run.model, "Model file (TOML)")->required();
  run_cmd->add_option("-o,--output", run.output, "Run file to write, e.g. run.h5")->required();
  auto* seed_opt = run_cmd->add_option("--seed", seed, "Override the model's random seed");
  auto* duration_opt = run_cmd->add_option("--duration", duration, "Override the model time to simulate, e.g. \"2 s\"");
  run_cmd->add_flag("-q,--quiet", run.quiet, "Print no per-population summary at the end");

  std::string check_model;
  auto* check_cmd = app.add_subcommand("check", "Validate a model and print what would be built, with a memory estimate");
  check_cmd->add_option("model", check_model, "Model file (TOML)")->required();

  std::string summary_file;
  auto* summary_cmd = app.add_subcommand("summary", "Per-population neurons, spikes, mean rate and CV of inter-spike intervals");
  summary_cmd->add_option("run_file", summary_file, "Run file (HDF5) written by 'nvsyn run'")->required();

  // CLI11 answers a mistyped command with "A subcommand is required"; name it instead.
  if (argc > 1 && argv[1][0] != '-') {
    const std::string given = argv[1];
    const bool known = run_cmd->check_name(given) || check_cmd->check_name(given) || summary_cmd->check_name(given);
    if (!known) {
      fmt::print(stderr, "error: unknown command '{}'; expected run, check or summary (see nvsyn --help)\n", given);
      return 2;
    }
  }

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::Success& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    // A command-line mistake is a user error: same form and exit status as the others.
    fmt::print(stderr, "{}\nRun 'nvsyn --help' or 'nvsyn <command> --help' for usage.\n",
               nvsyn::format_user_error({}, "", e.what()));
    return 2;
  }

  try {
    if (*run_cmd) {
      if (*seed_opt) run.seed = seed;
      if (*duration_opt) run.duration = duration;
      return nvsyn::cli::run_command(run);
    }
    if (*check_cmd) return nvsyn::cli::check_command(check_model);
    if (*summary_cmd) return nvsyn::cli::summary_command(summary_file);
  } catch (const nvsyn::UserError& e) {
    fmt::print(stderr, "{}\n", e.what());
    return 2;
  } catch (const nvsyn::InternalError& e) {
    fmt::print(stderr, "internal error: {}\nThis is a bug in nvsyn; please report it with the model file.\n", e.what());
    return 1;
  } catch (const std::exception& e) {
    fmt::print(stderr, "internal error: {}\n", e.what());
    return 1;
  }
  return 1;
}
