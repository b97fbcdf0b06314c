#include "core/error.hpp"

#include <fmt/format.h>

namespace nvsyn {

std::string format_user_error(const SourcePosition& where, const std::string& key,
                              const std::string& message) {
  std::string out;
  if (!where.file.empty()) {
    out += where.file;
    if (where.line > 0) {
      out += fmt::format(":{}", where.line);
      if (where.column > 0) out += fmt::format(":{}", where.column);
    }
    out += ": ";
  }
  out += "error: ";
  if (!key.empty()) out += fmt::format("'{}': ", key);
  out += message;
  return out;
}

UserError::UserError(SourcePosition where, std::string key, std::string message)
    : std::runtime_error(format_user_error(where, key, message)),
      where_(std::move(where)),
      key_(std::move(key)),
      message_(std::move(message)) {}

UserError UserError::with_context(const std::string& context) const {
  return UserError(where_, key_, message_ + " (" + context + ")");
}

}  // namespace nvsyn
