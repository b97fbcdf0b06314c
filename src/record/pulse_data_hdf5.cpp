#include "record/pulse_data_hdf5.hpp"

#include <array>
#include <cmath>
#include <cstdint>
#include <fmt/format.h>
#include <fstream>
#include <limits>
#include <optional>
#include <span>

#include "core/input_file.hpp"
#include "core/units.hpp"
#include "record/detail/dataset_size.hpp"
#include "record/detail/hdf5_handle.hpp"

namespace nvsyn {
namespace {

using detail::H5Handle;

constexpr const char* kGroup = "pulses";
constexpr std::string_view kLayout =
    "/pulses/device, cycle, pulse, polarity (integer datasets or strings), conductance (with a units "
    "attribute) and optionally read_time (with a units attribute)";

// Memory held per read while a file is loaded: the record, every column's values and
// one conversion buffer (generous on purpose); a column's stored element size is added.
constexpr double kBytesPerRead = sizeof(PulseRecord) + 96;

// Everything a reader can trip over is in the user's file.
class Reader {
 public:
  explicit Reader(PulseData& data) : data_(data) {}

  [[noreturn]] void fail(const std::string& column, const std::string& message) const {
    throw UserError({data_.file}, column.empty() ? std::string() : data_.column_prefix + column, message);
  }
  [[noreturn]] void fail_row(int row, const std::string& column, const std::string& message) const {
    throw data_.error_at(row, column, message);
  }

  bool has(hid_t parent, const std::string& name) const {
    const htri_t exists = H5Lexists(parent, name.c_str(), H5P_DEFAULT);
    if (exists < 0) H5Eclear2(H5E_DEFAULT);
    return exists > 0;
  }

  H5Handle dataset(hid_t group, const std::string& column) const {
    if (!has(group, column)) fail(column, fmt::format("missing dataset; expected {}", kLayout));
    H5Handle d = detail::dataset_handle(H5Dopen2(group, column.c_str(), H5P_DEFAULT));
    if (!d.valid()) fail(column, "cannot open the dataset: " + detail::hdf5_error_text());
    return d;
  }

  // Length of a 1-D dataset; every column must have the same.
  std::size_t length(hid_t d, const std::string& column) const {
    H5Handle space = detail::space_handle(H5Dget_space(d));
    const int rank = space.valid() ? H5Sget_simple_extent_ndims(space.get()) : -1;
    if (rank != 1) fail(column, fmt::format("expected a one-dimensional dataset, found {} dimensions", rank));
    hsize_t n = 0;
    H5Sget_simple_extent_dims(space.get(), &n, nullptr);
    // The length is what the file claims: check it before anything is allocated.
    H5Handle type = detail::type_handle(H5Dget_type(d));
    const double element_bytes = type.valid() ? static_cast<double>(H5Tget_size(type.get())) : 0.0;
    const detail::DatasetSize size =
        detail::check_dataset_size(d, std::span<const hsize_t>(&n, 1), kBytesPerRead + element_bytes);
    if (size.problem) fail(column, *size.problem);
    return static_cast<std::size_t>(n);
  }

  H5T_class_t type_class(hid_t d) const {
    H5Handle type = detail::type_handle(H5Dget_type(d));
    return type.valid() ? H5Tget_class(type.get()) : H5T_NO_CLASS;
  }

  template <typename T>
  std::vector<T> read(hid_t d, hid_t memory_type, std::size_t n, const std::string& column) const {
    std::vector<T> v(n);
    if (n > 0 && H5Dread(d, memory_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, v.data()) < 0)
      fail(column, "cannot read the dataset: " + detail::hdf5_error_text());
    return v;
  }

