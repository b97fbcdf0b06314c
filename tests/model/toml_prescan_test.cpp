#include <catch2/catch.hpp>

#include <string>

#include "model/toml_prescan.hpp"
#include "model/toml_tables.hpp"

using namespace nvsyn;

namespace {

std::string dotted(const std::string& part, int parts) {
  std::string key = part;
  for (int k = 1; k < parts; ++k) key.append(".").append(part);
  return key;
}

// Concatenation by append (operator+ on literals trips a false -Wrestrict in GCC 12).
std::string join(std::initializer_list<std::string> pieces) {
  std::string out;
  for (const auto& piece : pieces) out.append(piece);
  return out;
}

}  // namespace

TEST_CASE("keys and headers of more than kMaxKeyParts parts are refused at their position", "[toml]") {
  CHECK_NOTHROW(prescan_toml(join({"[", dotted("a", kMaxKeyParts), "]\nb = 1\n"}), "m.toml", 0));
  CHECK_THROWS_WITH(prescan_toml(join({"x = 1\n[", dotted("a", kMaxKeyParts + 1), "]\n"}), "m.toml", 0),
                    Catch::Contains("m.toml:2:2") && Catch::Contains("dot-separated parts"));
  CHECK_THROWS_WITH(prescan_toml(join({"  ", dotted("a", kMaxKeyParts + 1), " = 1\n"}), "m.toml", 0),
                    Catch::Contains("m.toml:1:3"));
  // Blanks around the dots, quoted parts and keys inside inline tables count too.
  CHECK_THROWS(prescan_toml(join({dotted("a ", kMaxKeyParts + 1), "= 1\n"}), "m.toml", 0));
  CHECK_THROWS(prescan_toml(join({dotted("\"q\"", kMaxKeyParts + 1), " = 1\n"}), "m.toml", 0));
  CHECK_THROWS(prescan_toml(join({"x = { ", dotted("k", kMaxKeyParts + 1), " = 1 }\n"}), "m.toml", 0));
}

TEST_CASE("values, strings and comments full of dots are not keys", "[toml]") {
  const std::string many_dots = dotted("a", 100);
  CHECK_NOTHROW(prescan_toml(join({"x = \"", many_dots, "\"\n"}), "m.toml", 0));
  CHECK_NOTHROW(prescan_toml(join({"x = '", many_dots, "'\n"}), "m.toml", 0));
  CHECK_NOTHROW(prescan_toml(join({"x = \"\"\"\n", many_dots, "\n\"\"\"\n"}), "m.toml", 0));
  CHECK_NOTHROW(prescan_toml(join({"x = '''\n", many_dots, "\n'''\n"}), "m.toml", 0));
  CHECK_NOTHROW(prescan_toml(join({"x = \"a\\\"", many_dots, "\"\n"}), "m.toml", 0));  // escaped quote inside
  CHECK_NOTHROW(prescan_toml(join({"# ", many_dots, "\nx = 1\n"}), "m.toml", 0));
  CHECK_NOTHROW(prescan_toml("x = [1.5, 2.5e3, -0.5]\nt = 1979-05-27T07:32:00.999Z\n", "m.toml", 0));
}

TEST_CASE("a text whose values would not fit into memory is refused before parsing", "[toml]") {
  const std::string text = "x = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9]\n";
  CHECK(prescan_toml(text, "m.toml", 0).values == 11);  // the key and ten items
  CHECK_NOTHROW(prescan_toml(text, "m.toml", 11 * kBytesPerTomlValue));
  CHECK_THROWS_WITH(prescan_toml(text, "m.toml", 10 * kBytesPerTomlValue),
                    Catch::Contains("m.toml") && Catch::Contains("holds about 11 values"));
}

TEST_CASE("deeply nested documents end in a located error, not a crash", "[toml]") {
  for (int depth : {10'000, 100'000}) {
    INFO(depth);
    const std::string header = join({"[", dotted("a", depth), "]\nb = 1\n"});
    CHECK_THROWS_WITH(parse_toml_tables(header, "m.toml"), Catch::Contains("m.toml:1:2"));
    CHECK_THROWS_WITH(parse_toml_tables(join({dotted("a", depth), " = 1\n"}), "m.toml"), Catch::Contains("m.toml:1:1"));
    // Arrays and inline tables: toml++ stops at 256 nested values.
    CHECK_THROWS_WITH(parse_toml_tables(join({"x = ", std::string(depth, '['), std::string(depth, ']'), "\n"}), "m.toml"),
                      Catch::Contains("m.toml:1:"));
    std::string inline_tables = "x = ";
    for (int k = 0; k < depth; ++k) inline_tables += "{a=";
    inline_tables.append("1").append(std::string(depth, '}')).append("\n");
    CHECK_THROWS_WITH(parse_toml_tables(inline_tables, "m.toml"), Catch::Contains("m.toml:1:"));
  }
  // What both bounds let through is stopped by the conversion's depth limit.
  const std::string arrays =
      join({"x = ", std::string(kMaxTableDepth + 5, '['), std::string(kMaxTableDepth + 5, ']'), "\n"});
  CHECK_THROWS_WITH(parse_toml_tables(arrays, "m.toml"),
                    Catch::Contains("m.toml:1:") && Catch::Contains("nest more than"));
  std::string keyed = "x = ";
  for (int k = 0; k < 250; ++k) keyed.append("{").append(dotted("k", kMaxKeyParts)).append("=");
  keyed.append("1").append(std::string(250, '}')).append("\n");
  CHECK_THROWS_WITH(parse_toml_tables(keyed, "m.toml"), Catch::Contains("nest more than"));
  // Ordinary nesting converts.
  CHECK_NOTHROW(parse_toml_tables("[a.b.c]\nd = [[1, 2], [3]]\ne = { f = { g = 1 } }\n", "m.toml"));
}
