// `nvsyn device PRESET`: the virtual characterisation bench (devices/characterisation.hpp).
// Runs the pulse protocol on many simulated devices, prints the summary statistics
// and, with -o, writes curves and statistics to a device-bench file (HDF5).
#include <cmath>
#include <fmt/format.h>
#include <memory>
#include <optional>

#include "cli/option_values.hpp"
#include "cli/output_file.hpp"
#include "cli/step_progress.hpp"
#include "cli/subcommand.hpp"
#include "core/error.hpp"
#include "devices/characterisation.hpp"
#include "devices/characterisation_statistics.hpp"
#include "model/device_preset.hpp"
#include "record/bench_writer.hpp"

#ifndef NVSYN_VERSION
#define NVSYN_VERSION "unknown"
#endif

namespace nvsyn::cli {
namespace {

struct DeviceBenchArgs {
  std::string preset;
  OutputOption output;
  std::uint32_t devices = CharacterisationProtocol{}.devices;
  std::uint32_t cycles = CharacterisationProtocol{}.cycles;
  std::uint32_t pulses = 0;
  std::string read_delays = "1 s,10 s,100 s,1000 s,10000 s";
  std::uint64_t seed = CharacterisationProtocol{}.seed;
};

// Library field names map to the options that set them.
std::string option_for(const std::string& field) {
  if (field == "read_delays") return "--read-delays";
  if (field == "devices" || field == "cycles" || field == "pulses" || field == "seed") return "--" + field;
  return field;
}

std::string format_value(const SummaryEntry& e) {
  if (e.dimension == Dimension::dimensionless && std::isfinite(e.value)) return fmt::format("{:.4g}", e.value);
  return format_rounded(e.value, e.dimension);
}

void print_summary(const DevicePreset& preset, const DeviceParameters& device, const CharacterisationCurves& c,
                   const CharacterisationSummary& s) {
  fmt::print("device bench: preset {} ({}), {} devices x {} cycles, {} pulses per ramp\n", preset.name,
             device_kind_name(device.kind), c.devices, c.cycles, c.pulses);
  fmt::print("devices used: {} ({} stuck or worn out, left out); drift fits: {}\n\n", s.devices_used,
             s.devices_excluded, s.drift_fits);
  fmt::print("{:<20} {:>12}  {}\n", "statistic", "value", "meaning");
  for (const SummaryEntry& e : summary_entries(s)) fmt::print("{:<20} {:>12}  {}\n", e.name, format_value(e), e.description);
  if (!s.notes.empty()) fmt::print("\n");
  for (const auto& note : s.notes) fmt::print("note: {}\n", note);
}

int device_bench_command(const DeviceBenchArgs& args) {
  const DevicePreset preset = read_device_preset(args.preset, ".", SourcePosition{});
  const DeviceParameters device = DeviceParameters::from_table(*preset.device);
  preset.device->reject_unknown_keys();

  CharacterisationProtocol protocol;
  protocol.devices = args.devices;
  protocol.cycles = args.cycles;
  protocol.pulses = args.pulses;
  protocol.seed = args.seed;
  protocol.read_delays = parse_quantity_list_option(args.read_delays, "--read-delays", QuantityKind::time_point);
  try {
    protocol.validate(device);
  } catch (const UserError& e) {
    throw UserError(e.where(), option_for(e.key()), e.message());
  }
  std::optional<CheckedOutput> output;
  if (args.output.path) output = check_output_file(*args.output.path, args.output.force, {preset.file});

  CharacterisationCurves curves;
  {
    StepProgress progress("characterising devices");
    curves = run_characterisation(device, protocol,
                                  [&](std::uint64_t done, std::uint64_t total) { progress.update(done, total); });
  }
  const CharacterisationSummary summary = summarise_characterisation(curves, device);

  if (output) {
    BenchFileHeader header;
    header.nvsyn_version = NVSYN_VERSION;
    header.preset = preset.name;
    header.preset_file = preset.file;
    header.preset_text = preset.text;
    header.device_model = std::string(device_kind_name(device.kind));
    header.protocol = protocol;
    header.protocol.pulses = curves.pulses;
    write_then_rename(*output, [&](const std::string& path) { write_bench_file(path, header, curves, summary); });
  }
  print_summary(preset, device, curves, summary);
  if (output) fmt::print("\nbench file: {}\n", output->path());
  return 0;
}

}  // namespace

Subcommand register_device_bench(CLI::App& app) {
  auto args = std::make_shared<DeviceBenchArgs>();
  auto* cmd = app.add_subcommand(
      "device", "Characterise a device preset on a virtual bench: pulse ramps, drift, summary statistics");
  cmd->add_option("preset", args->preset, "Device preset: a name from models/devices (or NVSYN_PRESETS) or a .toml path")
      ->required();
  add_output_options(*cmd, args->output,
                     "Bench file to write (HDF5), e.g. bench.h5; without it only the summary is printed");
  cmd->add_option("--devices", args->devices, "Devices measured")->capture_default_str();
  cmd->add_option("--cycles", args->cycles, "Potentiation/depression cycles per device")->capture_default_str();
  cmd->add_option("--pulses", args->pulses,
                  "Pulses per ramp (default: twice the pulses the preset needs to cross its range)");
  cmd->add_option("--read-delays", args->read_delays,
                  "Read delays after programming for the drift curves, comma-separated")
      ->capture_default_str();
  cmd->add_option("--seed", args->seed, "Random seed")->capture_default_str();
  return {cmd, [args] { return device_bench_command(*args); }};
}

}  // namespace nvsyn::cli
