#include "record/run_writer.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>

#include "core/error.hpp"
#include "record/detail/hdf5_io.hpp"

namespace nvsyn {
namespace {

using detail::create_chunked_dataset;
using detail::create_group;
using detail::H5Handle;
using detail::Hdf5Context;
using detail::is_valid_link_name;
using detail::kChunkElements;
using detail::open_or_create_group;
using detail::si_symbol;
using detail::utc_now_iso8601;
using detail::write_fixed_1d;
using detail::write_scalar_attr;
using detail::write_string_attr;

constexpr int kLayoutVersion = 1;

// Appends are buffered up to this many values per stream before they are written,
// which bounds memory per stream (~0.8 MiB for spikes) whatever the run length.
constexpr std::size_t kBufferedValues = 65536;

H5Handle create_growing_1d(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type,
                           std::string_view path) {
  const hsize_t dims[1] = {0};
  const hsize_t max_dims[1] = {H5S_UNLIMITED};
  const hsize_t chunk[1] = {kChunkElements};
  return create_chunked_dataset(h5, parent, name, file_type, 1, dims, max_dims, chunk, path);
}

// Extends a dataset along its first dimension by `rows` and writes `data`
// (rows x row_width values, row-major) into the new rows.
void append_rows(const Hdf5Context& h5, hid_t dataset, hid_t memory_type, const void* data, hsize_t rows_before,
                 hsize_t rows, hsize_t row_width, int rank, std::string_view path) {
  if (rows == 0) return;
  const hsize_t new_dims[2] = {rows_before + rows, row_width};
  h5.check(H5Dset_extent(dataset, new_dims), "extend dataset", path);
  if (row_width == 0) return;  // rows of no values: nothing to select or write
  H5Handle file_space = h5.checked(detail::space_handle(H5Dget_space(dataset)), "get dataspace of", path);
  const hsize_t start[2] = {rows_before, 0};
  const hsize_t count[2] = {rows, row_width};
  h5.check(H5Sselect_hyperslab(file_space.get(), H5S_SELECT_SET, start, nullptr, count, nullptr),
           "select rows of", path);
  H5Handle memory_space =
      h5.checked(detail::space_handle(H5Screate_simple(rank, count, nullptr)), "create memory dataspace for", path);
  h5.check(H5Dwrite(dataset, memory_type, memory_space.get(), file_space.get(), H5P_DEFAULT, data),
           "append to dataset", path);
}

struct SpikeStream {
  std::string population;
  std::uint32_t size = 0;
  std::string time_path;
  std::string neuron_path;
  H5Handle time;
  H5Handle neuron;
  std::vector<double> buffered_times;
  std::vector<std::uint32_t> buffered_neurons;
  hsize_t written = 0;
  double last_time = -std::numeric_limits<double>::infinity();
};

struct TraceStream {
  std::string path;  // /traces/<population>/<variable>
  std::size_t width = 0;
  H5Handle time;
  H5Handle value;
  std::vector<double> buffered_times;
  std::vector<double> buffered_values;  // row-major, width values per row
  hsize_t rows_written = 0;
  double last_time = -std::numeric_limits<double>::infinity();
};

// /weights/<pathway>: periodic samples, every change, snapshots.
struct WeightStream {
  std::string path;
  std::size_t width = 0;  // recorded synapses
  H5Handle sample_time, sample_value, snapshot_time, snapshot_value;
  H5Handle change_time, change_synapse, change_requested, change_realised, change_route;
  std::vector<double> buffered_times;
  std::vector<float> buffered_values;
  hsize_t rows_written = 0, snapshots_written = 0, changes_written = 0;
  std::vector<double> change_times, change_requested_values, change_realised_values;
  std::vector<std::uint32_t> change_synapses;
  std::vector<std::uint8_t> change_routes;
};

// A 2-D dataset growing by rows of `width` values.
H5Handle create_growing_rows(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, hsize_t width,
                             std::string_view path) {
  const hsize_t columns = std::clamp<hsize_t>(width, 1, kChunkElements);
  const hsize_t dims[2] = {0, width};
  const hsize_t max_dims[2] = {H5S_UNLIMITED, width > 0 ? width : H5S_UNLIMITED};
  const hsize_t chunk[2] = {std::max<hsize_t>(1, kChunkElements / columns), columns};
  return create_chunked_dataset(h5, parent, name, file_type, 2, dims, max_dims, chunk, path);
}

}  // namespace

std::string_view run_status_name(RunStatus s) {
  switch (s) {
    case RunStatus::running: return "running";
    case RunStatus::complete: return "complete";
    case RunStatus::interrupted: return "interrupted";
    case RunStatus::failed: return "failed";
  }
  return "unknown";
}

struct RunWriter::Impl {
  explicit Impl(const std::string& file_path) : h5(file_path) {}

