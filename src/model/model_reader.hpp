#pragma once
// Reads a model file (TOML) into a Model, checking its structure.
// Every problem is a UserError that names the file, line, column and key.
#include <string>

#include "model/model.hpp"

namespace nvsyn {

struct ModelReadOptions {
  // Accept values outside the plausible range of their kind with a warning instead
  // of an error (core/plausible_range.hpp); the model key
  // [simulation] allow_implausible = true does the same. Non-finite values stay errors.
  bool allow_implausible = false;
};

// Reads and checks the model file at `path`. Warnings about accepted implausible
// values collect in the returned model's `ranges`.
Model read_model_file(const std::string& path, const ModelReadOptions& options = {});

// Same, from text already in memory; `file_name` is used in messages and to
// resolve relative paths (connection lists) against its folder.
Model read_model_text(const std::string& text, const std::string& file_name, const ModelReadOptions& options = {});

}  // namespace nvsyn
