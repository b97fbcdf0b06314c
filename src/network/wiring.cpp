#include "network/wiring.hpp"

#include <charconv>
#include <cmath>
#include <cstring>
#include <fmt/format.h>
#include <sstream>

#include "core/error.hpp"
#include "core/input_file.hpp"
#include "core/random_stream.hpp"
#include "core/units.hpp"

namespace nvsyn {
namespace {

std::uint64_t entity(const WiringContext& c, std::uint32_t neuron) {
  return (std::uint64_t{c.pathway_id} << 32) | neuron;
}

bool allowed(const WiringContext& c, std::uint32_t pre, std::uint32_t post) {
  return !(c.same_group && !c.self_connections && pre == post);
}

}  // namespace

std::vector<Edge> wire_one_to_one(const WiringContext& c) {
  std::vector<Edge> edges;
  edges.reserve(c.n_pre);
  for (std::uint32_t i = 0; i < c.n_pre && i < c.n_post; ++i)
    if (allowed(c, i, i)) edges.push_back({i, i});
  return edges;
}

std::vector<Edge> wire_all_to_all(const WiringContext& c) {
  std::vector<Edge> edges;
  edges.reserve(std::size_t{c.n_pre} * c.n_post);
  for (std::uint32_t pre = 0; pre < c.n_pre; ++pre)
    for (std::uint32_t post = 0; post < c.n_post; ++post)
      if (allowed(c, pre, post)) edges.push_back({pre, post});
  return edges;
}

std::vector<Edge> wire_random(const WiringContext& c, double p) {
  std::vector<Edge> edges;
  if (p <= 0.0) return edges;
  if (p >= 1.0) return wire_all_to_all(c);
  edges.reserve(static_cast<std::size_t>(1.1 * p * c.n_pre * c.n_post) + 16);
  const double log_q = std::log1p(-p);
  for (std::uint32_t pre = 0; pre < c.n_pre; ++pre) {
    RandomStream rng(c.seed, StreamPurpose::connectivity, entity(c, pre));
    // The gap to the next chosen target is geometric with parameter p.
    double post = -1.0;
    for (;;) {
      post += 1.0 + std::floor(std::log(rng.uniform()) / log_q);
      if (post >= c.n_post) break;
      const auto target = static_cast<std::uint32_t>(post);
      if (allowed(c, pre, target)) edges.push_back({pre, target});
    }
  }
  return edges;
}

std::vector<Edge> wire_in_degree(const WiringContext& c, std::uint32_t k) {
  std::vector<Edge> edges;
  edges.reserve(std::size_t{k} * c.n_post);
  std::vector<char> chosen(c.n_pre, 0);
  std::vector<std::uint32_t> picks;
  picks.reserve(k);
  for (std::uint32_t post = 0; post < c.n_post; ++post) {
    RandomStream rng(c.seed, StreamPurpose::connectivity, entity(c, post));
    const bool exclude_self = c.same_group && !c.self_connections && post < c.n_pre;
    const std::uint32_t n = c.n_pre - (exclude_self ? 1 : 0);
    // Floyd's algorithm: k distinct values from [0, n) with exactly k draws.
    picks.clear();
    for (std::uint32_t j = n - k; j < n; ++j) {
      const auto r = static_cast<std::uint32_t>(rng.below(std::uint64_t{j} + 1));
      const std::uint32_t pick = chosen[r] ? j : r;
      chosen[pick] = 1;
      picks.push_back(pick);
    }
    for (std::uint32_t pick : picks) {
      chosen[pick] = 0;
      const std::uint32_t pre = (exclude_self && pick >= post) ? pick + 1 : pick;
      edges.push_back({pre, post});
    }
  }
  return edges;
}

namespace {

std::vector<std::string> split_csv(const std::string& line) {
  std::vector<std::string> cells;
  std::stringstream ss(line);
  std::string cell;
  while (std::getline(ss, cell, ',')) {
    while (!cell.empty() && (cell.back() == ' ' || cell.back() == '\r')) cell.pop_back();
    while (!cell.empty() && cell.front() == ' ') cell.erase(cell.begin());
    cells.push_back(cell);
  }
  return cells;
}

// "weight [nA]" -> SI factor of the bracketed unit with the expected dimension.
double column_unit(const std::string& header, Dimension dim, const SourcePosition& where) {
  auto open = header.find('['), close = header.find(']');
  if (open == std::string::npos || close == std::string::npos || close < open)
    throw UserError(where, header, fmt::format("column needs its unit in brackets, e.g. \"{} [{}]\"",
                                               header.substr(0, header.find(' ')), example_unit(dim)));
  std::string why;
  auto q = parse_quantity("1 " + header.substr(open + 1, close - open - 1), why);
  if (!q) throw UserError(where, header, why);
  if (q->dimension != dim)
    throw UserError(where, header, fmt::format("unit is a {}, expected a {}", dimension_name(q->dimension), dimension_name(dim)));
  return q->value_si;
}

}  // namespace

ConnectionList read_connection_list(const std::string& path, std::uint32_t n_pre, std::uint32_t n_post,
                                    RangePolicy* ranges) {
  std::istringstream in(read_input_text(path, "connection list"));
  ConnectionList list;
  std::string line;
  int row = 0;
  int weight_col = -1, delay_col = -1;
  double weight_unit = 1.0, delay_unit = 1.0;
  std::size_t columns = 0;
  while (std::getline(in, line)) {
    ++row;
    if (line.empty() || line[0] == '#') continue;
    const SourcePosition where{path, row, 0};
    auto cells = split_csv(line);
    if (columns == 0) {
      if (cells.size() < 2 || cells[0] != "pre" || cells[1] != "post")
        throw UserError(where, "", "the first line must be the header \"pre,post\" (optionally \",weight [nA],delay [ms]\")");
      for (std::size_t k = 2; k < cells.size(); ++k) {
        if (cells[k].starts_with("weight")) {
          weight_col = static_cast<int>(k);
          weight_unit = column_unit(cells[k], Dimension::current, where);
        } else if (cells[k].starts_with("delay")) {
          delay_col = static_cast<int>(k);
          delay_unit = column_unit(cells[k], Dimension::time, where);
        } else {
          throw UserError(where, cells[k], "unknown column; expected weight or delay");
        }
      }
      columns = cells.size();
      list.has_weight = weight_col >= 0;
      list.has_delay = delay_col >= 0;
      continue;
    }
    if (cells.size() != columns)
      throw UserError(where, "", fmt::format("expected {} values, found {}", columns, cells.size()));
    auto index = [&](std::size_t k, std::uint32_t bound, const char* name) {
      std::uint64_t v = 0;
      auto [end, ec] = std::from_chars(cells[k].data(), cells[k].data() + cells[k].size(), v);
      if (ec != std::errc{} || end != cells[k].data() + cells[k].size())
        throw UserError(where, name, fmt::format("'{}' is not a neuron index", cells[k]));
      if (v >= bound) throw UserError(where, name, fmt::format("index {} is outside 0..{}", v, bound - 1));
      return static_cast<std::uint32_t>(v);
    };
    auto number = [&](int k, const char* name) {
      double v = 0;
      auto [end, ec] = std::from_chars(cells[k].data(), cells[k].data() + cells[k].size(), v);
      if (ec != std::errc{} || end != cells[k].data() + cells[k].size() || !std::isfinite(v))
        throw UserError(where, name, fmt::format("'{}' is not a finite number", cells[k]));
      return v;
    };
    ListedConnection c;
    c.edge = {index(0, n_pre, "pre"), index(1, n_post, "post")};
    // Checked like model values; the message is only formatted for a value that fails.
    auto plausible = [&](double v, QuantityKind kind, const char* name) {
      if (!is_plausible(v, kind))
        check_plausible(v, kind, format_quantity(v, plausible_range(kind).dimension), where, name,
                        fmt::format("row {}", row), ranges);
    };
    if (weight_col >= 0) {
      c.weight = number(weight_col, "weight") * weight_unit;
      plausible(c.weight, QuantityKind::current, "weight");
    }
    if (delay_col >= 0) {
      c.delay = number(delay_col, "delay") * delay_unit;
      plausible(c.delay, QuantityKind::delay, "delay");
      if (!(c.delay > 0)) throw UserError(where, "delay", "delays must be positive");
    }
    list.rows.push_back(c);
  }
  if (columns == 0) throw UserError({path}, "", "the connection list is empty; expected a header \"pre,post\"");
  return list;
}

}  // namespace nvsyn
