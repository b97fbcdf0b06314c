#pragma once
// A cheap pass over a TOML text before it is parsed, refusing the shapes that would
// crash or exhaust the machine while parsing instead of failing with a message.
//
// Depth. Tables nest through dotted keys and headers ([a.b.c...], a.b.c = 1) as well
// as through inline tables and arrays. toml++ bounds the nesting of values (inline
// tables, arrays) at 256 but not the number of parts of a key: a header of 100,000
// parts builds a chain of 100,000 tables whose parsing overflows the stack, a signal
// instead of a message. Model files need keys of a few parts, so a key of more than
// kMaxKeyParts parts is refused here, before toml++ sees the text; with toml++'s own
// bound (256 x 16 levels at most) this keeps every document shallow enough for its
// parser and for nvsyn's recursive conversion (toml_tables.cpp, which stops at
// kMaxTableDepth levels with a message).
//
// Size. Every value of a parsed document costs far more memory than its text: about
// 210 bytes per list item (toml++ node plus nvsyn's ParamValue with its source
// position; measured with `/usr/bin/time -v nvsyn check` on a list of 10^7 zeros,
// 2.08 GB resident). A text whose values would need more than the machine's physical
// memory is refused with the estimate.
#include <cstdint>
#include <string>

namespace nvsyn {

// Largest number of dot-separated parts of one key or table header.
inline constexpr int kMaxKeyParts = 16;

// Deepest nesting of tables and arrays that the conversion to ParamTables accepts.
inline constexpr int kMaxTableDepth = 64;

// Memory per value of a parsed document, for the size check (see above; rounded up).
inline constexpr double kBytesPerTomlValue = 256.0;

struct TomlShape {
  std::uint64_t values = 0;  // keys and values (chains of parts), an upper bound of the document's nodes
};

// Throws a UserError at file:line:col if some key or header of `text` has more than
// kMaxKeyParts parts, and at the file if its values would need more than
// `memory_bytes` (0: no size check) once parsed. Strings and comments are skipped;
// numbers and dates (1.5, 07:32:00.999) count as keys of two parts at most, so they
// never trip the depth check.
TomlShape prescan_toml(const std::string& text, const std::string& file_name, double memory_bytes);

}  // namespace nvsyn