  // Variable- or fixed-length strings, from a dataset (`is_attribute` false) or attribute.
  std::vector<std::string> read_strings(hid_t object, bool is_attribute, std::size_t n,
                                        const std::string& column) const {
    H5Handle stored = detail::type_handle(is_attribute ? H5Aget_type(object) : H5Dget_type(object));
    std::vector<std::string> out(n);
    if (!stored.valid() || H5Tget_class(stored.get()) != H5T_STRING) fail(column, "expected strings");
    auto read_into = [&](hid_t memory, void* buffer) {
      const herr_t status = is_attribute ? H5Aread(object, memory, buffer)
                                         : H5Dread(object, memory, H5S_ALL, H5S_ALL, H5P_DEFAULT, buffer);
      if (status < 0) fail(column, "cannot read the strings: " + detail::hdf5_error_text());
    };
    if (H5Tis_variable_str(stored.get()) > 0) {
      H5Handle memory = detail::type_handle(H5Tcopy(H5T_C_S1));
      H5Tset_size(memory.get(), H5T_VARIABLE);
      H5Tset_cset(memory.get(), H5Tget_cset(stored.get()));
      std::vector<char*> text(n, nullptr);
      read_into(memory.get(), text.data());
      for (std::size_t i = 0; i < n; ++i) {
        if (text[i]) out[i] = text[i];
        H5free_memory(text[i]);
      }
      return out;
    }
    const std::size_t size = H5Tget_size(stored.get());
    std::string buffer(size * n, '\0');
    H5Handle memory = detail::type_handle(H5Tcopy(stored.get()));
    read_into(memory.get(), buffer.data());
    for (std::size_t i = 0; i < n; ++i) {
      std::string s = buffer.substr(i * size, size);
      s.resize(std::min(s.find('\0'), s.size()));
      while (!s.empty() && s.back() == ' ') s.pop_back();
      out[i] = s;
    }
    return out;
  }

  // The SI factor of the dataset's units attribute, checked against `dim`.
  double units(hid_t d, const std::string& column, Dimension dim, std::string_view example) const {
    if (H5Aexists(d, "units") <= 0)
      fail(column, fmt::format("the dataset needs a string attribute 'units', e.g. \"{}\"", example));
    H5Handle attr = detail::attribute_handle(H5Aopen(d, "units", H5P_DEFAULT));
    if (!attr.valid()) fail(column, "cannot open the attribute 'units': " + detail::hdf5_error_text());
    if (auto problem = detail::single_value_attribute_problem(attr.get()))
      fail(column, "attribute 'units' " + *problem);
    const std::string unit = read_strings(attr.get(), true, 1, column).front();
    std::string why;
    const auto q = parse_quantity("1 " + unit, why);
    if (!q) fail(column, fmt::format("attribute 'units': {}", why));
    if (q->dimension != dim)
      fail(column, fmt::format("attribute 'units' = \"{}\" is a {}, expected a {}", unit, dimension_name(q->dimension),
                               dimension_name(dim)));
    return q->value_si;
  }

 private:
  PulseData& data_;
};

std::vector<std::uint32_t> whole_numbers(const Reader& r, hid_t group, const std::string& column, std::size_t& n) {
  H5Handle d = r.dataset(group, column);
  n = r.length(d.get(), column);
  if (r.type_class(d.get()) != H5T_INTEGER) r.fail(column, "must hold integers");
  const auto values = r.read<std::int64_t>(d.get(), H5T_NATIVE_INT64, n, column);
  std::vector<std::uint32_t> out(n);
  for (std::size_t i = 0; i < n; ++i) {
    if (values[i] < 0 || values[i] > std::numeric_limits<std::uint32_t>::max())
      r.fail_row(static_cast<int>(i), column, fmt::format("{} is not a whole number from 0 to 4294967295", values[i]));
    out[i] = static_cast<std::uint32_t>(values[i]);
  }
  return out;
}

std::vector<double> quantities(const Reader& r, hid_t group, const std::string& column, Dimension dim,
                               std::string_view example, std::size_t& n) {
  H5Handle d = r.dataset(group, column);
  n = r.length(d.get(), column);
  const H5T_class_t c = r.type_class(d.get());
  if (c != H5T_FLOAT && c != H5T_INTEGER) r.fail(column, "must hold numbers");
  const double unit = r.units(d.get(), column, dim, example);
  std::vector<double> v = r.read<double>(d.get(), H5T_NATIVE_DOUBLE, n, column);
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(v[i])) r.fail_row(static_cast<int>(i), column, fmt::format("{} is not a finite number", v[i]));
    v[i] *= unit;
  }
  return v;
}

