#include "model/toml_tables.hpp"

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <sstream>
#include <toml++/toml.h>

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

ParamValue convert(const toml::node& node, const std::string& key, const std::string& file,
                   const std::string& context);

std::shared_ptr<ParamTable> convert_table(const toml::table& table, const std::string& file,
                                          const std::string& context) {
  auto out = std::make_shared<ParamTable>(position_of(table.source(), file), context);
  for (auto&& [key, node] : table) {
    ParamValue v = convert(node, std::string(key.str()), file, context);
    // Point at the key: that is where a reader looks for "unknown key" and type errors.
    v.where = position_of(key.source(), file);
    if (v.where.line == 0) v.where = position_of(node.source(), file);
    out->set(std::string(key.str()), std::move(v));
  }
  return out;
}

// `key` names the value in messages (array items carry their array's key).
ParamValue convert(const toml::node& node, const std::string& key, const std::string& file,
                   const std::string& context) {
  ParamValue v;
  v.where = position_of(node.source(), file);
  if (auto s = node.as_string()) v.value = s->get();
  else if (auto i = node.as_integer()) v.value = i->get();
  else if (auto d = node.as_floating_point()) v.value = d->get();
  else if (auto b = node.as_boolean()) v.value = b->get();
  else if (auto t = node.as_table()) v.value = convert_table(*t, file, context);
  else if (auto a = node.as_array()) {
    auto items = std::make_shared<ParamValue::Array>();
    for (const auto& item : *a) items->push_back(convert(item, key, file, context));
    v.value = items;
  } else {
    throw UserError(v.where, key,
                    "dates and times of day are not used in model files (a duration is a quoted quantity such as \"20 ms\")");
  }
  return v;
}

}  // namespace

std::shared_ptr<ParamTable> parse_toml_tables(const std::string& text, const std::string& file_name) {
  toml::table doc;
  try {
    doc = toml::parse(text, file_name);
  } catch (const toml::parse_error& e) {
    const SourcePosition where = position_of(e.source(), file_name);
    throw UserError(where, "", fmt::format("TOML syntax: {}{}", e.description(), syntax_hint(text, where.line)));
  }
  return convert_table(doc, file_name, "");
}

std::string read_text_file(const std::string& path, const std::string& what) {
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec)) throw UserError({path}, "", fmt::format("is a folder, not a {}", what));
  std::ifstream in(path, std::ios::binary);
  if (!in) throw UserError({path}, "", fmt::format("cannot read the {}: {}", what, std::strerror(errno)));
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

}  // namespace nvsyn
