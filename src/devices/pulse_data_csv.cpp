#include "devices/pulse_data_csv.hpp"

#include <array>
#include <charconv>
#include <cmath>
#include <cstring>
#include <fmt/format.h>
#include <limits>
#include <optional>
#include <sstream>

#include "core/input_file.hpp"
#include "core/units.hpp"

namespace nvsyn {
namespace {

struct Cell {
  std::string text;
  int column = 0;  // 1-based character position of the cell's first character
};

std::vector<Cell> split_cells(const std::string& line) {
  std::vector<Cell> cells;
  std::size_t start = 0;
  while (true) {
    const std::size_t comma = line.find(',', start);
    const std::size_t end = comma == std::string::npos ? line.size() : comma;
    std::size_t a = start, b = end;
    while (a < b && (line[a] == ' ' || line[a] == '\t')) ++a;
    while (b > a && (line[b - 1] == ' ' || line[b - 1] == '\t' || line[b - 1] == '\r')) --b;
    cells.push_back({line.substr(a, b - a), static_cast<int>(a) + 1});
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return cells;
}

enum class Column : std::uint8_t { device, cycle, pulse, polarity, conductance, read_time };
constexpr std::array<std::string_view, 6> kColumnNames{"device",   "cycle",       "pulse",
                                                       "polarity", "conductance", "read_time"};
constexpr std::string_view kHeaderExample = "device,cycle,pulse,polarity,conductance [uS] (optionally ,read_time [s])";

struct Header {
  std::array<int, 6> index;  // cell index of each column, -1 when absent
  double conductance_unit = 1.0, read_time_unit = 1.0;
  std::size_t cells = 0;
};

// "conductance [uS]" -> the SI factor of the unit in brackets, checked against `dim`.
double bracket_unit(const Cell& cell, std::string_view name, Dimension dim, const SourcePosition& where) {
  const auto open = cell.text.find('['), close = cell.text.find(']');
  if (open == std::string::npos || close == std::string::npos || close < open)
    throw UserError(where, std::string(name),
                    fmt::format("the column needs its unit in brackets, e.g. \"{} [{}]\"", name,
                                dim == Dimension::conductance ? "uS" : "s"));
  std::string why;
  const auto q = parse_quantity("1 " + cell.text.substr(open + 1, close - open - 1), why);
  if (!q) throw UserError(where, std::string(name), why);
  if (q->dimension != dim)
    throw UserError(where, std::string(name),
                    fmt::format("the unit is a {}, expected a {}", dimension_name(q->dimension), dimension_name(dim)));
  return q->value_si;
}

Header read_header(const std::vector<Cell>& cells, const std::string& file, int line) {
  Header h;
  h.index.fill(-1);
  h.cells = cells.size();
  for (std::size_t k = 0; k < cells.size(); ++k) {
    const Cell& cell = cells[k];
    const SourcePosition where{file, line, cell.column};
    std::string name = cell.text.substr(0, cell.text.find('['));
    while (!name.empty() && name.back() == ' ') name.pop_back();
    std::size_t c = 0;
    while (c < kColumnNames.size() && kColumnNames[c] != name) ++c;
    if (c == kColumnNames.size())
      throw UserError(where, name.empty() ? cell.text : name,
                      fmt::format("unknown column; expected the header {}", kHeaderExample));
    if (h.index[c] >= 0) throw UserError(where, name, "the column appears twice in the header");
    h.index[c] = static_cast<int>(k);
    const auto column = static_cast<Column>(c);
    if (column == Column::conductance) {
      h.conductance_unit = bracket_unit(cell, name, Dimension::conductance, where);
    } else if (column == Column::read_time) {
      h.read_time_unit = bracket_unit(cell, name, Dimension::time, where);
    } else if (cell.text.find('[') != std::string::npos) {
      throw UserError(where, name, "this column is a count or a name and takes no unit");
    }
  }
  for (std::size_t c = 0; c < kColumnNames.size(); ++c)
    if (h.index[c] < 0 && static_cast<Column>(c) != Column::read_time)
      throw UserError({file, line, 1}, std::string(kColumnNames[c]),
                      fmt::format("the header lacks this column; expected {}", kHeaderExample));
  return h;
}

std::uint32_t whole_number(const Cell& cell, std::string_view name, const SourcePosition& where) {
  std::uint64_t v = 0;
  const char* first = cell.text.data();
  const char* last = first + cell.text.size();
  auto [end, ec] = std::from_chars(first, last, v);
  if (cell.text.empty() || ec != std::errc{} || end != last || v > std::numeric_limits<std::uint32_t>::max())
    throw UserError(where, std::string(name),
                    fmt::format("'{}' is not a whole number from 0 to 4294967295", cell.text));
  return static_cast<std::uint32_t>(v);
}

double finite_number(const Cell& cell, std::string_view name, const SourcePosition& where) {
  double v = 0;
  const char* first = cell.text.data();
  const char* last = first + cell.text.size();
  if (first != last && *first == '+') ++first;
  auto [end, ec] = std::from_chars(first, last, v);
  if (cell.text.empty() || ec != std::errc{} || end != last)
    throw UserError(where, std::string(name), fmt::format("'{}' is not a number", cell.text));
  if (!std::isfinite(v))
    throw UserError(where, std::string(name), fmt::format("'{}' is not a finite number", cell.text));
  return v;
}

Polarity polarity_of(const Cell& cell, const SourcePosition& where) {
  if (cell.text == "potentiate" || cell.text == "+") return Polarity::potentiate;
  if (cell.text == "depress" || cell.text == "-") return Polarity::depress;
  throw UserError(where, "polarity",
                  fmt::format("'{}' is not a polarity; expected potentiate or depress (or + or -)", cell.text));
}

}  // namespace

PulseData parse_pulse_csv(const std::string& text, const std::string& file_name) {
  PulseData data;
  data.file = file_name;
  data.numbering = RowNumbering::file_line;
  std::optional<Header> header;
  std::vector<std::string> header_names;  // column names in header order
  std::istringstream in(text);
  std::string line;
  int line_number = 0;
  while (std::getline(in, line)) {
    ++line_number;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.find_first_not_of(" \t") == std::string::npos || line[line.find_first_not_of(" \t")] == '#') continue;
    const std::vector<Cell> cells = split_cells(line);
    if (!header) {
      header = read_header(cells, file_name, line_number);
      for (const Cell& c : cells) {
        std::string name = c.text.substr(0, c.text.find('['));
        while (!name.empty() && name.back() == ' ') name.pop_back();
        header_names.push_back(name);
      }
      data.has_read_time = header->index[static_cast<int>(Column::read_time)] >= 0;
      continue;
    }
    if (cells.size() != header->cells) {
      // Name the first column left without a value, or the last one when there are extra values.
      std::string column = header_names.back();
      if (cells.size() < header->cells) column = header_names[cells.size()];
      throw UserError({file_name, line_number, 1}, column,
                      fmt::format("expected {} values as in the header, found {}", header->cells, cells.size()));
    }
    auto cell = [&](Column c) -> const Cell& { return cells[header->index[static_cast<int>(c)]]; };
    auto at = [&](Column c) { return SourcePosition{file_name, line_number, cell(c).column}; };
    PulseRecord r;
    r.row = line_number;
    r.device = whole_number(cell(Column::device), "device", at(Column::device));
    r.cycle = whole_number(cell(Column::cycle), "cycle", at(Column::cycle));
    r.pulse = whole_number(cell(Column::pulse), "pulse", at(Column::pulse));
    r.polarity = polarity_of(cell(Column::polarity), at(Column::polarity));
    r.conductance =
        finite_number(cell(Column::conductance), "conductance", at(Column::conductance)) * header->conductance_unit;
    if (r.conductance < 0)
      throw UserError(at(Column::conductance), "conductance",
                      fmt::format("a conductance cannot be negative, got '{}'", cell(Column::conductance).text));
    if (data.has_read_time) {
      r.read_time = finite_number(cell(Column::read_time), "read_time", at(Column::read_time)) * header->read_time_unit;
      if (r.read_time < 0)
        throw UserError(at(Column::read_time), "read_time",
                        fmt::format("a read time cannot be negative, got '{}'", cell(Column::read_time).text));
    }
    data.records.push_back(r);
  }
  if (!header)
    throw UserError({file_name, line_number > 0 ? 1 : 0, 0}, "device",
                    fmt::format("the file holds no header; expected {}", kHeaderExample));
  if (data.records.empty())
    throw UserError({file_name, line_number, 0}, "conductance", "the file holds a header but no measurements");
  data.validate();
  return data;
}

PulseData read_pulse_csv(const std::string& path) {
  return parse_pulse_csv(read_input_text(path, "pulse-data file"), path);
}

}  // namespace nvsyn
