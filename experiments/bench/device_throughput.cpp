// Benchmark (not a test): programming pulses and noisy reads per second for every
// device preset, and the memory each device and each synapse takes.
//
// For each preset, an array of `--devices` devices (default 10^6) takes
// `--operations` single pulses (random device, random polarity), then as many
// noisy reads (random device) at a later time, so drift and read noise are
// evaluated; then the same devices, grouped into synapses of the preset's default
// layout, take as many synapse reads (random synapse; a differential pair reads
// both of its devices). Devices are visited in a random order fixed before timing, so caches
// and prefetchers see what a large network's scattered synapse updates look like.
// Each measurement is repeated and the fastest repetition is reported (common
// practice for throughput measurements on a shared machine).
//
// Usage: nvsyn_bench_devices [--devices N] [--operations M] [--repeats R] [PRESET_DIR]
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fmt/format.h>
#include <random>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "devices/device_array.hpp"
#include "devices/synapse_devices.hpp"
#include "model/device_preset.hpp"

namespace {

using nvsyn::DeviceArray;
using nvsyn::Polarity;

struct Options {
  std::size_t devices = 1'000'000;
  std::size_t operations = 2'000'000;
  int repeats = 3;
  std::string preset_dir = NVSYN_BENCH_PRESET_DIR;
};

Options parse(int argc, char** argv) {
  Options o;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    auto next = [&]() -> std::string {
      if (i + 1 >= argc) {
        fmt::print(stderr, "{} needs a value\n", a);
        std::exit(2);
      }
      return argv[++i];
    };
    if (a == "--devices") o.devices = std::stoull(next());
    else if (a == "--operations") o.operations = std::stoull(next());
    else if (a == "--repeats") o.repeats = std::stoi(next());
    else if (a.starts_with("-")) {
      fmt::print(stderr, "usage: nvsyn_bench_devices [--devices N] [--operations M] [--repeats R] [PRESET_DIR]\n");
      std::exit(2);
    } else o.preset_dir = a;
  }
  if (o.devices == 0 || o.operations == 0 || o.repeats < 1) {
    fmt::print(stderr, "--devices, --operations and --repeats must be positive\n");
    std::exit(2);
  }
  return o;
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

struct Row {
  std::string preset, model, layout;
  double pulses_per_s = 0, reads_per_s = 0, synapse_reads_per_s = 0;
  std::size_t devices_per_synapse = 1;
};

Row measure(const nvsyn::DevicePreset& preset, const Options& o, const std::vector<std::uint32_t>& order,
            const std::vector<std::uint8_t>& polarity) {
  const nvsyn::DeviceParameters params = nvsyn::DeviceParameters::from_table(*preset.device);
  Row row;
  row.preset = preset.name;
  row.model = std::string(nvsyn::device_kind_name(params.kind));
  // The layout a model file gets when it names only the preset and a weight range.
  nvsyn::ParamTable synapse;
  synapse.set("weight_max", nvsyn::ParamValue{std::string("1 nA"), {}});
  const auto layout = nvsyn::SynapseLayoutParameters::from_table(synapse, params);
  row.layout = std::string(nvsyn::synapse_layout_name(layout.layout));
  row.devices_per_synapse = layout.devices();

  double best_pulse = 1e300, best_read = 1e300, best_synapse_read = 1e300;
  const std::size_t synapses = std::max<std::size_t>(1, o.devices / layout.devices());
  double sink = 0;
  for (int r = 0; r < o.repeats; ++r) {
    DeviceArray array(params, o.devices, 1 + static_cast<std::uint64_t>(r), 0);
    auto start = std::chrono::steady_clock::now();
    for (std::size_t k = 0; k < o.operations; ++k)
      sink += array.pulse(order[k], polarity[k] ? Polarity::depress : Polarity::potentiate, 1, 1e-6 * static_cast<double>(k));
    best_pulse = std::min(best_pulse, seconds_since(start));
    const double t_read = 1e-6 * static_cast<double>(o.operations) + 3600.0;  // an hour later: drift applies
    start = std::chrono::steady_clock::now();
    for (std::size_t k = 0; k < o.operations; ++k) sink += array.read(order[o.operations - 1 - k], t_read);
    best_read = std::min(best_read, seconds_since(start));
    nvsyn::SynapseDevices synapse_array(params, layout, synapses, 1 + static_cast<std::uint64_t>(r), 0);
    start = std::chrono::steady_clock::now();
    for (std::size_t k = 0; k < o.operations; ++k) sink += synapse_array.read_weight(order[k] % synapses, t_read);
    best_synapse_read = std::min(best_synapse_read, seconds_since(start));
  }
  // Using the results keeps the compiler from dropping the loops; every read and
  // every change of conductance is finite for a valid preset.
  if (!std::isfinite(sink)) fmt::print(stderr, "warning: {}: non-finite conductances\n", preset.name);
  row.pulses_per_s = static_cast<double>(o.operations) / best_pulse;
  row.reads_per_s = static_cast<double>(o.operations) / best_read;
  row.synapse_reads_per_s = static_cast<double>(o.operations) / best_synapse_read;
  return row;
}

}  // namespace

int main(int argc, char** argv) {
  const Options o = parse(argc, argv);
  std::vector<std::string> files;
  std::error_code ec;
  for (const auto& entry : std::filesystem::directory_iterator(o.preset_dir, ec))
    if (entry.path().extension() == ".toml") files.push_back(entry.path().string());
  if (ec || files.empty()) {
    fmt::print(stderr, "no presets (*.toml) in '{}'\n", o.preset_dir);
    return 2;
  }
  std::sort(files.begin(), files.end());

  // Random device order and polarity, fixed before any timing.
  std::mt19937_64 rng(2026);
  std::uniform_int_distribution<std::uint32_t> pick(0, static_cast<std::uint32_t>(o.devices - 1));
  std::vector<std::uint32_t> order(o.operations);
  std::vector<std::uint8_t> polarity(o.operations);
  for (std::size_t k = 0; k < o.operations; ++k) {
    order[k] = pick(rng);
    polarity[k] = static_cast<std::uint8_t>(rng() & 1u);
  }

  const std::size_t bytes = DeviceArray::bytes_per_device();
  fmt::print("device throughput: {} devices per array, {} pulses and {} reads per measurement, best of {}, "
             "random device order\n",
             o.devices, o.operations, o.operations, o.repeats);
  fmt::print("{:<28} {:<24} {:>12} {:>12} {:>15} {:>13} {:<16} {:>14}\n", "preset", "model", "pulses/s", "reads/s",
             "syn_reads/s", "bytes/device", "layout", "bytes/synapse");
  try {
    for (const auto& file : files) {
      const nvsyn::DevicePreset preset = nvsyn::read_device_preset_file(file);
      const Row r = measure(preset, o, order, polarity);
      fmt::print("{:<28} {:<24} {:>12.3g} {:>12.3g} {:>15.3g} {:>13} {:<16} {:>14}\n", r.preset, r.model,
                 r.pulses_per_s, r.reads_per_s, r.synapse_reads_per_s, bytes,
                 fmt::format("{} x{}", r.layout, r.devices_per_synapse), bytes * r.devices_per_synapse);
    }
  } catch (const nvsyn::UserError& e) {
    fmt::print(stderr, "{}\n", e.what());
    return 2;
  }
  fmt::print("bytes/synapse: device state only (DeviceArray::bytes_per_device() x devices per synapse); "
             "the default layout adds no per-synapse state\n");
  return 0;
}
