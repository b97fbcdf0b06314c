#pragma once
// Reads a model file (TOML) into a Model, checking its structure.
// Every problem is a UserError that names the file, line, column and key.
#include <string>

#include "model/model.hpp"

namespace nvsyn {

// Reads and checks the model file at `path`.
Model read_model_file(const std::string& path);

// Same, from text already in memory; `file_name` is used in messages and to
// resolve relative paths (connection lists) against its folder.
Model read_model_text(const std::string& text, const std::string& file_name);

}  // namespace nvsyn
