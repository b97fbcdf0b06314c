// nvsyn: command-line entry point. Wires the library's steps together; owns no
// simulation logic. Exit status: 0 complete, 2 user error, 1 internal error or a
// run that failed (a state became NaN or infinite; the run file is kept, with status
// "failed"), 130 interrupted (the run file is kept, with status "interrupted").
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <vector>

#include "cli/subcommand.hpp"
#include "core/error.hpp"
#include "core/run_failure.hpp"

#ifndef NVSYN_VERSION
#define NVSYN_VERSION "unknown"
#endif

int main(int argc, char** argv) {
  CLI::App app{"nvsyn " NVSYN_VERSION
               ": spiking networks whose synapses live in simulated non-volatile memory devices.\n"
               "Describe a network in a TOML model file, run it, and read the HDF5 run file in your own tools."};
  app.require_subcommand(1);
  app.set_version_flag("--version", std::string(NVSYN_VERSION));

  using namespace nvsyn::cli;
  const std::vector<Subcommand> commands = {
      register_run(app),
      register_check(app),
      register_summary(app),
      register_device_bench(app),
      register_map_weights(app),
      register_fit_device(app),
  };

  // CLI11 answers a mistyped command with "A subcommand is required"; name it instead.
  if (argc > 1 && argv[1][0] != '-') {
    const std::string given = argv[1];
    std::string names;
    bool known = false;
    for (const auto& c : commands) {
      known = known || c.app->check_name(given);
      names += (names.empty() ? "" : ", ") + c.app->get_name();
    }
    if (!known) {
      fmt::print(stderr, "error: unknown command '{}'; expected one of {} (see nvsyn --help)\n", given, names);
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
    for (const auto& c : commands)
      if (*c.app) return c.action();
  } catch (const nvsyn::UserError& e) {
    fmt::print(stderr, "{}\n", e.what());
    return 2;
  } catch (const nvsyn::RunFailure& e) {
    // Not necessarily a bug: extreme parameters can drive a state out of range.
    fmt::print(stderr,
               "error: the run failed: {}\nThe run file keeps everything recorded before then, with status \"failed\" "
               "and this message. Values outside the plausible ranges (allowed with allow_implausible) are the usual "
               "cause.\n",
               e.what());
    return 1;
  } catch (const nvsyn::InternalError& e) {
    fmt::print(stderr, "internal error: {}\nThis is a bug in nvsyn; please report it with the input files.\n", e.what());
    return 1;
  } catch (const std::exception& e) {
    fmt::print(stderr, "internal error: {}\n", e.what());
    return 1;
  }
  return 1;
}
