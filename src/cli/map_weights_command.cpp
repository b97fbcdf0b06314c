// `nvsyn map-weights WEIGHTS.csv --preset P`: program a weight matrix into device
// synapses with program-and-verify and follow its error over time
// (devices/weight_mapping.hpp). Prints a table of error statistics per time and,
// with -o, writes a weight-mapping file (HDF5).
#include <cmath>
#include <fmt/format.h>
#include <memory>
#include <optional>

#include "cli/option_values.hpp"
#include "cli/output_file.hpp"
#include "cli/step_progress.hpp"
#include "cli/subcommand.hpp"
#include "core/error.hpp"
#include "core/param_table.hpp"
#include "devices/weight_mapping.hpp"
#include "model/device_preset.hpp"
#include "model/weight_matrix_file.hpp"
#include "record/mapping_writer.hpp"

#ifndef NVSYN_VERSION
#define NVSYN_VERSION "unknown"
#endif

namespace nvsyn::cli {
namespace {

struct MapWeightsArgs {
  std::string weights_file;
  std::string preset;
  std::string weight_max, gain, layout, tolerance, unit;
  std::uint32_t devices_per_synapse = 0;
  std::string times = "0 s,1 h,1 d,1 yr,10 yr";
  OutputOption output;
  std::uint64_t seed = 1;
};

std::string option_for(const std::string& key) {
  std::string option = "--" + key;
  for (char& ch : option)
    if (ch == '_') ch = '-';
  return option;
}

// The synapse layout, validated by the same rules as a model file's synapse table.
SynapseLayoutParameters layout_from_options(const MapWeightsArgs& args, const DeviceParameters& device) {
  if (args.gain.empty() == args.weight_max.empty())
    throw UserError({}, args.gain.empty() ? "--weight-max" : "--gain",
                    "give exactly one of --weight-max (the weight of a fully programmed synapse, e.g. \"0.2 nA\") "
                    "and --gain (weight per siemens, e.g. \"5 uV\")");
  if (args.devices_per_synapse > 0 && args.layout != "multi")
    throw UserError({}, "--devices-per-synapse", "only applies to --layout multi");
  ParamTable table;
  auto text = [&](const char* key, const std::string& value) {
    if (!value.empty()) table.set(key, ParamValue{value, SourcePosition{}});
  };
  text("layout", args.layout);
  text("gain", args.gain);
  text("weight_max", args.weight_max);
  if (args.devices_per_synapse > 0)
    table.set("devices_per_synapse", ParamValue{std::int64_t{args.devices_per_synapse}, SourcePosition{}});
  try {
    return SynapseLayoutParameters::from_table(table, device);
  } catch (const UserError& e) {
    throw UserError(e.where(), option_for(e.key()), e.message());
  }
}

// Weight of a fully programmed synapse (A), the inverse of from_table's gain rule.
double weight_max_of(const SynapseLayoutParameters& s, const DeviceParameters& device) {
  const double span = s.layout == SynapseLayout::multi    ? s.devices_per_synapse * device.g_max
                      : s.layout == SynapseLayout::single ? device.g_max
                                                          : device.g_max - device.g_min;
  return s.gain * span;
}

std::string amps(double value) { return format_rounded(value, Dimension::current); }

void print_report(const WeightMatrix& m, const DevicePreset& preset, const DeviceParameters& device,
                  const SynapseLayoutParameters& layout, const WeightMappingResult& r) {
  fmt::print("mapped {} x {} = {} weights from {} (unit {}) onto preset {} ({}), layout {}, gain {}, "
             "weight_max {}\n",
             m.rows, m.columns, m.values.size(), m.file, m.unit, preset.name, device_kind_name(device.kind),
             synapse_layout_name(layout.layout), format_quantity(layout.gain, Dimension::voltage),
             amps(weight_max_of(layout, device)));
  const std::uint64_t ok = r.write.written - r.write.failed;
  fmt::print("programming: {} of {} within the verify tolerance; failed: {} out of range, {} stuck or worn out, "
             "{} not converged\n",
             ok, r.write.written, r.write.out_of_range, r.write.unresponsive, r.not_converged);
  fmt::print("error = weight read - target; 'within' counts |error| <= {}\n\n", amps(r.tolerance));
  fmt::print("{:<10} {:>10} {:>10} {:>10} {:>10} {:>10} {:>10} {:>8} {:>8} {:>12}\n", "time", "mean", "sd", "rms",
             "p5", "p95", "max|err|", "within", "ratio", "rms(drift)");
  for (std::size_t j = 0; j < r.times.size(); ++j) {
    const WeightErrorSummary& e = r.read_summary[j];
    fmt::print("{:<10} {:>10} {:>10} {:>10} {:>10} {:>10} {:>10} {:>7.1f}% {:>8.4f} {:>12}\n",
               format_duration(e.time), amps(e.mean), amps(e.sd), amps(e.rms), amps(e.percentiles[1]),
               amps(e.percentiles[5]), amps(e.max_abs), 100.0 * e.within_tolerance, e.weight_ratio,
               amps(r.drift_summary[j].rms));
  }
  fmt::print("\nratio: sum |weight| / sum |target| over successfully programmed weights (1 = no overall loss); "
             "rms(drift): drift alone, without read noise\n");
}

int map_weights_command(const MapWeightsArgs& args) {
  const WeightMatrix matrix = read_weight_matrix(
      args.weights_file, args.unit.empty() ? std::nullopt : std::optional<std::string>(args.unit));
  const DevicePreset preset = read_device_preset(args.preset, ".", SourcePosition{});
  const DeviceParameters device = DeviceParameters::from_table(*preset.device);
  preset.device->reject_unknown_keys();
  const SynapseLayoutParameters layout = layout_from_options(args, device);

  WeightMappingOptions options;
  options.seed = args.seed;
  options.times = parse_quantity_list_option(args.times, "--times", QuantityKind::time_point);
  if (!args.tolerance.empty()) {
    options.tolerance = parse_quantity_option(args.tolerance, "--tolerance", QuantityKind::current);
    if (options.tolerance < 0) throw UserError({}, "--tolerance", "must not be negative");
  }
  try {
    options.validate();
  } catch (const UserError& e) {
    throw UserError(e.where(), option_for(e.key()), e.message());
  }
  std::optional<CheckedOutput> output;
  if (args.output.path)
    output = check_output_file(*args.output.path, args.output.force, {args.weights_file, preset.file});

  WeightMappingResult result;
  {
    StepProgress progress("programming and reading weights");
    result = map_weights(matrix.values, device, layout, options,
                         [&](std::uint64_t done, std::uint64_t total) { progress.update(done, total); });
  }
  if (output) {
    MappingFileHeader h;
    h.nvsyn_version = NVSYN_VERSION;
    h.seed = options.seed;
    h.preset = preset.name;
    h.preset_file = preset.file;
    h.preset_text = preset.text;
    h.device_model = std::string(device_kind_name(device.kind));
    h.synapse_layout = std::string(synapse_layout_name(layout.layout));
    h.devices_per_synapse = layout.devices();
    h.gain = layout.gain;
    h.weight_max = weight_max_of(layout, device);
    h.weights_file = matrix.file;
    h.weights_unit = matrix.unit;
    h.rows = matrix.rows;
    h.columns = matrix.columns;
    write_then_rename(*output, [&](const std::string& path) { write_mapping_file(path, h, result); });
  }
  print_report(matrix, preset, device, layout, result);
  if (output) fmt::print("mapping file: {}\n", output->path());
  return 0;
}

}  // namespace

Subcommand register_map_weights(CLI::App& app) {
  auto args = std::make_shared<MapWeightsArgs>();
  auto* cmd = app.add_subcommand(
      "map-weights", "Program a weight matrix into device synapses with program-and-verify and follow its error over time");
  cmd->add_option("weights", args->weights_file,
                  "Weight matrix: rows of comma-separated numbers, unit in a '# unit: nA' line or --unit")
      ->required();
  cmd->add_option("--preset", args->preset, "Device preset: a name from models/devices (or NVSYN_PRESETS) or a .toml path")
      ->required();
  cmd->add_option("--weight-max", args->weight_max, "Weight of a fully programmed synapse, e.g. \"0.2 nA\"");
  cmd->add_option("--gain", args->gain, "Weight per siemens of conductance, e.g. \"5 uV\"");
  cmd->add_option("--layout", args->layout,
                  "single | differential | multi (default: single, or differential for phase_change)");
  cmd->add_option("--devices-per-synapse", args->devices_per_synapse, "Devices of a multi-device synapse (default 4)");
  cmd->add_option("--times", args->times, "Times after programming to read the weights, comma-separated")
      ->capture_default_str();
  cmd->add_option("--tolerance", args->tolerance,
                  "Error counted as 'within' (default: the verify tolerance as a weight)");
  cmd->add_option("--unit", args->unit, "Unit of the values in the weights file, e.g. nA (instead of a '# unit:' line)");
  add_output_options(*cmd, args->output, "Weight-mapping file to write (HDF5), e.g. mapping.h5");
  cmd->add_option("--seed", args->seed, "Random seed")->capture_default_str();
  return {cmd, [args] { return map_weights_command(*args); }};
}

}  // namespace nvsyn::cli
