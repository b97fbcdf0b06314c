#pragma once
// Conversion of parsed TOML into ParamTables (shared by the model and preset readers).
#include <memory>
#include <string>

#include "core/param_table.hpp"

namespace nvsyn {

// Parses TOML text; syntax errors become UserErrors at file:line:col.
std::shared_ptr<ParamTable> parse_toml_tables(const std::string& text, const std::string& file_name);

// Reads a whole file into memory; a UserError names the file if it cannot.
std::string read_text_file(const std::string& path, const std::string& what);

}  // namespace nvsyn
