#pragma once
// A table of user-written parameters that remembers where each value came from.
//
// The model reader (src/model) fills ParamTables from the model file; each neuron,
// device or rule model then reads and validates its own parameters through this
// interface. Every error therefore names file, line, column and key, and models
// never see the file format. A table remembers which keys were read so that
// `reject_unknown_keys()` can point at a typo and suggest the closest valid key.
//
// Every quantity is read with its QuantityKind (core/plausible_range.hpp): the kind
// fixes the dimension and the plausible range, and the table's RangePolicy (shared by
// all tables of one model) decides whether a value outside the range is refused or
// accepted with a warning. Tables without a policy refuse.
#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <variant>
#include <vector>

#include "core/error.hpp"
#include "core/plausible_range.hpp"
#include "core/units.hpp"

namespace nvsyn {

class ParamTable;

struct ParamValue {
  using Array = std::vector<ParamValue>;
  std::variant<bool, std::int64_t, double, std::string, std::shared_ptr<Array>,
               std::shared_ptr<ParamTable>>
      value;
  SourcePosition where;

  bool is_string() const { return std::holds_alternative<std::string>(value); }
  bool is_number() const {
    return std::holds_alternative<double>(value) || std::holds_alternative<std::int64_t>(value);
  }
  bool is_table() const { return std::holds_alternative<std::shared_ptr<ParamTable>>(value); }
  bool is_array() const { return std::holds_alternative<std::shared_ptr<Array>>(value); }
  std::string_view type_name() const;
};

class ParamTable {
 public:
  ParamTable() = default;
  ParamTable(SourcePosition where, std::string context) : where_(std::move(where)), context_(std::move(context)) {}

  void set(const std::string& key, ParamValue value) { entries_[key] = std::move(value); }
  bool has(const std::string& key) const { return entries_.count(key) != 0; }
  const SourcePosition& where() const { return where_; }
  // Human description of the table, e.g. "population 'exc'".
  const std::string& context() const { return context_; }
  void set_context(std::string context) { context_ = std::move(context); }
  std::vector<std::string> keys() const;

  // Required and defaulted accessors. All mark the key as used and throw UserError
  // (with file:line:col and key) on a wrong type, unit or dimension, a non-finite
  // value, or (as the policy says) a value outside the kind's plausible range.
  // Fallbacks are the caller's defaults and are not checked.
  double quantity(const std::string& key, QuantityKind kind) const;
  double quantity_or(const std::string& key, QuantityKind kind, double fallback) const;
  std::optional<double> quantity_if(const std::string& key, QuantityKind kind) const;
  // Dimensionless kinds: plain TOML numbers.
  double number(const std::string& key, QuantityKind kind) const;
  double number_or(const std::string& key, QuantityKind kind, double fallback) const;
  // Whole numbers; structural ones (sizes, seeds, indices) without a kind, counts
  // that have a plausible range with theirs.
  std::int64_t integer(const std::string& key) const;
  std::int64_t integer_or(const std::string& key, std::int64_t fallback) const;
  std::int64_t integer_or(const std::string& key, QuantityKind kind, std::int64_t fallback) const;
  std::string text(const std::string& key) const;
  std::string text_or(const std::string& key, const std::string& fallback) const;
  bool flag_or(const std::string& key, bool fallback) const;
  const ParamValue& value(const std::string& key) const;       // required, any type
  const ParamValue* find(const std::string& key) const;        // optional, marks used
  std::shared_ptr<const ParamTable> table(const std::string& key) const;  // required sub-table
  const ParamValue::Array& array(const std::string& key) const;           // required array

  // Converts one value (an entry or an array item of this table) to a quantity of the
  // given kind, with the same checks as the accessors.
  double to_quantity(const ParamValue& v, const std::string& key, QuantityKind kind) const;

  // The policy for implausible values, shared by every table of one model file (and
  // the presets and lists it names); null: refuse them.
  void set_range_policy(std::shared_ptr<RangePolicy> policy) { ranges_ = std::move(policy); }
  const std::shared_ptr<RangePolicy>& range_policy() const { return ranges_; }

  // A new table holding this table's entries, replaced or extended by those of
  // `overrides` (each value keeps the position of the file it came from).
  std::shared_ptr<ParamTable> overlaid_with(const ParamTable& overrides, std::string context) const;

  // Marks a key as known without reading it (structure keys read elsewhere).
  void mark_used(const std::string& key) const { used_.insert(key); }

  // Throws for the first key nobody read, suggesting the closest read key.
  void reject_unknown_keys() const;

  // An error located at `key` (or at the table when the key is absent).
  UserError error(const std::string& key, const std::string& message) const;

 private:
  SourcePosition where_;
  std::string context_;
  std::map<std::string, ParamValue> entries_;
  mutable std::set<std::string> used_;
  std::shared_ptr<RangePolicy> ranges_;
};

// Edit distance, for "did you mean" suggestions.
std::size_t edit_distance(std::string_view a, std::string_view b);

}  // namespace nvsyn
