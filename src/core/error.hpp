#pragma once
// Two funnels for failure (DESIGN.md, "Errors"):
//  * UserError  - something the user can fix (model file, data file, command line).
//                 Carries the source position and the key; exit status 2.
//  * InternalError - a broken invariant inside nvsyn (NaN in a state, ...).
//                 Names the neuron, synapse or event and the model time; exit status 1.
#include <stdexcept>
#include <string>

namespace nvsyn {

// Where in a user's file something came from. line/column are 1-based; 0 = unknown.
struct SourcePosition {
  std::string file;
  int line = 0;
  int column = 0;
};

class UserError : public std::runtime_error {
 public:
  UserError(SourcePosition where, std::string key, std::string message);
  explicit UserError(std::string message) : UserError({}, {}, std::move(message)) {}

  const SourcePosition& where() const { return where_; }
  const std::string& key() const { return key_; }
  const std::string& message() const { return message_; }

  // Adds context gathered on the way up, e.g. "while building pathway 'exc_to_inh'".
  UserError with_context(const std::string& context) const;

 private:
  SourcePosition where_;
  std::string key_;
  std::string message_;
};

// "file:line:col: error: [key] message"; parts that are unknown are left out.
std::string format_user_error(const SourcePosition& where, const std::string& key,
                              const std::string& message);

class InternalError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace nvsyn