std::vector<Polarity> polarities(const Reader& r, hid_t group, std::size_t& n) {
  const std::string column = "polarity";
  H5Handle d = r.dataset(group, column);
  n = r.length(d.get(), column);
  std::vector<Polarity> out(n);
  const H5T_class_t c = r.type_class(d.get());
  if (c == H5T_INTEGER) {
    const auto v = r.read<std::int64_t>(d.get(), H5T_NATIVE_INT64, n, column);
    for (std::size_t i = 0; i < n; ++i) {
      if (v[i] != 1 && v[i] != -1)
        r.fail_row(static_cast<int>(i), column,
                   fmt::format("{} is not a polarity; expected +1 (potentiate) or -1 (depress)", v[i]));
      out[i] = v[i] == 1 ? Polarity::potentiate : Polarity::depress;
    }
  } else if (c == H5T_STRING) {
    const auto v = r.read_strings(d.get(), false, n, column);
    for (std::size_t i = 0; i < n; ++i) {
      if (v[i] == "potentiate" || v[i] == "+")
        out[i] = Polarity::potentiate;
      else if (v[i] == "depress" || v[i] == "-")
        out[i] = Polarity::depress;
      else
        r.fail_row(static_cast<int>(i), column,
                   fmt::format("'{}' is not a polarity; expected potentiate or depress", v[i]));
    }
  } else {
    r.fail(column, "must hold integers (+1, -1) or strings (potentiate, depress)");
  }
  return out;
}

}  // namespace

bool looks_like_hdf5(const std::string& path) {
  // Anything but a regular file is refused by whichever reader is chosen; opening a
  // FIFO here would wait for a writer.
  if (input_file_problem(path, "pulse-data file")) return false;
  std::ifstream in(path, std::ios::binary);
  std::array<char, 8> head{};
  if (!in.read(head.data(), head.size())) return false;
  constexpr std::array<char, 8> signature{'\x89', 'H', 'D', 'F', '\r', '\n', '\x1a', '\n'};
  return head == signature;
}

PulseData read_pulse_hdf5(const std::string& path) {
  detail::silence_hdf5_error_printing();
  PulseData data;
  data.file = path;
  data.numbering = RowNumbering::dataset_index;
  data.column_prefix = "/pulses/";
  Reader r(data);

  check_input_file(path, "pulse-data file");
  H5Handle file = detail::file_handle(H5Fopen(path.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT));
  if (!file.valid()) throw UserError({path}, "", "cannot open as HDF5: " + detail::hdf5_error_text());
  if (!r.has(file.get(), kGroup))
    throw UserError({path}, "/pulses", fmt::format("missing group; expected {}", kLayout));
  H5Handle group = detail::group_handle(H5Gopen2(file.get(), kGroup, H5P_DEFAULT));
  if (!group.valid()) throw UserError({path}, "/pulses", "cannot open the group: " + detail::hdf5_error_text());

  std::size_t n_device = 0, n = 0;
  const auto device = whole_numbers(r, group.get(), "device", n_device);
  auto same_length = [&](const std::string& column, std::size_t length) {
    if (length != n_device)
      r.fail(column, fmt::format("has {} values but /pulses/device has {}; every column needs one value per read",
                                 length, n_device));
  };
  const auto cycle = whole_numbers(r, group.get(), "cycle", n);
  same_length("cycle", n);
  const auto pulse = whole_numbers(r, group.get(), "pulse", n);
  same_length("pulse", n);
  const auto polarity = polarities(r, group.get(), n);
  same_length("polarity", n);
  const auto conductance = quantities(r, group.get(), "conductance", Dimension::conductance, "uS", n);
  same_length("conductance", n);
  data.has_read_time = r.has(group.get(), "read_time");
  std::vector<double> read_time;
  if (data.has_read_time) {
    read_time = quantities(r, group.get(), "read_time", Dimension::time, "s", n);
    same_length("read_time", n);
  }
  if (n_device == 0) r.fail("conductance", "the datasets are empty; there is nothing to fit");

  data.records.resize(n_device);
  for (std::size_t i = 0; i < n_device; ++i) {
    PulseRecord& rec = data.records[i];
    rec.device = device[i];
    rec.cycle = cycle[i];
    rec.pulse = pulse[i];
    rec.polarity = polarity[i];
    rec.conductance = conductance[i];
    if (data.has_read_time) rec.read_time = read_time[i];
    rec.row = static_cast<int>(i);
  }
  data.validate();
  return data;
}

}  // namespace nvsyn
