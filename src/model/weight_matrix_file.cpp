#include "model/weight_matrix_file.hpp"

#include <cctype>
#include <charconv>
#include <cmath>
#include <fmt/format.h>
#include <string_view>

#include "core/error.hpp"
#include "core/plausible_range.hpp"
#include "core/units.hpp"
#include "model/toml_tables.hpp"

namespace nvsyn {
namespace {

std::string_view trim(std::string_view s) {
  const std::size_t first = s.find_first_not_of(" \t\r");
  if (first == std::string_view::npos) return {};
  const std::size_t last = s.find_last_not_of(" \t\r");
  return s.substr(first, last - first + 1);
}

// Amperes per unit of `unit`, or a UserError at `where`.
double current_scale(const std::string& unit, const SourcePosition& where, const std::string& key) {
  std::string why;
  const auto q = parse_quantity("1 " + unit, why);
  if (!q)
    throw UserError(where, key, fmt::format("'{}' is not a unit ({}); expected a current unit such as nA", unit, why));
  if (q->dimension != Dimension::current)
    throw UserError(where, key,
                    fmt::format("'{}' is a unit of {}; weights are currents, e.g. nA", unit, dimension_name(q->dimension)));
  return q->value_si;
}

// "# unit: nA" -> "nA"; nullopt for other comments.
std::optional<std::string_view> unit_comment(std::string_view comment) {
  std::string_view body = trim(comment.substr(1));
  constexpr std::string_view key = "unit:";
  if (body.size() < key.size()) return std::nullopt;
  for (std::size_t i = 0; i < key.size(); ++i)
    if (std::tolower(static_cast<unsigned char>(body[i])) != key[i]) return std::nullopt;
  return trim(body.substr(key.size()));
}

}  // namespace

WeightMatrix read_weight_matrix(const std::string& path, const std::optional<std::string>& unit_given) {
  WeightMatrix m;
  m.file = path;
  const std::string text = read_text_file(path, "weight matrix file");
  std::optional<std::string> file_unit;
  SourcePosition unit_where;
  std::vector<double> raw;
  std::size_t line_start = 0;
  for (int line = 1; line_start <= text.size(); ++line) {
    std::size_t line_end = text.find('\n', line_start);
    if (line_end == std::string::npos) line_end = text.size();
    const std::string_view row_text(text.data() + line_start, line_end - line_start);
    const std::size_t row_offset = line_start;
    line_start = line_end + 1;
    const std::string_view content = trim(row_text);
    if (content.empty()) continue;
    if (content.front() == '#') {
      if (const auto unit = unit_comment(content)) {
        const int column = static_cast<int>(unit->data() - text.data() - row_offset) + 1;
        if (file_unit)
          throw UserError({path, line, column}, "unit",
                          fmt::format("the unit is given twice (first at line {})", unit_where.line));
        if (unit->empty()) throw UserError({path, line, column}, "unit", "write the unit after 'unit:', e.g. '# unit: nA'");
        file_unit = std::string(*unit);
        unit_where = {path, line, column};
      }
      continue;
    }
    const std::size_t row = m.rows + 1;  // 1-based, for messages
    std::size_t columns = 0;
    std::size_t field_start = 0;
    while (true) {
      const std::size_t comma = row_text.find(',', field_start);
      const std::size_t field_end = comma == std::string_view::npos ? row_text.size() : comma;
      const std::string_view raw_field = row_text.substr(field_start, field_end - field_start);
      const std::string_view field = trim(raw_field);
      ++columns;
      const int column =
          static_cast<int>(field_start + (field.empty() ? 0 : field.data() - raw_field.data())) + 1;
      const SourcePosition where{path, line, column};
      const std::string place = fmt::format("row {}, column {}", row, columns);
      if (field.empty()) throw UserError(where, "", fmt::format("{}: empty value; expected a number", place));
      std::string_view number = field;
      if (number.front() == '+') number.remove_prefix(1);
      double value = 0;
      const auto [end, ec] = std::from_chars(number.data(), number.data() + number.size(), value);
      if (ec != std::errc() || end != number.data() + number.size())
        throw UserError(where, "",
                        fmt::format("{}: '{}' is not a number (write plain numbers; the unit goes in '# unit: nA')",
                                    place, field));
      if (!std::isfinite(value)) throw UserError(where, "", fmt::format("{}: '{}' is not a finite number", place, field));
      raw.push_back(value);
      if (comma == std::string_view::npos) break;
      field_start = comma + 1;
    }
    if (m.rows == 0) m.columns = columns;
    else if (columns != m.columns)
      throw UserError({path, line, 1}, "",
                      fmt::format("row {} has {} values, but the rows above have {}", row, columns, m.columns));
    ++m.rows;
  }
  if (m.rows == 0) throw UserError({path}, "", "holds no weights: expected rows of comma-separated numbers");

  if (unit_given && file_unit && *unit_given != *file_unit)
    throw UserError(unit_where, "unit",
                    fmt::format("the file gives the unit '{}' but --unit says '{}'; remove one of them", *file_unit,
                                *unit_given));
  double scale = 0;
  if (unit_given) {
    scale = current_scale(*unit_given, {}, "--unit");
    m.unit = *unit_given;
  } else if (file_unit) {
    scale = current_scale(*file_unit, unit_where, "unit");
    m.unit = *file_unit;
  } else {
    throw UserError({path, 1, 1}, "unit", "no unit for the weights: add a line '# unit: nA' or give --unit nA");
  }
  m.values.reserve(raw.size());
  for (std::size_t i = 0; i < raw.size(); ++i) {
    // Finite as written is not enough: 1e300 with "# unit: TA" overflows.
    const double v = raw[i] * scale;
    check_plausible(v, QuantityKind::current, fmt::format("{:g} {}", raw[i], m.unit), {path}, "",
                    fmt::format("row {}, column {}", i / m.columns + 1, i % m.columns + 1), nullptr);
    m.values.push_back(v);
  }
  return m;
}

}  // namespace nvsyn
