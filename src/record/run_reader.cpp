#include "record/run_reader.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <filesystem>
#include <span>
#include <system_error>

#include "core/error.hpp"
#include "core/input_file.hpp"
#include "record/detail/dataset_size.hpp"
#include "record/detail/hdf5_handle.hpp"

namespace nvsyn {
namespace {

using detail::H5Handle;

constexpr std::string_view kLayoutName = "nvsyn-run";
constexpr int kLayoutVersion = 1;

// Everything a reader can trip over is in the user's file, so failures are
// UserErrors that name the file and the object inside it.
class FileContext {
 public:
  explicit FileContext(std::string path) : path_(std::move(path)) {}

  [[noreturn]] void fail(std::string_view problem) const {
    throw UserError(fmt::format("run file '{}': {}", path_, problem));
  }
  [[noreturn]] void fail_hdf5(std::string_view action, std::string_view object) const {
    fail(fmt::format("cannot {} '{}': {}", action, object, detail::hdf5_error_text()));
  }
  H5Handle checked(H5Handle handle, std::string_view action, std::string_view object) const {
    if (!handle.valid()) fail_hdf5(action, object);
    return handle;
  }
  void check(herr_t status, std::string_view action, std::string_view object) const {
    if (status < 0) fail_hdf5(action, object);
  }
  const std::string& path() const { return path_; }

