#include "core/param_table.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace nvsyn {

std::string_view ParamValue::type_name() const {
  switch (value.index()) {
    case 0: return "boolean";
    case 1: return "integer";
    case 2: return "number";
    case 3: return "string";
    case 4: return "array";
    case 5: return "table";
  }
  return "?";
}

std::vector<std::string> ParamTable::keys() const {
  std::vector<std::string> out;
  for (const auto& [k, v] : entries_) out.push_back(k);
  return out;
}

UserError ParamTable::error(const std::string& key, const std::string& message) const {
  auto it = entries_.find(key);
  const SourcePosition& where = it != entries_.end() ? it->second.where : where_;
  std::string text = message;
  if (!context_.empty()) text += fmt::format(" (in {})", context_);
  return UserError(where, key, text);
}

const ParamValue* ParamTable::find(const std::string& key) const {
  used_.insert(key);
  auto it = entries_.find(key);
  return it == entries_.end() ? nullptr : &it->second;
}

const ParamValue& ParamTable::value(const std::string& key) const {
  const ParamValue* v = find(key);
  if (v) return *v;
  // A misspelt required key is reported here, before reject_unknown_keys() could
  // see it: point at the closest key nobody has read, if there is one.
  const std::pair<const std::string, ParamValue>* near = nullptr;
  std::size_t near_distance = 0;
  for (const auto& entry : entries_) {
    if (used_.count(entry.first)) continue;
    const std::size_t d = edit_distance(key, entry.first);
    if (d <= std::max<std::size_t>(2, key.size() / 3) && (!near || d < near_distance)) {
      near = &entry;
      near_distance = d;
    }
  }
  if (!near) throw error(key, "missing required key");
  std::string text = fmt::format("missing required key; is '{}' a misspelling of it?", near->first);
  if (!context_.empty()) text += fmt::format(" (in {})", context_);
  throw UserError(near->second.where, key, text);
}

namespace {

// The value in SI units of dimension `dim`, finite, or a UserError at the value.
double convert_quantity(const ParamValue& v, const std::string& key, Dimension dim) {
  auto wrong = [&](const std::string& why) {
    std::string expected =
        dim == Dimension::dimensionless
            ? std::string("a plain number")
            : fmt::format("a {} with its unit, e.g. \"5 {}\"", dimension_name(dim), example_unit(dim));
    return UserError(v.where, key, fmt::format("{}; expected {}", why, expected));
  };
  if (dim == Dimension::dimensionless) {
    if (const auto* d = std::get_if<double>(&v.value)) {
      if (!std::isfinite(*d)) throw wrong("value is not finite");
      return *d;
    }
    if (const auto* i = std::get_if<std::int64_t>(&v.value)) return static_cast<double>(*i);
    throw wrong(fmt::format("got a {}", v.type_name()));
  }
  if (v.is_number()) throw wrong("number without a unit");
  const auto* s = std::get_if<std::string>(&v.value);
  if (!s) throw wrong(fmt::format("got a {}", v.type_name()));
  std::string why;
  auto q = parse_quantity(*s, why);
  if (!q) throw wrong(why);
  if (q->dimension != dim)
    throw wrong(fmt::format("\"{}\" is a {}", *s, dimension_name(q->dimension)));
  return q->value_si;
}

// The value as the user wrote it, for messages.
std::string as_written(const ParamValue& v) {
  if (const auto* s = std::get_if<std::string>(&v.value)) return fmt::format("\"{}\"", *s);
  if (const auto* d = std::get_if<double>(&v.value)) return fmt::format("{:g}", *d);
  if (const auto* i = std::get_if<std::int64_t>(&v.value)) return fmt::format("{}", *i);
  return std::string(v.type_name());
}

}  // namespace

double ParamTable::to_quantity(const ParamValue& v, const std::string& key, QuantityKind kind) const {
  const double value = convert_quantity(v, key, plausible_range(kind).dimension);
  check_plausible(value, kind, as_written(v), v.where, key, context_, ranges_.get());
  return value;
}

double ParamTable::quantity(const std::string& key, QuantityKind kind) const {
  return to_quantity(value(key), key, kind);
}

double ParamTable::quantity_or(const std::string& key, QuantityKind kind, double fallback) const {
  const ParamValue* v = find(key);
  return v ? to_quantity(*v, key, kind) : fallback;
}

