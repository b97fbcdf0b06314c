#include "model/toml_prescan.hpp"

#include <fmt/format.h>
#include <string_view>

#include "core/error.hpp"
#include "core/machine_memory.hpp"

namespace nvsyn {
namespace {

// Characters that end a chain of key parts (besides line breaks).
bool ends_chain(char c) {
  switch (c) {
    case '=': case '[': case ']': case '{': case '}': case ',': case '#': return true;
    default: return false;
  }
}

}  // namespace

// One pass over the text, outside strings and comments, counting chains of the form
// part ( '.' part )* where a part is a run of bare-key characters or a quoted string
// and blanks may surround the dots. This over-approximates keys (a number such as
// 1.5 is a chain of two) but never under-counts one.
TomlShape prescan_toml(const std::string& text, const std::string& file_name, double memory_bytes) {
  TomlShape shape;
  int line = 1, column = 0;
  int parts = 0;            // parts of the chain so far; 0 outside a chain
  bool after_dot = false;   // the chain's last element is a dot, a part must follow
  bool in_part = false;     // inside a bare part
  int chain_line = 0, chain_column = 0;

  auto start_part = [&]() {
    if (parts > 0 && after_dot) {
      ++parts;
    } else {
      parts = 1;
      ++shape.values;
      chain_line = line;
      chain_column = column;
    }
    after_dot = false;
    if (parts > kMaxKeyParts)
      throw UserError({file_name, chain_line, chain_column}, "",
                      fmt::format("a key or table header of more than {} dot-separated parts nests tables deeper than "
                                  "nvsyn reads; model files use keys of a few parts such as [pathway.a_to_b.synapse]",
                                  kMaxKeyParts));
  };
  auto reset = [&]() {
    parts = 0;
    after_dot = false;
    in_part = false;
  };

  const std::size_t n = text.size();
  for (std::size_t i = 0; i < n; ++i) {
    const char c = text[i];
    ++column;
    if (c == '\n') {
      ++line;
      column = 0;
      reset();
      continue;
    }
    if (c == '#') {  // comment to the end of the line
      while (i + 1 < n && text[i + 1] != '\n') ++i;
      reset();
      continue;
    }
    if (c == '"' || c == '\'') {
      start_part();
      in_part = false;
      const bool multi_line = i + 2 < n && text[i + 1] == c && text[i + 2] == c;
      const std::string_view close = multi_line ? std::string_view(text.data() + i, 3) : std::string_view(&text[i], 1);
      i += close.size();
      column += static_cast<int>(close.size()) - 1;
      // Skip to the closing quote(s); basic strings have backslash escapes.
      for (; i < n; ++i) {
        ++column;
        if (text[i] == '\n') {
          ++line;
          column = 0;
          if (!multi_line) break;  // an unclosed single-line string: the parser reports it
          continue;
        }
        if (c == '"' && text[i] == '\\') {
          ++i;
          ++column;
          if (i < n && text[i] == '\n') {
            ++line;
            column = 0;
          }
          continue;
        }
        if (text.compare(i, close.size(), close) == 0) {
          i += close.size() - 1;
          column += static_cast<int>(close.size()) - 1;
          break;
        }
      }
      if (i < n && text[i] == '\n') reset();
      continue;
    }
    if (c == '.') {
      if (parts > 0 && !after_dot) after_dot = true;
      else reset();
      in_part = false;
      continue;
    }
    if (c == ' ' || c == '\t' || c == '\r') {
      in_part = false;
      continue;
    }
    if (ends_chain(c)) {
      reset();
      continue;
    }
    if (!in_part) {
      start_part();
      in_part = true;
    }
  }
  const double needed = static_cast<double>(shape.values) * kBytesPerTomlValue;
  if (memory_bytes > 0 && needed > memory_bytes)
    throw UserError({file_name}, "",
                    fmt::format("holds about {} values, which need an estimated {} of memory once parsed, more than "
                                "this machine's {}; give long lists in a connection list (CSV) instead",
                                shape.values, format_bytes(needed), format_bytes(memory_bytes)));
  return shape;
}

}  // namespace nvsyn