#include "record/run_writer.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <ctime>
#include <limits>
#include <map>

#include "core/error.hpp"
#include "record/detail/hdf5_handle.hpp"

namespace nvsyn {
namespace {

using detail::H5Handle;

constexpr int kLayoutVersion = 1;

// 16384 elements is 128 KiB of float64: large enough for deflate to work well,
// small enough to sit in HDF5's default 1 MiB chunk cache many times over.
constexpr hsize_t kChunkElements = 16384;
// Appends are buffered up to this many values per stream before they are written,
// which bounds memory per stream (~0.8 MiB for spikes) whatever the run length.
constexpr std::size_t kBufferedValues = 65536;
constexpr unsigned kDeflateLevel = 4;

std::string_view si_symbol(Dimension d) {
  switch (d) {
    case Dimension::dimensionless: return "1";
    case Dimension::time: return "s";
    case Dimension::voltage: return "V";
    case Dimension::current: return "A";
    case Dimension::conductance: return "S";
    case Dimension::capacitance: return "F";
    case Dimension::resistance: return "Ohm";
    case Dimension::frequency: return "Hz";
    case Dimension::energy: return "J";
    case Dimension::charge: return "C";
  }
  return "1";
}

std::string utc_now_iso8601() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm utc{};
  gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

// HDF5's message for a failed create embeds the operating system's reason among
// its own flags ("... error message = 'No such file or directory', flags = ...");
// the user needs only the reason.
std::string creation_failure_reason() {
  const std::string text = detail::hdf5_error_text();
  constexpr std::string_view marker = "error message = '";
  const std::size_t start = text.find(marker);
  if (start == std::string::npos) return text;
  const std::size_t from = start + marker.size();
  const std::size_t end = text.find('\'', from);
  return end == std::string::npos ? text : text.substr(from, end - from);
}

// A name becomes one HDF5 link: '/' would silently create nested groups.
bool is_valid_link_name(std::string_view name) {
  return !name.empty() && name != "." && name.find('/') == std::string_view::npos;
}

class Hdf5Context {
 public:
  explicit Hdf5Context(std::string path) : path_(std::move(path)) {}

  [[noreturn]] void fail(std::string_view action, std::string_view object) const {
    throw InternalError(fmt::format("run file '{}': cannot {} '{}': {}", path_, action, object,
                                    detail::hdf5_error_text()));
  }
  H5Handle checked(H5Handle handle, std::string_view action, std::string_view object) const {
    if (!handle.valid()) fail(action, object);
    return handle;
  }
  void check(herr_t status, std::string_view action, std::string_view object) const {
    if (status < 0) fail(action, object);
  }
  const std::string& path() const { return path_; }