  Hdf5Context h5;
  // Declared first so that it is closed last: HDF5 keeps a file open while any
  // object in it is still open.
  H5Handle file;
  H5Handle populations;
  H5Handle spikes;
  H5Handle pathways;
  H5Handle traces;
  std::map<std::string, std::uint32_t, std::less<>> population_sizes;
  std::vector<SpikeStream> spike_streams;
  std::vector<TraceStream> trace_streams;
  std::vector<WeightStream> weight_streams;
  H5Handle weights;
  bool closed = false;

  void require_open(std::string_view operation) const {
    if (closed)
      throw InternalError(fmt::format("run file '{}': {} after finish()", h5.path(), operation));
  }

  void write_spike_buffer(SpikeStream& s) {
    const hsize_t n = s.buffered_times.size();
    append_rows(h5, s.time.get(), H5T_NATIVE_DOUBLE, s.buffered_times.data(), s.written, n, 1, 1, s.time_path);
    append_rows(h5, s.neuron.get(), H5T_NATIVE_UINT32, s.buffered_neurons.data(), s.written, n, 1, 1,
                s.neuron_path);
    s.written += n;
    s.buffered_times.clear();
    s.buffered_neurons.clear();
  }

  void write_trace_buffer(TraceStream& t) {
    const hsize_t rows = t.buffered_times.size();
    append_rows(h5, t.time.get(), H5T_NATIVE_DOUBLE, t.buffered_times.data(), t.rows_written, rows, 1, 1,
                t.path + "/time");
    append_rows(h5, t.value.get(), H5T_NATIVE_DOUBLE, t.buffered_values.data(), t.rows_written, rows, t.width, 2,
                t.path + "/value");
    t.rows_written += rows;
    t.buffered_times.clear();
    t.buffered_values.clear();
  }

  void write_weight_buffers(WeightStream& ws) {
    const hsize_t rows = ws.buffered_times.size();
    append_rows(h5, ws.sample_time.get(), H5T_NATIVE_DOUBLE, ws.buffered_times.data(), ws.rows_written, rows, 1, 1,
                ws.path + "/time");
    append_rows(h5, ws.sample_value.get(), H5T_NATIVE_FLOAT, ws.buffered_values.data(), ws.rows_written, rows,
                ws.width, 2, ws.path + "/value");
    ws.rows_written += rows;
    ws.buffered_times.clear();
    ws.buffered_values.clear();
    const hsize_t n = ws.change_times.size();
    const std::string c = ws.path + "/changes";
    append_rows(h5, ws.change_time.get(), H5T_NATIVE_DOUBLE, ws.change_times.data(), ws.changes_written, n, 1, 1, c + "/time");
    append_rows(h5, ws.change_synapse.get(), H5T_NATIVE_UINT32, ws.change_synapses.data(), ws.changes_written, n, 1, 1,
                c + "/synapse");
    append_rows(h5, ws.change_requested.get(), H5T_NATIVE_DOUBLE, ws.change_requested_values.data(), ws.changes_written,
                n, 1, 1, c + "/requested");
    append_rows(h5, ws.change_realised.get(), H5T_NATIVE_DOUBLE, ws.change_realised_values.data(), ws.changes_written, n,
                1, 1, c + "/realised");
    append_rows(h5, ws.change_route.get(), H5T_NATIVE_UINT8, ws.change_routes.data(), ws.changes_written, n, 1, 1,
                c + "/route");
    ws.changes_written += n;
    ws.change_times.clear();
    ws.change_synapses.clear();
    ws.change_requested_values.clear();
    ws.change_realised_values.clear();
    ws.change_routes.clear();
  }

