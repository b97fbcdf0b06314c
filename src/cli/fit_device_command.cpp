// `nvsyn fit-device DATA --model KIND`: calibrates a device model against measured
// pulse responses (devices/calibration/fit_device.hpp) and writes a preset.
// The preset goes to -o (written beside it and renamed when complete) or to stdout;
// the summary goes to stdout, or to stderr when stdout holds the preset.
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <memory>
#include <optional>

#include "cli/output_file.hpp"
#include "cli/subcommand.hpp"
#include "core/error.hpp"
#include "devices/calibration/fit_device.hpp"
#include "devices/calibration/fit_summary.hpp"
#include "devices/calibration/fitted_preset.hpp"
#include "devices/pulse_data_csv.hpp"
#include "model/toml_tables.hpp"
#include "record/pulse_data_hdf5.hpp"

namespace nvsyn::cli {
namespace {

struct FitDeviceArgs {
  std::string data;
  std::string model;
  OutputOption output;
  std::string name;
  double full_range_pulses = 0;
  int degree = 1;
};

// The preset must load like any other: check the text before anything is written, so
// a fit never leaves a preset that `nvsyn run` would reject. Failing here is a bug.
void check_loads(const std::string& text, const std::string& where) {
  try {
    auto root = parse_toml_tables(text, where);
    DeviceParameters::from_table(*root->table("device"));
  } catch (const UserError& e) {
    throw InternalError(fmt::format("the fitted preset does not load back: {}", e.what()));
  }
}

int fit_device_command(const FitDeviceArgs& args, bool full_range_given) {
  DeviceKind kind{};
  if (!parse_device_kind(args.model, kind))
    throw UserError({}, "--model",
                    fmt::format("unknown device model '{}'; known models: {}", args.model, device_kind_list()));
  std::optional<CheckedOutput> output;
  if (args.output.path) output = check_output_file(*args.output.path, args.output.force, {args.data});

  const PulseData data = looks_like_hdf5(args.data) ? read_pulse_hdf5(args.data) : read_pulse_csv(args.data);
  calibration::FitOptions options;
  if (full_range_given) options.full_range_pulses = args.full_range_pulses;
  options.polynomial_degree = args.degree;
  const calibration::FitResult fit = calibration::fit_device(data, kind, options);

  calibration::PresetInfo info;
  info.name = !args.name.empty()     ? args.name
              : output               ? std::filesystem::path(output->path()).stem().string()
                                     : "fitted_" + args.model;
  info.command = fmt::format("nvsyn fit-device {} --model {}", args.data, args.model);
  if (full_range_given) info.command += fmt::format(" --full-range-pulses {:g}", args.full_range_pulses);
  if (args.degree != 1) info.command += fmt::format(" --degree {}", args.degree);
  const std::string text = calibration::fitted_preset_text(fit, info);
  check_loads(text, output ? output->path() : "(fitted preset)");

  const std::string summary = calibration::fit_summary_text(fit);
  if (!output) {
    fmt::print("{}", text);
    fmt::print(stderr, "{}", summary);
    return 0;
  }
  write_then_rename(*output, [&](const std::string& path) {
    std::ofstream out(path, std::ios::binary);
    out << text;
    out.close();
    if (!out) throw UserError({output->path()}, "-o", "cannot write the preset");
  });
  fmt::print("{}preset written to {}\n", summary, output->path());
  return 0;
}

}  // namespace

Subcommand register_fit_device(CLI::App& app) {
  auto args = std::make_shared<FitDeviceArgs>();
  auto* cmd = app.add_subcommand("fit-device", "Fit a device model to measured pulse responses and write a preset");
  cmd->add_option("data", args->data,
                  "Measured pulse data: CSV with columns device,cycle,pulse,polarity,conductance [uS] "
                  "(optionally read_time [s]), or HDF5 with those datasets in /pulses")
      ->required();
  cmd->add_option("--model", args->model, "Device model to fit: " + device_kind_list())->required();
  add_output_options(*cmd, args->output, "Preset to write (TOML); default: print it to stdout");
  cmd->add_option("--name", args->name, "The preset's name (default: the output file's name)");
  auto* full_range =
      cmd->add_option("--full-range-pulses", args->full_range_pulses,
                      "exponential_saturation: hold full_range_pulses at this value instead of fitting it");
  cmd->add_option("--degree", args->degree, "phase_change: degree of the increment polynomials (1 or 2)");
  return {cmd, [args, full_range] { return fit_device_command(*args, static_cast<bool>(*full_range)); }};
}

}  // namespace nvsyn::cli