 private:
  std::string path_;
};

void write_string_attr(const Hdf5Context& h5, hid_t object, const char* name, std::string_view value,
                       std::string_view object_path) {
  const std::string what = fmt::format("{}@{}", object_path, name);
  H5Handle type = h5.checked(detail::utf8_string_type(), "create string type for", what);
  H5Handle space = h5.checked(detail::space_handle(H5Screate(H5S_SCALAR)), "create dataspace for", what);
  // Overwrite in place when the attribute exists (status is written twice).
  H5Handle attr =
      H5Aexists(object, name) > 0
          ? detail::attribute_handle(H5Aopen(object, name, H5P_DEFAULT))
          : detail::attribute_handle(H5Acreate2(object, name, type.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT));
  attr = h5.checked(std::move(attr), "create attribute", what);
  const std::string text(value);  // HDF5 needs a NUL-terminated string
  const char* pointer = text.c_str();
  h5.check(H5Awrite(attr.get(), type.get(), &pointer), "write attribute", what);
}

template <typename T>
void write_scalar_attr(const Hdf5Context& h5, hid_t object, const char* name, hid_t file_type, hid_t memory_type,
                       T value, std::string_view object_path) {
  const std::string what = fmt::format("{}@{}", object_path, name);
  H5Handle attr;
  if (H5Aexists(object, name) > 0) {
    attr = detail::attribute_handle(H5Aopen(object, name, H5P_DEFAULT));
  } else {
    H5Handle space = h5.checked(detail::space_handle(H5Screate(H5S_SCALAR)), "create dataspace for", what);
    attr = detail::attribute_handle(H5Acreate2(object, name, file_type, space.get(), H5P_DEFAULT, H5P_DEFAULT));
  }
  attr = h5.checked(std::move(attr), "create attribute", what);
  h5.check(H5Awrite(attr.get(), memory_type, &value), "write attribute", what);
}

// Groups that list their children in creation order, so a reader can present
// populations and pathways in model-file order rather than alphabetically.
H5Handle create_group(const Hdf5Context& h5, hid_t parent, const std::string& name, std::string_view path) {
  H5Handle gcpl = h5.checked(detail::plist_handle(H5Pcreate(H5P_GROUP_CREATE)), "create property list for", path);
  h5.check(H5Pset_link_creation_order(gcpl.get(), H5P_CRT_ORDER_TRACKED | H5P_CRT_ORDER_INDEXED),
           "set creation order for", path);
  return h5.checked(detail::group_handle(H5Gcreate2(parent, name.c_str(), H5P_DEFAULT, gcpl.get(), H5P_DEFAULT)),
                    "create group", path);
}

H5Handle open_or_create_group(const Hdf5Context& h5, hid_t parent, const std::string& name, std::string_view path) {
  if (H5Lexists(parent, name.c_str(), H5P_DEFAULT) > 0)
    return h5.checked(detail::group_handle(H5Gopen2(parent, name.c_str(), H5P_DEFAULT)), "open group", path);
  return create_group(h5, parent, name, path);
}

// Chunked, shuffled and deflated. `dims` are the initial sizes, `max_dims` may hold
// H5S_UNLIMITED. Chunk sizes must be positive even where a dimension is zero.
H5Handle create_chunked_dataset(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, int rank,
                                const hsize_t* dims, const hsize_t* max_dims, const hsize_t* chunk,
                                std::string_view path) {
  H5Handle space = h5.checked(detail::space_handle(H5Screate_simple(rank, dims, max_dims)), "create dataspace for", path);
  H5Handle dcpl = h5.checked(detail::plist_handle(H5Pcreate(H5P_DATASET_CREATE)), "create property list for", path);
  h5.check(H5Pset_chunk(dcpl.get(), rank, chunk), "set chunking for", path);
  h5.check(H5Pset_shuffle(dcpl.get()), "set shuffle filter for", path);
  h5.check(H5Pset_deflate(dcpl.get(), kDeflateLevel), "set deflate filter for", path);
  return h5.checked(detail::dataset_handle(H5Dcreate2(parent, name, file_type, space.get(), H5P_DEFAULT,
                                                      dcpl.get(), H5P_DEFAULT)),
                    "create dataset", path);
}

H5Handle create_growing_1d(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type,
                           std::string_view path) {
  const hsize_t dims[1] = {0};
  const hsize_t max_dims[1] = {H5S_UNLIMITED};
  const hsize_t chunk[1] = {kChunkElements};
  return create_chunked_dataset(h5, parent, name, file_type, 1, dims, max_dims, chunk, path);
}

// A 1-D dataset whose whole content is known now. HDF5 cannot chunk an empty
// fixed-size dataset, so an empty one is stored contiguous (and uncompressed).
template <typename T>
void write_fixed_1d(const Hdf5Context& h5, hid_t parent, const char* name, hid_t file_type, hid_t memory_type,
                    std::span<const T> data, std::string_view units, std::string_view path) {
  const hsize_t n = data.size();
  H5Handle dataset;
  if (n == 0) {
    H5Handle space = h5.checked(detail::space_handle(H5Screate_simple(1, &n, nullptr)), "create dataspace for", path);
    dataset = h5.checked(detail::dataset_handle(H5Dcreate2(parent, name, file_type, space.get(), H5P_DEFAULT,
                                                           H5P_DEFAULT, H5P_DEFAULT)),
                         "create dataset", path);
  } else {
    const hsize_t chunk = std::min(n, kChunkElements);
    dataset = create_chunked_dataset(h5, parent, name, file_type, 1, &n, &n, &chunk, path);
    h5.check(H5Dwrite(dataset.get(), memory_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, data.data()), "write dataset",
             path);
  }
  if (!units.empty()) write_string_attr(h5, dataset.get(), "units", units, path);
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

  void write_all_buffers() {
    for (auto& s : spike_streams) write_spike_buffer(s);
    for (auto& t : trace_streams) write_trace_buffer(t);
  }
};

RunWriter::RunWriter(const std::string& path, const RunHeader& header) : impl_(std::make_unique<Impl>(path)) {
  detail::silence_hdf5_error_printing();
  Impl& w = *impl_;

  // Bounds at the 1.8 format: dense attribute storage lets the model text exceed
  // the 64 KiB limit of compact attributes, while HDF5 1.8 readers (older MATLAB)
  // can still open the file.
  H5Handle fapl = detail::plist_handle(H5Pcreate(H5P_FILE_ACCESS));
  if (!fapl.valid() || H5Pset_libver_bounds(fapl.get(), H5F_LIBVER_V18, H5F_LIBVER_V18) < 0)
    throw UserError(fmt::format("cannot create run file '{}': {}", path, creation_failure_reason()));
  w.file = detail::file_handle(H5Fcreate(path.c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, fapl.get()));
  if (!w.file.valid())
    throw UserError(fmt::format("cannot create run file '{}': {}", path, creation_failure_reason()));

  const Hdf5Context& h5 = w.h5;
  const hid_t root = w.file.get();
  write_string_attr(h5, root, "layout", "nvsyn-run", "/");
  write_scalar_attr(h5, root, "layout_version", H5T_STD_I32LE, H5T_NATIVE_INT, kLayoutVersion, "/");
  write_string_attr(h5, root, "nvsyn_version", header.nvsyn_version, "/");
  write_string_attr(h5, root, "created", utc_now_iso8601(), "/");
  write_scalar_attr(h5, root, "seed", H5T_STD_U64LE, H5T_NATIVE_UINT64, header.seed, "/");
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

void RunWriter::flush() {
  Impl& w = *impl_;
  w.require_open("flush");
  w.write_all_buffers();
  w.h5.check(H5Fflush(w.file.get(), H5F_SCOPE_GLOBAL), "flush", w.h5.path());
}

void RunWriter::finish(RunStatus status, double model_time_reached) {
  Impl& w = *impl_;
  w.require_open("finish");
  // Marked closed first: if anything below throws, the destructor must not try again.
  w.closed = true;
  w.write_all_buffers();
  const hid_t root = w.file.get();
  write_string_attr(w.h5, root, "status", run_status_name(status), "/");
  write_scalar_attr(w.h5, root, "time_reached", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, model_time_reached, "/");
  w.spike_streams.clear();
  w.trace_streams.clear();
  w.populations.reset();
  w.spikes.reset();
  w.pathways.reset();
  w.traces.reset();
  w.h5.check(H5Fflush(root, H5F_SCOPE_GLOBAL), "flush", w.h5.path());
  if (!w.file.close())
    throw InternalError(fmt::format("run file '{}': cannot close file: {}", w.h5.path(), detail::hdf5_error_text()));
}

}  // namespace nvsyn
