#pragma once
// Conversion of parsed TOML into ParamTables (shared by the model and preset readers).
#include <memory>
#include <string>

#include "core/param_table.hpp"

namespace nvsyn {

// Parses TOML text; syntax errors, and nesting or sizes beyond the bounds of
// toml_prescan.hpp, become UserErrors at file:line:col. Every table gets `ranges` as its policy for
// implausible values (null: refuse them).
std::shared_ptr<ParamTable> parse_toml_tables(const std::string& text, const std::string& file_name,
                                              std::shared_ptr<RangePolicy> ranges = nullptr);

// Reads a whole text file into memory (read_input_text: regular files only, at most
// kMaxTextInputBytes); a UserError names the file if it cannot.
std::string read_text_file(const std::string& path, const std::string& what);

}  // namespace nvsyn