  void write_all_buffers() {
    for (auto& s : spike_streams) write_spike_buffer(s);
    for (auto& t : trace_streams) write_trace_buffer(t);
    for (auto& ws : weight_streams) write_weight_buffers(ws);
  }
};

RunWriter::RunWriter(const std::string& path, const RunHeader& header) : impl_(std::make_unique<Impl>(path)) {
  detail::silence_hdf5_error_printing();
  Impl& w = *impl_;

  // Bounds at the 1.8 format: dense attribute storage lets the model text exceed
  // the 64 KiB limit of compact attributes, while HDF5 1.8 readers (older MATLAB)
  // can still open the file.
  w.file = detail::create_file_v18(path, "run file");

  const Hdf5Context& h5 = w.h5;
  const hid_t root = w.file.get();
  write_string_attr(h5, root, "layout", "nvsyn-run", "/");
  write_scalar_attr(h5, root, "layout_version", H5T_STD_I32LE, H5T_NATIVE_INT, kLayoutVersion, "/");
  write_string_attr(h5, root, "nvsyn_version", header.nvsyn_version, "/");
  write_string_attr(h5, root, "created", utc_now_iso8601(), "/");
  write_scalar_attr(h5, root, "seed", H5T_STD_U64LE, H5T_NATIVE_UINT64, header.seed, "/");
  write_scalar_attr(h5, root, "threads", H5T_STD_U32LE, H5T_NATIVE_UINT32, header.threads, "/");
  write_string_attr(h5, root, "status", run_status_name(RunStatus::running), "/");
  write_scalar_attr(h5, root, "duration", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, header.duration, "/");
  write_string_attr(h5, root, "model", header.model_text, "/");
  write_string_attr(h5, root, "model_file", header.model_file, "/");

  // The top-level groups always exist, so readers need not test for them.
  w.populations = create_group(h5, root, "populations", "/populations");
  w.spikes = create_group(h5, root, "spikes", "/spikes");
  w.pathways = create_group(h5, root, "pathways", "/pathways");
  w.traces = create_group(h5, root, "traces", "/traces");
  h5.check(H5Fflush(root, H5F_SCOPE_GLOBAL), "flush", path);
}

RunWriter::~RunWriter() {
  if (!impl_ || impl_->closed) return;
  // Not finished (an exception is unwinding, or the caller forgot): keep what was
  // recorded, leave status "running" so readers can tell, and never throw.
  try {
    impl_->write_all_buffers();
  } catch (...) {
  }
  impl_->spike_streams.clear();
  impl_->trace_streams.clear();
  impl_->weight_streams.clear();
}

void RunWriter::describe_population(const std::string& name, std::uint32_t size, std::string_view neuron_model) {
  Impl& w = *impl_;
  w.require_open("describe_population");
  if (!is_valid_link_name(name))
    throw UserError(fmt::format("population name '{}' cannot be stored in a run file: names must be non-empty, "
                                "not '.', and contain no '/'",
                                name));
  const std::string path = "/populations/" + name;
  if (w.population_sizes.contains(name))
    throw InternalError(fmt::format("run file '{}': population '{}' described twice", w.h5.path(), name));
  H5Handle group = create_group(w.h5, w.populations.get(), name, path);
  write_scalar_attr(w.h5, group.get(), "size", H5T_STD_U32LE, H5T_NATIVE_UINT32, size, path);
  write_string_attr(w.h5, group.get(), "neuron_model", neuron_model, path);
  w.population_sizes.emplace(name, size);
}

int RunWriter::open_spikes(const std::string& population) {
  Impl& w = *impl_;
  w.require_open("open_spikes");
  // Requiring the description first means every file can be checked for
  // neuron < size without outside knowledge.
  const auto described = w.population_sizes.find(population);
  if (described == w.population_sizes.end())
    throw InternalError(fmt::format("run file '{}': open_spikes('{}') before describe_population", w.h5.path(),
                                    population));
  for (const auto& s : w.spike_streams)
    if (s.population == population)
      throw InternalError(fmt::format("run file '{}': spikes of '{}' opened twice", w.h5.path(), population));

  SpikeStream s;
  s.population = population;
  s.size = described->second;
  const std::string group_path = "/spikes/" + population;
  s.time_path = group_path + "/time";
  s.neuron_path = group_path + "/neuron";
  H5Handle group = create_group(w.h5, w.spikes.get(), population, group_path);
  s.time = create_growing_1d(w.h5, group.get(), "time", H5T_IEEE_F64LE, s.time_path);
  write_string_attr(w.h5, s.time.get(), "units", "s", s.time_path);
  s.neuron = create_growing_1d(w.h5, group.get(), "neuron", H5T_STD_U32LE, s.neuron_path);
  w.spike_streams.push_back(std::move(s));
  return static_cast<int>(w.spike_streams.size() - 1);
}

void RunWriter::append_spikes(int stream, std::span<const double> times, std::span<const std::uint32_t> neurons) {
  Impl& w = *impl_;
  w.require_open("append_spikes");
  if (stream < 0 || static_cast<std::size_t>(stream) >= w.spike_streams.size())
    throw InternalError(fmt::format("run file '{}': no spike stream {}", w.h5.path(), stream));
  SpikeStream& s = w.spike_streams[static_cast<std::size_t>(stream)];
  if (times.size() != neurons.size())
    throw InternalError(fmt::format("run file '{}': {} spike times but {} neuron indices for '{}'", w.h5.path(),
                                    times.size(), neurons.size(), s.population));
  // The layout promises ascending times and valid indices; checking here costs one
  // comparison per spike and catches a kernel bug where it happens.
  for (std::size_t i = 0; i < times.size(); ++i) {
    if (!(times[i] >= s.last_time) || !std::isfinite(times[i]))
      throw InternalError(fmt::format("run file '{}': spike of '{}' neuron {} at t = {} s is not finite or comes "
                                      "before the previous spike at {} s",
                                      w.h5.path(), s.population, neurons[i], times[i], s.last_time));
    if (neurons[i] >= s.size)
      throw InternalError(fmt::format("run file '{}': spike of '{}' at t = {} s names neuron {}, but the "
                                      "population has {} neurons",
                                      w.h5.path(), s.population, times[i], neurons[i], s.size));
    s.last_time = times[i];
  }
  s.buffered_times.insert(s.buffered_times.end(), times.begin(), times.end());
  s.buffered_neurons.insert(s.buffered_neurons.end(), neurons.begin(), neurons.end());
  if (s.buffered_times.size() >= kBufferedValues) w.write_spike_buffer(s);
}

void RunWriter::write_pathway(const PathwayRecord& pathway) {
  Impl& w = *impl_;
  w.require_open("write_pathway");
  if (!is_valid_link_name(pathway.name))
    throw UserError(fmt::format("pathway name '{}' cannot be stored in a run file: names must be non-empty, "
                                "not '.', and contain no '/'",
                                pathway.name));
  const std::size_t n = pathway.pre.size();
  if (pathway.post.size() != n || pathway.delay.size() != n || pathway.weight.size() != n)
    throw InternalError(fmt::format("run file '{}': pathway '{}' has arrays of different lengths (pre {}, post {}, "
                                    "delay {}, weight {})",
                                    w.h5.path(), pathway.name, n, pathway.post.size(), pathway.delay.size(),
                                    pathway.weight.size()));
  const std::string path = "/pathways/" + pathway.name;
  if (H5Lexists(w.pathways.get(), pathway.name.c_str(), H5P_DEFAULT) > 0)
    throw InternalError(fmt::format("run file '{}': pathway '{}' written twice", w.h5.path(), pathway.name));
  H5Handle group = create_group(w.h5, w.pathways.get(), pathway.name, path);
  const hid_t g = group.get();
  write_string_attr(w.h5, g, "source", pathway.source, path);
  write_string_attr(w.h5, g, "target", pathway.target, path);
  write_string_attr(w.h5, g, "rule", pathway.rule, path);
  write_string_attr(w.h5, g, "device", pathway.device, path);
  write_string_attr(w.h5, g, "receptor", pathway.receptor, path);
  write_fixed_1d(w.h5, g, "pre", H5T_STD_U32LE, H5T_NATIVE_UINT32, pathway.pre, "", path + "/pre");
  write_fixed_1d(w.h5, g, "post", H5T_STD_U32LE, H5T_NATIVE_UINT32, pathway.post, "", path + "/post");
  write_fixed_1d(w.h5, g, "delay", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, pathway.delay, "s", path + "/delay");
  write_fixed_1d(w.h5, g, "weight", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, pathway.weight, "A", path + "/weight");
}

void RunWriter::write_devices(const DeviceRecord& r) {
  Impl& w = *impl_;
  w.require_open("write_devices");
  if (!is_valid_link_name(r.pathway))
    throw UserError(fmt::format("pathway name '{}' cannot be stored in a run file", r.pathway));
  const std::size_t devices = r.conductance.size(), synapses = r.requested.size();
  if (r.programmed.size() != devices || r.pulses.size() != devices || r.energy.size() != devices ||
      r.health.size() != devices || r.realised.size() != synapses || r.target_weight.size() != synapses ||
      r.initial_weight.size() != synapses || devices != synapses * r.devices_per_synapse)
    throw InternalError(fmt::format("run file '{}': device arrays of pathway '{}' have inconsistent lengths",
                                    w.h5.path(), r.pathway));
  H5Handle root = open_or_create_group(w.h5, w.file.get(), "devices", "/devices");
  const std::string path = "/devices/" + r.pathway;
  H5Handle group = create_group(w.h5, root.get(), r.pathway, path);
  const hid_t g = group.get();
  write_string_attr(w.h5, g, "device_model", r.device_model, path);
  write_string_attr(w.h5, g, "layout", r.layout, path);
  write_string_attr(w.h5, g, "rounding", r.rounding, path);
  write_string_attr(w.h5, g, "preset", r.preset, path);
  write_string_attr(w.h5, g, "preset_text", r.preset_text, path);
  write_scalar_attr(w.h5, g, "gain", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.gain, path);
  write_string_attr(w.h5, g, "gain_units", "V", path);
  const std::uint32_t per = r.devices_per_synapse;
  write_scalar_attr(w.h5, g, "devices_per_synapse", H5T_STD_U32LE, H5T_NATIVE_UINT32, per, path);
  const std::uint64_t failed[3] = {r.initial_failed, r.initial_out_of_range, r.initial_unresponsive};
  write_scalar_attr(w.h5, g, "initial_failed", H5T_STD_U64LE, H5T_NATIVE_UINT64, failed[0], path);
  write_scalar_attr(w.h5, g, "initial_out_of_range", H5T_STD_U64LE, H5T_NATIVE_UINT64, failed[1], path);
  write_scalar_attr(w.h5, g, "initial_unresponsive", H5T_STD_U64LE, H5T_NATIVE_UINT64, failed[2], path);
  write_fixed_1d(w.h5, g, "conductance", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.conductance, "S", path + "/conductance");
  write_fixed_1d(w.h5, g, "programmed", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.programmed, "S", path + "/programmed");
  write_fixed_1d(w.h5, g, "pulses", H5T_STD_U32LE, H5T_NATIVE_UINT32, r.pulses, "", path + "/pulses");
  write_fixed_1d(w.h5, g, "energy", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.energy, "J", path + "/energy");
  write_fixed_1d(w.h5, g, "health", H5T_STD_U8LE, H5T_NATIVE_UINT8, r.health, "", path + "/health");
  write_fixed_1d(w.h5, g, "requested", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.requested, "A", path + "/requested");
  write_fixed_1d(w.h5, g, "realised", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.realised, "A", path + "/realised");
  write_fixed_1d(w.h5, g, "target_weight", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.target_weight, "A",
                 path + "/target_weight");
  write_fixed_1d(w.h5, g, "initial_weight", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.initial_weight, "A",
                 path + "/initial_weight");
}

int RunWriter::open_trace(const std::string& population, std::string_view variable, Dimension unit,
                          std::span<const std::uint32_t> neurons) {
  Impl& w = *impl_;
  w.require_open("open_trace");
  const auto described = w.population_sizes.find(population);
  if (described == w.population_sizes.end())
    throw InternalError(fmt::format("run file '{}': open_trace('{}', '{}') before describe_population",
                                    w.h5.path(), population, variable));
  if (!is_valid_link_name(variable))
    throw UserError(fmt::format("trace variable name '{}' cannot be stored in a run file: names must be "
                                "non-empty, not '.', and contain no '/'",
                                variable));
  for (std::uint32_t n : neurons)
    if (n >= described->second)
      throw InternalError(fmt::format("run file '{}': trace '{}' of '{}' names neuron {}, but the population has "
                                      "{} neurons",
                                      w.h5.path(), variable, population, n, described->second));

  TraceStream t;
  t.path = fmt::format("/traces/{}/{}", population, variable);
  t.width = neurons.size();
  H5Handle population_group =
      open_or_create_group(w.h5, w.traces.get(), population, "/traces/" + population);
  const std::string variable_name(variable);
  if (H5Lexists(population_group.get(), variable_name.c_str(), H5P_DEFAULT) > 0)
    throw InternalError(fmt::format("run file '{}': trace '{}' opened twice", w.h5.path(), t.path));
  H5Handle group = create_group(w.h5, population_group.get(), variable_name, t.path);

  t.time = create_growing_1d(w.h5, group.get(), "time", H5T_IEEE_F64LE, t.path + "/time");
  write_string_attr(w.h5, t.time.get(), "units", "s", t.path + "/time");

  // Chunks hold whole rows where possible (a row is one sample time), at most
  // kChunkElements values. A trace of zero neurons still needs positive chunk
  // sizes, so its column dimension is left unlimited.
  const hsize_t width = t.width;
  const hsize_t chunk_columns = std::clamp<hsize_t>(width, 1, kChunkElements);
  const hsize_t dims[2] = {0, width};
  const hsize_t max_dims[2] = {H5S_UNLIMITED, width > 0 ? width : H5S_UNLIMITED};
  const hsize_t chunk[2] = {std::max<hsize_t>(1, kChunkElements / chunk_columns), chunk_columns};
  t.value = create_chunked_dataset(w.h5, group.get(), "value", H5T_IEEE_F64LE, 2, dims, max_dims, chunk,
                                   t.path + "/value");
  write_string_attr(w.h5, t.value.get(), "units", si_symbol(unit), t.path + "/value");

  write_fixed_1d(w.h5, group.get(), "neuron", H5T_STD_U32LE, H5T_NATIVE_UINT32, neurons, "", t.path + "/neuron");
  w.trace_streams.push_back(std::move(t));
  return static_cast<int>(w.trace_streams.size() - 1);
}

void RunWriter::append_trace_row(int trace, double time, std::span<const double> values) {
  Impl& w = *impl_;
  w.require_open("append_trace_row");
  if (trace < 0 || static_cast<std::size_t>(trace) >= w.trace_streams.size())
    throw InternalError(fmt::format("run file '{}': no trace {}", w.h5.path(), trace));
  TraceStream& t = w.trace_streams[static_cast<std::size_t>(trace)];
  if (values.size() != t.width)
    throw InternalError(fmt::format("run file '{}': trace '{}' has {} neurons but a row of {} values at t = {} s",
                                    w.h5.path(), t.path, t.width, values.size(), time));
  if (!(time >= t.last_time) || !std::isfinite(time))
    throw InternalError(fmt::format("run file '{}': trace '{}' sample at t = {} s is not finite or comes before "
                                    "the previous sample at {} s",
                                    w.h5.path(), t.path, time, t.last_time));
  t.last_time = time;
  t.buffered_times.push_back(time);
  t.buffered_values.insert(t.buffered_values.end(), values.begin(), values.end());
  // At least one row per write, so wide traces still make progress.
  if (t.buffered_values.size() >= kBufferedValues || t.buffered_times.size() >= kBufferedValues)
    w.write_trace_buffer(t);
}

int RunWriter::open_weights(const std::string& pathway, std::span<const std::uint64_t> synapses) {
  Impl& w = *impl_;
  w.require_open("open_weights");
  if (!is_valid_link_name(pathway))
    throw UserError(fmt::format("pathway name '{}' cannot be stored in a run file", pathway));
  if (!w.weights.valid()) w.weights = open_or_create_group(w.h5, w.file.get(), "weights", "/weights");
  if (H5Lexists(w.weights.get(), pathway.c_str(), H5P_DEFAULT) > 0)
    throw InternalError(fmt::format("run file '{}': weights of pathway '{}' opened twice", w.h5.path(), pathway));
  WeightStream ws;
  ws.path = "/weights/" + pathway;
  ws.width = synapses.size();
  H5Handle group = create_group(w.h5, w.weights.get(), pathway, ws.path);
  std::vector<std::uint32_t> ids(synapses.begin(), synapses.end());
  write_fixed_1d(w.h5, group.get(), "synapse", H5T_STD_U32LE, H5T_NATIVE_UINT32, std::span<const std::uint32_t>(ids), "",
                 ws.path + "/synapse");
  ws.sample_time = create_growing_1d(w.h5, group.get(), "time", H5T_IEEE_F64LE, ws.path + "/time");
  write_string_attr(w.h5, ws.sample_time.get(), "units", "s", ws.path + "/time");
  ws.sample_value = create_growing_rows(w.h5, group.get(), "value", H5T_IEEE_F32LE, ws.width, ws.path + "/value");
  write_string_attr(w.h5, ws.sample_value.get(), "units", "A", ws.path + "/value");

  const std::string c = ws.path + "/changes";
  H5Handle changes = create_group(w.h5, group.get(), "changes", c);
  ws.change_time = create_growing_1d(w.h5, changes.get(), "time", H5T_IEEE_F64LE, c + "/time");
  write_string_attr(w.h5, ws.change_time.get(), "units", "s", c + "/time");
  ws.change_synapse = create_growing_1d(w.h5, changes.get(), "synapse", H5T_STD_U32LE, c + "/synapse");
  ws.change_requested = create_growing_1d(w.h5, changes.get(), "requested", H5T_IEEE_F64LE, c + "/requested");
  write_string_attr(w.h5, ws.change_requested.get(), "units", "A", c + "/requested");
  ws.change_realised = create_growing_1d(w.h5, changes.get(), "realised", H5T_IEEE_F64LE, c + "/realised");
  write_string_attr(w.h5, ws.change_realised.get(), "units", "A", c + "/realised");
  ws.change_route = create_growing_1d(w.h5, changes.get(), "route", H5T_STD_U8LE, c + "/route");
  write_string_attr(w.h5, ws.change_route.get(), "meaning", "0 not realised, 1 direct, 2 differential partner",
                    c + "/route");

  const std::string sp = ws.path + "/snapshots";
  H5Handle snapshots = create_group(w.h5, group.get(), "snapshots", sp);
  ws.snapshot_time = create_growing_1d(w.h5, snapshots.get(), "time", H5T_IEEE_F64LE, sp + "/time");
  write_string_attr(w.h5, ws.snapshot_time.get(), "units", "s", sp + "/time");
  w.weight_streams.push_back(std::move(ws));
  // The snapshot width (every synapse of the pathway) is known at the first snapshot.
  return static_cast<int>(w.weight_streams.size() - 1);
}

namespace {
WeightStream& weight_stream(std::vector<WeightStream>& streams, int id, const std::string& file) {
  if (id < 0 || static_cast<std::size_t>(id) >= streams.size())
    throw InternalError(fmt::format("run file '{}': no weight recorder {}", file, id));
  return streams[static_cast<std::size_t>(id)];
}
}  // namespace

void RunWriter::append_weight_sample(int recorder, double time, std::span<const double> weights) {
  Impl& w = *impl_;
  w.require_open("append_weight_sample");
  WeightStream& ws = weight_stream(w.weight_streams, recorder, w.h5.path());
  if (weights.size() != ws.width)
    throw InternalError(fmt::format("run file '{}': {} records {} synapses, got {}", w.h5.path(), ws.path, ws.width,
                                    weights.size()));
  ws.buffered_times.push_back(time);
  for (double x : weights) ws.buffered_values.push_back(static_cast<float>(x));
  if (ws.buffered_values.size() + ws.change_times.size() >= kBufferedValues) w.write_weight_buffers(ws);
}

void RunWriter::append_weight_changes(int recorder, std::span<const WeightChange> changes) {
  Impl& w = *impl_;
  w.require_open("append_weight_changes");
  WeightStream& ws = weight_stream(w.weight_streams, recorder, w.h5.path());
  for (const WeightChange& c : changes) {
    ws.change_times.push_back(c.time);
    ws.change_synapses.push_back(static_cast<std::uint32_t>(c.synapse));
    ws.change_requested_values.push_back(c.requested);
    ws.change_realised_values.push_back(c.realised);
    ws.change_routes.push_back(c.route);
  }
  if (ws.buffered_values.size() + ws.change_times.size() >= kBufferedValues) w.write_weight_buffers(ws);
}

void RunWriter::append_weight_snapshot(int recorder, double time, std::span<const double> weights) {
  Impl& w = *impl_;
  w.require_open("append_weight_snapshot");
  WeightStream& ws = weight_stream(w.weight_streams, recorder, w.h5.path());
  const std::string sp = ws.path + "/snapshots";
  if (!ws.snapshot_value.valid()) {
    H5Handle group = w.h5.checked(detail::group_handle(H5Gopen2(w.file.get(), sp.c_str(), H5P_DEFAULT)), "open group", sp);
    ws.snapshot_value = create_growing_rows(w.h5, group.get(), "value", H5T_IEEE_F32LE, weights.size(), sp + "/value");
    write_string_attr(w.h5, ws.snapshot_value.get(), "units", "A", sp + "/value");
  }
  std::vector<float> row(weights.begin(), weights.end());
  append_rows(w.h5, ws.snapshot_time.get(), H5T_NATIVE_DOUBLE, &time, ws.snapshots_written, 1, 1, 1, sp + "/time");
  append_rows(w.h5, ws.snapshot_value.get(), H5T_NATIVE_FLOAT, row.data(), ws.snapshots_written, 1, row.size(), 2,
              sp + "/value");
  ++ws.snapshots_written;
}

void RunWriter::write_learning(const LearningRecord& r) {
  Impl& w = *impl_;
  w.require_open("write_learning");
  const std::string path = "/pathways/" + r.pathway;
  if (H5Lexists(w.pathways.get(), r.pathway.c_str(), H5P_DEFAULT) <= 0)
    throw InternalError(fmt::format("run file '{}': learning of pathway '{}' before the pathway", w.h5.path(), r.pathway));
  H5Handle group = w.h5.checked(detail::group_handle(H5Gopen2(w.pathways.get(), r.pathway.c_str(), H5P_DEFAULT)),
                                "open group", path);
  const hid_t g = group.get();
  write_scalar_attr(w.h5, g, "updates", H5T_STD_U64LE, H5T_NATIVE_UINT64, r.updates, path);
  write_scalar_attr(w.h5, g, "pulses", H5T_STD_U64LE, H5T_NATIVE_UINT64, r.pulses, path);
  write_scalar_attr(w.h5, g, "routed_partner", H5T_STD_U64LE, H5T_NATIVE_UINT64, r.routed_partner, path);
  write_scalar_attr(w.h5, g, "unrealisable", H5T_STD_U64LE, H5T_NATIVE_UINT64, r.unrealisable, path);
  write_scalar_attr(w.h5, g, "sum_requested", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.sum_requested, path);
  write_scalar_attr(w.h5, g, "sum_realised", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.sum_realised, path);
  const double rms = r.updates ? std::sqrt(r.sum_squared_error / static_cast<double>(r.updates)) : 0.0;
  write_scalar_attr(w.h5, g, "rms_update_error", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, rms, path);
  write_string_attr(w.h5, g, "learning_units", "A (sums and rms error)", path);
  write_fixed_1d(w.h5, g, "requested", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.requested, "A", path + "/requested");
  write_fixed_1d(w.h5, g, "realised", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.realised, "A", path + "/realised");
  write_fixed_1d(w.h5, g, "final_weight", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, r.final_weight, "A", path + "/final_weight");
}

void RunWriter::flush() {
  Impl& w = *impl_;
  w.require_open("flush");
  w.write_all_buffers();
  w.h5.check(H5Fflush(w.file.get(), H5F_SCOPE_GLOBAL), "flush", w.h5.path());
}

void RunWriter::finish(RunStatus status, double model_time_reached, std::string_view failure) {
  Impl& w = *impl_;
  w.require_open("finish");
  // Marked closed first: if anything below throws, the destructor must not try again.
  w.closed = true;
  w.write_all_buffers();
  const hid_t root = w.file.get();
  write_string_attr(w.h5, root, "status", run_status_name(status), "/");
  write_scalar_attr(w.h5, root, "time_reached", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, model_time_reached, "/");
  if (!failure.empty()) write_string_attr(w.h5, root, "failure", failure, "/");
  w.spike_streams.clear();
  w.trace_streams.clear();
  w.weight_streams.clear();
  w.weights.reset();
  w.populations.reset();
  w.spikes.reset();
  w.pathways.reset();
  w.traces.reset();
  w.h5.check(H5Fflush(root, H5F_SCOPE_GLOBAL), "flush", w.h5.path());
  if (!w.file.close())
    throw InternalError(fmt::format("run file '{}': cannot close file: {}", w.h5.path(), detail::hdf5_error_text()));
}

}  // namespace nvsyn