 private:
  std::string path_;
};

bool has_link(hid_t group, const std::string& name) {
  const htri_t exists = H5Lexists(group, name.c_str(), H5P_DEFAULT);
  if (exists < 0) H5Eclear2(H5E_DEFAULT);
  return exists > 0;
}

H5Handle open_group(const FileContext& file, hid_t parent, const std::string& name, std::string_view path) {
  if (!has_link(parent, name)) file.fail(fmt::format("missing group '{}'", path));
  return file.checked(detail::group_handle(H5Gopen2(parent, name.c_str(), H5P_DEFAULT)), "open group", path);
}

H5Handle open_dataset(const FileContext& file, hid_t parent, const std::string& name, std::string_view path) {
  if (!has_link(parent, name)) file.fail(fmt::format("missing dataset '{}'", path));
  return file.checked(detail::dataset_handle(H5Dopen2(parent, name.c_str(), H5P_DEFAULT)), "open dataset", path);
}

// Names of a group's children, in creation order when the writer tracked it
// (nvsyn's writer does) and in name order otherwise.
std::vector<std::string> child_names(const FileContext& file, hid_t group, std::string_view path) {
  H5G_info_t info{};
  file.check(H5Gget_info(group, &info), "list group", path);
  H5_index_t index = H5_INDEX_NAME;
  H5Handle gcpl = detail::plist_handle(H5Gget_create_plist(group));
  unsigned order_flags = 0;
  if (gcpl.valid() && H5Pget_link_creation_order(gcpl.get(), &order_flags) >= 0 &&
      (order_flags & H5P_CRT_ORDER_INDEXED) != 0)
    index = H5_INDEX_CRT_ORDER;
  H5Eclear2(H5E_DEFAULT);

  std::vector<std::string> names;
  names.reserve(std::min<hsize_t>(info.nlinks, 1024));  // a count stated by the file: grow as names are read
  for (hsize_t i = 0; i < info.nlinks; ++i) {
    const ssize_t length = H5Lget_name_by_idx(group, ".", index, H5_ITER_INC, i, nullptr, 0, H5P_DEFAULT);
    if (length < 0) file.fail_hdf5("list group", path);
    std::string name(static_cast<std::size_t>(length) + 1, '\0');
    if (H5Lget_name_by_idx(group, ".", index, H5_ITER_INC, i, name.data(), name.size(), H5P_DEFAULT) < 0)
      file.fail_hdf5("list group", path);
    name.resize(static_cast<std::size_t>(length));
    names.push_back(std::move(name));
  }
  return names;
}

H5Handle open_attribute(const FileContext& file, hid_t object, const char* name, std::string_view what) {
  if (H5Aexists(object, name) <= 0) {
    H5Eclear2(H5E_DEFAULT);
    file.fail(fmt::format("missing attribute '{}'", what));
  }
  return file.checked(detail::attribute_handle(H5Aopen(object, name, H5P_DEFAULT)), "open attribute", what);
}

// Accepts variable- and fixed-length strings, so files touched by other tools
// (h5py writes fixed-length strings from numpy bytes) still read.
std::string read_string_attr(const FileContext& file, hid_t object, const char* name, std::string_view object_path) {
  const std::string what = fmt::format("{}@{}", object_path, name);
  H5Handle attr = open_attribute(file, object, name, what);
  if (auto problem = detail::single_value_attribute_problem(attr.get()))
    file.fail(fmt::format("attribute '{}' {}", what, *problem));
  H5Handle stored = file.checked(detail::type_handle(H5Aget_type(attr.get())), "get type of", what);
  if (H5Tget_class(stored.get()) != H5T_STRING) file.fail(fmt::format("attribute '{}' is not a string", what));

  if (H5Tis_variable_str(stored.get()) > 0) {
    H5Handle memory = file.checked(detail::type_handle(H5Tcopy(H5T_C_S1)), "make string type for", what);
    H5Tset_size(memory.get(), H5T_VARIABLE);
    H5Tset_cset(memory.get(), H5Tget_cset(stored.get()));
    char* text = nullptr;
    file.check(H5Aread(attr.get(), memory.get(), &text), "read attribute", what);
    std::string value = text != nullptr ? std::string(text) : std::string();
    H5free_memory(text);
    return value;
  }
  const std::size_t size = H5Tget_size(stored.get());
  std::string value(size, '\0');
  H5Handle memory = file.checked(detail::type_handle(H5Tcopy(stored.get())), "make string type for", what);
  file.check(H5Aread(attr.get(), memory.get(), value.data()), "read attribute", what);
  const std::size_t end = value.find('\0');
  if (end != std::string::npos) value.resize(end);
  if (H5Tget_strpad(stored.get()) == H5T_STR_SPACEPAD) {
    const std::size_t last = value.find_last_not_of(' ');
    value.resize(last == std::string::npos ? 0 : last + 1);
  }
  return value;
}

template <typename T>
T read_scalar_attr(const FileContext& file, hid_t object, const char* name, hid_t memory_type,
                   std::string_view object_path) {
  const std::string what = fmt::format("{}@{}", object_path, name);
  H5Handle attr = open_attribute(file, object, name, what);
  H5Handle space = file.checked(detail::space_handle(H5Aget_space(attr.get())), "get dataspace of", what);
  if (H5Sget_simple_extent_npoints(space.get()) != 1) file.fail(fmt::format("attribute '{}' is not a scalar", what));
  T value{};
  file.check(H5Aread(attr.get(), memory_type, &value), "read attribute", what);
  return value;
}

std::vector<hsize_t> dataset_dims(const FileContext& file, hid_t dataset, std::string_view path) {
  H5Handle space = file.checked(detail::space_handle(H5Dget_space(dataset)), "get dataspace of", path);
  const int rank = H5Sget_simple_extent_ndims(space.get());
  if (rank < 0) file.fail_hdf5("get rank of", path);
  std::vector<hsize_t> dims(static_cast<std::size_t>(rank));
  if (rank > 0) file.check(H5Sget_simple_extent_dims(space.get(), dims.data(), nullptr), "get shape of", path);
  return dims;
}

// The number of elements of a dataset whose stated size is plausible and fits in
// memory at `memory_bytes_per_element` (detail/dataset_size.hpp); fails otherwise.
std::uint64_t checked_elements(const FileContext& file, hid_t dataset, std::span<const hsize_t> dims,
                               double memory_bytes_per_element, std::string_view path) {
  const detail::DatasetSize size = detail::check_dataset_size(dataset, dims, memory_bytes_per_element);
  if (size.problem) file.fail(fmt::format("dataset '{}' {}", path, *size.problem));
  return size.elements;
}

// `memory_bytes_per_element`: what the caller will hold per element once it has read
// this and its sibling datasets (default: this dataset alone).
template <typename T>
std::vector<T> read_1d(const FileContext& file, hid_t parent, const std::string& name, hid_t memory_type,
                       std::string_view group_path, double memory_bytes_per_element = sizeof(T)) {
  const std::string path = fmt::format("{}/{}", group_path, name);
  H5Handle dataset = open_dataset(file, parent, name, path);
  const auto dims = dataset_dims(file, dataset.get(), path);
  if (dims.size() != 1) file.fail(fmt::format("dataset '{}' has rank {}, expected 1", path, dims.size()));
  std::vector<T> values(checked_elements(file, dataset.get(), dims, memory_bytes_per_element, path));
  if (!values.empty())
    file.check(H5Dread(dataset.get(), memory_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, values.data()), "read dataset",
               path);
  return values;
}

}  // namespace

std::optional<RunStatus> parse_run_status(std::string_view name) {
  constexpr std::array kAll{RunStatus::running, RunStatus::complete, RunStatus::interrupted, RunStatus::failed};
  for (RunStatus s : kAll)
    if (run_status_name(s) == name) return s;
  return std::nullopt;
}

struct RunReader::Impl {
  explicit Impl(const std::string& path) : file(path) {}
  FileContext file;
  H5Handle handle;
  RunFileInfo info;
};

RunReader::RunReader(const std::string& path) : impl_(std::make_unique<Impl>(path)) {
  detail::silence_hdf5_error_printing();
  std::error_code ec;
  if (!std::filesystem::exists(path, ec))
    throw UserError(fmt::format("cannot open run file '{}': no such file", path));
  // Only regular files: HDF5 would wait forever on a FIFO.
  if (auto problem = input_file_problem(path, "run file"))
    throw UserError(fmt::format("cannot open run file '{}': {}", path, *problem));
  if (H5Fis_hdf5(path.c_str()) <= 0) {
    H5Eclear2(H5E_DEFAULT);
    throw UserError(fmt::format("cannot open run file '{}': not an HDF5 file", path));
  }
  Impl& r = *impl_;
  r.handle = detail::file_handle(H5Fopen(path.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT));
  if (!r.handle.valid())
    throw UserError(fmt::format("cannot open run file '{}': {}", path, detail::hdf5_error_text()));

  const FileContext& file = r.file;
  const hid_t root = r.handle.get();
  RunFileInfo& info = r.info;
  info.path = path;

  // Identify the file before reading anything else, so a foreign HDF5 file gets
  // a message about what it is not, not about some attribute it lacks.
  if (H5Aexists(root, "layout") <= 0)
    throw UserError(fmt::format("'{}' is not an nvsyn run file: it has no root attribute 'layout'", path));
  info.layout = read_string_attr(file, root, "layout", "/");
  if (info.layout != kLayoutName)
    throw UserError(fmt::format("'{}' is not an nvsyn run file: root attribute 'layout' is '{}', expected '{}'",
                                path, info.layout, kLayoutName));
  info.layout_version = read_scalar_attr<int>(file, root, "layout_version", H5T_NATIVE_INT, "/");
  if (info.layout_version != kLayoutVersion)
    throw UserError(fmt::format("run file '{}' has layout version {}; this nvsyn reads version {}", path,
                                info.layout_version, kLayoutVersion));

  info.nvsyn_version = read_string_attr(file, root, "nvsyn_version", "/");
  info.created = read_string_attr(file, root, "created", "/");
  info.seed = read_scalar_attr<std::uint64_t>(file, root, "seed", H5T_NATIVE_UINT64, "/");
  const std::string status = read_string_attr(file, root, "status", "/");
  const auto parsed = parse_run_status(status);
  if (!parsed) file.fail(fmt::format("root attribute 'status' is '{}', which is not a run status", status));
  info.status = *parsed;
  info.duration = read_scalar_attr<double>(file, root, "duration", H5T_NATIVE_DOUBLE, "/");
  if (H5Aexists(root, "time_reached") > 0)
    info.time_reached = read_scalar_attr<double>(file, root, "time_reached", H5T_NATIVE_DOUBLE, "/");
  info.model_text = read_string_attr(file, root, "model", "/");
  info.model_file = read_string_attr(file, root, "model_file", "/");

  H5Handle populations = open_group(file, root, "populations", "/populations");
  H5Handle spikes = open_group(file, root, "spikes", "/spikes");
  for (const auto& name : child_names(file, populations.get(), "/populations")) {
    const std::string group_path = "/populations/" + name;
    H5Handle group = open_group(file, populations.get(), name, group_path);
    RunPopulationInfo population;
    population.name = name;
    population.size = read_scalar_attr<std::uint32_t>(file, group.get(), "size", H5T_NATIVE_UINT32, group_path);
    population.neuron_model = read_string_attr(file, group.get(), "neuron_model", group_path);
    population.has_spikes = has_link(spikes.get(), name);
    info.populations.push_back(std::move(population));
  }
  // Every spike group needs its population's size, or indices cannot be checked.
  for (const auto& name : child_names(file, spikes.get(), "/spikes"))
    if (!has_link(populations.get(), name))
      file.fail(fmt::format("'/spikes/{}' has no matching '/populations/{}'", name, name));

  H5Handle pathways = open_group(file, root, "pathways", "/pathways");
  for (const auto& name : child_names(file, pathways.get(), "/pathways")) {
    const std::string group_path = "/pathways/" + name;
    H5Handle group = open_group(file, pathways.get(), name, group_path);
    RunPathwayInfo pathway;
    pathway.name = name;
    pathway.source = read_string_attr(file, group.get(), "source", group_path);
    pathway.target = read_string_attr(file, group.get(), "target", group_path);
    pathway.rule = read_string_attr(file, group.get(), "rule", group_path);
    pathway.device = read_string_attr(file, group.get(), "device", group_path);
    pathway.receptor = read_string_attr(file, group.get(), "receptor", group_path);
    const std::string pre_path = group_path + "/pre";
    H5Handle pre = open_dataset(file, group.get(), "pre", pre_path);
    const auto dims = dataset_dims(file, pre.get(), pre_path);
    if (dims.size() != 1) file.fail(fmt::format("dataset '{}' has rank {}, expected 1", pre_path, dims.size()));
    pathway.synapses = dims[0];
    info.pathways.push_back(std::move(pathway));
  }

  H5Handle traces = open_group(file, root, "traces", "/traces");
  for (const auto& population : child_names(file, traces.get(), "/traces")) {
    const std::string population_path = "/traces/" + population;
    H5Handle population_group = open_group(file, traces.get(), population, population_path);
    for (const auto& variable : child_names(file, population_group.get(), population_path)) {
      const std::string group_path = population_path + "/" + variable;
      H5Handle group = open_group(file, population_group.get(), variable, group_path);
      const std::string value_path = group_path + "/value";
      H5Handle value = open_dataset(file, group.get(), "value", value_path);
      const auto dims = dataset_dims(file, value.get(), value_path);
      if (dims.size() != 2) file.fail(fmt::format("dataset '{}' has rank {}, expected 2", value_path, dims.size()));
      RunTraceInfo trace;
      trace.population = population;
      trace.variable = variable;
      trace.units = read_string_attr(file, value.get(), "units", value_path);
      trace.samples = dims[0];
      trace.neurons = dims[1];
      info.traces.push_back(std::move(trace));
    }
  }
}

RunReader::~RunReader() = default;
RunReader::RunReader(RunReader&&) noexcept = default;
RunReader& RunReader::operator=(RunReader&&) noexcept = default;

const RunFileInfo& RunReader::info() const { return impl_->info; }

SpikeData RunReader::read_spikes(const std::string& population) const {
  const FileContext& file = impl_->file;
  const hid_t root = impl_->handle.get();
  H5Handle spikes = open_group(file, root, "spikes", "/spikes");
  if (!has_link(spikes.get(), population))
    file.fail(fmt::format("no spikes recorded for population '{}'", population));
  const std::string group_path = "/spikes/" + population;
  H5Handle group = open_group(file, spikes.get(), population, group_path);
  SpikeData data;
  constexpr double kBytesPerSpike = sizeof(double) + sizeof(std::uint32_t);
  data.times = read_1d<double>(file, group.get(), "time", H5T_NATIVE_DOUBLE, group_path, kBytesPerSpike);
  data.neurons = read_1d<std::uint32_t>(file, group.get(), "neuron", H5T_NATIVE_UINT32, group_path, kBytesPerSpike);
  if (data.times.size() != data.neurons.size())
    file.fail(fmt::format("'{}/time' has {} entries but '{}/neuron' has {}", group_path, data.times.size(),
                          group_path, data.neurons.size()));
  return data;
}

void RunReader::for_each_spike_block(
    const std::string& population,
    const std::function<void(std::span<const double>, std::span<const std::uint32_t>)>& block) const {
  const FileContext& file = impl_->file;
  H5Handle spikes = open_group(file, impl_->handle.get(), "spikes", "/spikes");
  if (!has_link(spikes.get(), population))
    file.fail(fmt::format("no spikes recorded for population '{}'", population));
  const std::string group_path = "/spikes/" + population;
  H5Handle group = open_group(file, spikes.get(), population, group_path);

  struct Column {
    std::string path;
    H5Handle dataset;
    H5Handle file_space;
    std::uint64_t length = 0;
  };
  auto open_column = [&](const char* name) {
    Column c;
    c.path = group_path + "/" + name;
    c.dataset = open_dataset(file, group.get(), name, c.path);
    const auto dims = dataset_dims(file, c.dataset.get(), c.path);
    if (dims.size() != 1) file.fail(fmt::format("dataset '{}' has rank {}, expected 1", c.path, dims.size()));
    c.length = checked_elements(file, c.dataset.get(), dims, 0.0, c.path);
    c.file_space = file.checked(detail::space_handle(H5Dget_space(c.dataset.get())), "get dataspace of", c.path);
    return c;
  };
  Column time = open_column("time");
  Column neuron = open_column("neuron");
  if (time.length != neuron.length)
    file.fail(fmt::format("'{}' has {} entries but '{}' has {}", time.path, time.length, neuron.path, neuron.length));

  std::vector<double> times(static_cast<std::size_t>(std::min<std::uint64_t>(time.length, kSpikeBlockLength)));
  std::vector<std::uint32_t> neurons(times.size());
  auto read_part = [&](Column& c, hid_t memory_type, void* buffer, hsize_t start, hsize_t count) {
    const hsize_t stride = 1;
    file.check(H5Sselect_hyperslab(c.file_space.get(), H5S_SELECT_SET, &start, &stride, &count, nullptr),
               "select part of", c.path);
    H5Handle memory_space = file.checked(detail::space_handle(H5Screate_simple(1, &count, nullptr)),
                                         "make dataspace for", c.path);
    file.check(H5Dread(c.dataset.get(), memory_type, memory_space.get(), c.file_space.get(), H5P_DEFAULT, buffer),
               "read dataset", c.path);
  };
  for (std::uint64_t start = 0; start < time.length; start += times.size()) {
    const auto count = static_cast<std::size_t>(std::min<std::uint64_t>(times.size(), time.length - start));
    read_part(time, H5T_NATIVE_DOUBLE, times.data(), start, count);
    read_part(neuron, H5T_NATIVE_UINT32, neurons.data(), start, count);
    block(std::span<const double>(times.data(), count), std::span<const std::uint32_t>(neurons.data(), count));
  }
}

PathwayData RunReader::read_pathway(const std::string& name) const {
  const FileContext& file = impl_->file;
  H5Handle pathways = open_group(file, impl_->handle.get(), "pathways", "/pathways");
  if (!has_link(pathways.get(), name)) file.fail(fmt::format("no pathway '{}'", name));
  const std::string group_path = "/pathways/" + name;
  H5Handle group = open_group(file, pathways.get(), name, group_path);
  PathwayData data;
  constexpr double kBytesPerSynapse = 2 * sizeof(std::uint32_t) + 2 * sizeof(double);
  data.pre = read_1d<std::uint32_t>(file, group.get(), "pre", H5T_NATIVE_UINT32, group_path, kBytesPerSynapse);
  data.post = read_1d<std::uint32_t>(file, group.get(), "post", H5T_NATIVE_UINT32, group_path, kBytesPerSynapse);
  data.delay = read_1d<double>(file, group.get(), "delay", H5T_NATIVE_DOUBLE, group_path, kBytesPerSynapse);
  data.weight = read_1d<double>(file, group.get(), "weight", H5T_NATIVE_DOUBLE, group_path, kBytesPerSynapse);
  const std::size_t n = data.pre.size();
  if (data.post.size() != n || data.delay.size() != n || data.weight.size() != n)
    file.fail(fmt::format("datasets of '{}' differ in length (pre {}, post {}, delay {}, weight {})", group_path, n,
                          data.post.size(), data.delay.size(), data.weight.size()));
  return data;
}

TraceData RunReader::read_trace(const std::string& population, const std::string& variable) const {
  const FileContext& file = impl_->file;
  const hid_t root = impl_->handle.get();
  const std::string group_path = fmt::format("/traces/{}/{}", population, variable);
  H5Handle traces = open_group(file, root, "traces", "/traces");
  if (!has_link(traces.get(), population))
    file.fail(fmt::format("no traces recorded for population '{}'", population));
  H5Handle population_group = open_group(file, traces.get(), population, "/traces/" + population);
  if (!has_link(population_group.get(), variable))
    file.fail(fmt::format("no trace '{}' recorded for population '{}'", variable, population));
  H5Handle group = open_group(file, population_group.get(), variable, group_path);

  TraceData data;
  data.times = read_1d<double>(file, group.get(), "time", H5T_NATIVE_DOUBLE, group_path);
  data.neurons = read_1d<std::uint32_t>(file, group.get(), "neuron", H5T_NATIVE_UINT32, group_path);
  const std::string value_path = group_path + "/value";
  H5Handle value = open_dataset(file, group.get(), "value", value_path);
  const auto dims = dataset_dims(file, value.get(), value_path);
  if (dims.size() != 2 || dims[0] != data.times.size() || dims[1] != data.neurons.size())
    file.fail(fmt::format("dataset '{}' does not have shape [{}, {}] to match its time and neuron datasets",
                          value_path, data.times.size(), data.neurons.size()));
  data.units = read_string_attr(file, value.get(), "units", value_path);
  data.values.resize(checked_elements(file, value.get(), dims, sizeof(double), value_path));
  if (!data.values.empty())
    file.check(H5Dread(value.get(), H5T_NATIVE_DOUBLE, H5S_ALL, H5S_ALL, H5P_DEFAULT, data.values.data()),
               "read dataset", value_path);
  return data;
}

RunFileInfo read_run_file(const std::string& path) { return RunReader(path).info(); }

}  // namespace nvsyn
