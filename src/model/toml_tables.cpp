#include "model/toml_tables.hpp"

#include <fmt/format.h>
#include <sstream>
#include <toml++/toml.h>

#include "core/input_file.hpp"
#include "core/machine_memory.hpp"
#include "model/toml_prescan.hpp"

namespace nvsyn {
namespace {

SourcePosition position_of(const toml::source_region& region, const std::string& file) {
  return {file, static_cast<int>(region.begin.line), static_cast<int>(region.begin.column)};
}

// When a string lacks its closing quote the parser speaks of control characters
// (the string runs into the line break); a hint names the likely cause.
std::string syntax_hint(const std::string& text, int line) {
  std::istringstream in(text);
  std::string row;
  for (int k = 0; k < line && std::getline(in, row); ++k) {
  }
  char open = 0;  // the quote of the string being scanned, 0 outside strings
  for (std::size_t i = 0; i < row.size(); ++i) {
    const char c = row[i];
    if (!open) {
      if (c == '#') break;
      if (c == '"' || c == '\'') open = c;
    } else if (c == '\\' && open == '"') {
      ++i;
    } else if (c == open) {
      open = 0;
    }
  }
  return open ? fmt::format("; is the closing {} missing on this line?", open) : "";
}

// What every converted table shares: the file for positions and the model's policy
// for implausible values.
struct Conversion {
  const std::string& file;
  const std::shared_ptr<RangePolicy>& ranges;
};

ParamValue convert(const toml::node& node, const std::string& key, const Conversion& c, const std::string& context,
                   int depth);

std::shared_ptr<ParamTable> convert_table(const toml::table& table, const Conversion& c, const std::string& context,
                                          int depth) {
  auto out = std::make_shared<ParamTable>(position_of(table.source(), c.file), context);
  out->set_range_policy(c.ranges);
  for (auto&& [key, node] : table) {
    ParamValue v = convert(node, std::string(key.str()), c, context, depth + 1);
    // Point at the key: that is where a reader looks for "unknown key" and type errors.
    v.where = position_of(key.source(), c.file);
    if (v.where.line == 0) v.where = position_of(node.source(), c.file);
    out->set(std::string(key.str()), std::move(v));
  }
  return out;
}

// `key` names the value in messages (array items carry their array's key). The
// recursion is bounded: prescan_toml and toml++ keep documents shallow, and
// kMaxTableDepth stops whatever still nests deeper with a message.
ParamValue convert(const toml::node& node, const std::string& key, const Conversion& c, const std::string& context,
                   int depth) {
  ParamValue v;
  v.where = position_of(node.source(), c.file);
  if (depth > kMaxTableDepth)
    throw UserError(v.where, key,
                    fmt::format("tables and arrays nest more than {} levels deep here; model files need a few levels",
                                kMaxTableDepth));
  if (auto s = node.as_string()) v.value = s->get();
  else if (auto i = node.as_integer()) v.value = i->get();
  else if (auto d = node.as_floating_point()) v.value = d->get();
  else if (auto b = node.as_boolean()) v.value = b->get();
  else if (auto t = node.as_table()) v.value = convert_table(*t, c, context, depth);
  else if (auto a = node.as_array()) {
    auto items = std::make_shared<ParamValue::Array>();
    for (const auto& item : *a) items->push_back(convert(item, key, c, context, depth + 1));
    v.value = items;
  } else {
    throw UserError(v.where, key,
                    "dates and times of day are not used in model files (a duration is a quoted quantity such as \"20 ms\")");
  }
  return v;
}

}  // namespace

std::shared_ptr<ParamTable> parse_toml_tables(const std::string& text, const std::string& file_name,
                                              std::shared_ptr<RangePolicy> ranges) {
  prescan_toml(text, file_name, static_cast<double>(physical_memory_bytes()));
  toml::table doc;
  try {
    doc = toml::parse(text, file_name);
  } catch (const toml::parse_error& e) {
    const SourcePosition where = position_of(e.source(), file_name);
    throw UserError(where, "", fmt::format("TOML syntax: {}{}", e.description(), syntax_hint(text, where.line)));
  }
  return convert_table(doc, Conversion{file_name, ranges}, "", 0);
}

std::string read_text_file(const std::string& path, const std::string& what) { return read_input_text(path, what); }

}  // namespace nvsyn