std::optional<double> ParamTable::quantity_if(const std::string& key, QuantityKind kind) const {
  const ParamValue* v = find(key);
  if (!v) return std::nullopt;
  return to_quantity(*v, key, kind);
}

double ParamTable::number(const std::string& key, QuantityKind kind) const {
  if (plausible_range(kind).dimension != Dimension::dimensionless)
    throw InternalError(fmt::format("'{}' of kind {} read as a plain number", key, plausible_range(kind).name));
  return quantity(key, kind);
}

double ParamTable::number_or(const std::string& key, QuantityKind kind, double fallback) const {
  return find(key) ? number(key, kind) : fallback;
}

std::int64_t ParamTable::integer(const std::string& key) const {
  const ParamValue& v = value(key);
  if (const auto* i = std::get_if<std::int64_t>(&v.value)) return *i;
  throw UserError(v.where, key, fmt::format("expected a whole number, got a {}", v.type_name()));
}

std::int64_t ParamTable::integer_or(const std::string& key, std::int64_t fallback) const {
  return find(key) ? integer(key) : fallback;
}

std::int64_t ParamTable::integer_or(const std::string& key, QuantityKind kind, std::int64_t fallback) const {
  if (!find(key)) return fallback;
  const std::int64_t n = integer(key);
  const ParamValue& v = value(key);
  check_plausible(static_cast<double>(n), kind, as_written(v), v.where, key, context_, ranges_.get());
  return n;
}

std::string ParamTable::text(const std::string& key) const {
  const ParamValue& v = value(key);
  if (const auto* s = std::get_if<std::string>(&v.value)) return *s;
  throw UserError(v.where, key, fmt::format("expected a string, got a {}", v.type_name()));
}

std::string ParamTable::text_or(const std::string& key, const std::string& fallback) const {
  return find(key) ? text(key) : fallback;
}

bool ParamTable::flag_or(const std::string& key, bool fallback) const {
  const ParamValue* v = find(key);
  if (!v) return fallback;
  if (const auto* b = std::get_if<bool>(&v->value)) return *b;
  throw UserError(v->where, key, fmt::format("expected true or false, got a {}", v->type_name()));
}

std::shared_ptr<const ParamTable> ParamTable::table(const std::string& key) const {
  const ParamValue& v = value(key);
  if (const auto* t = std::get_if<std::shared_ptr<ParamTable>>(&v.value)) return *t;
  throw UserError(v.where, key, fmt::format("expected a table, got a {}", v.type_name()));
}

const ParamValue::Array& ParamTable::array(const std::string& key) const {
  const ParamValue& v = value(key);
  if (const auto* a = std::get_if<std::shared_ptr<ParamValue::Array>>(&v.value)) return **a;
  throw UserError(v.where, key, fmt::format("expected an array, got a {}", v.type_name()));
}

std::shared_ptr<ParamTable> ParamTable::overlaid_with(const ParamTable& overrides, std::string context) const {
  auto out = std::make_shared<ParamTable>(overrides.where_, std::move(context));
  out->ranges_ = overrides.ranges_ ? overrides.ranges_ : ranges_;
  out->entries_ = entries_;
  for (const auto& [key, value] : overrides.entries_) out->entries_[key] = value;
  return out;
}

std::size_t edit_distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diag = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t up = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diag + (a[i - 1] == b[j - 1] ? 0u : 1u)});
      diag = up;
    }
  }
  return row[b.size()];
}

void ParamTable::reject_unknown_keys() const {
  for (const auto& [key, v] : entries_) {
    if (used_.count(key)) continue;
    std::string best;
    std::size_t best_distance = 0;
    for (const auto& known : used_) {
      const std::size_t d = edit_distance(key, known);
      if (best.empty() || d < best_distance) {
        best = known;
        best_distance = d;
      }
    }
    std::string message = "unknown key";
    if (!best.empty() && best_distance <= std::max<std::size_t>(2, key.size() / 3))
      message += fmt::format("; did you mean '{}'?", best);
    else if (!used_.empty()) {
      std::string list;
      for (const auto& known : used_) list += (list.empty() ? "" : ", ") + known;
      message += fmt::format("; valid keys here: {}", list);
    }
    throw error(key, message);
  }
}

}  // namespace nvsyn
