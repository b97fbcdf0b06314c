#include "model/model_reader.hpp"

#include <algorithm>
#include <cstring>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <limits>
#include <set>
#include <sstream>

#include "core/input_file.hpp"
#include "model/device_preset.hpp"
#include "model/toml_tables.hpp"

namespace nvsyn {
namespace {

// Named sub-tables of a section such as [population.exc], in file order.
std::vector<std::pair<std::string, std::shared_ptr<const ParamTable>>> named_tables(
    const ParamTable& root, const std::string& section, const std::string& singular) {
  std::vector<std::pair<std::string, std::shared_ptr<const ParamTable>>> out;
  const ParamValue* v = root.find(section);
  if (!v) return out;
  if (!v->is_table())
    throw UserError(v->where, section,
                    fmt::format("expected tables such as [{}.<name>], got a {}", section, v->type_name()));
  const auto& t = *std::get<std::shared_ptr<ParamTable>>(v->value);
  for (const auto& name : t.keys()) {
    const ParamValue& item = t.value(name);
    if (!item.is_table())
      throw UserError(item.where, name,
                      fmt::format("expected a table [{}.{}] describing a {}", section, name, singular));
    auto sub = std::get<std::shared_ptr<ParamTable>>(item.value);
    sub->set_context(fmt::format("{} '{}'", singular, name));
    out.emplace_back(name, sub);
  }
  std::sort(out.begin(), out.end(), [](const auto& a, const auto& b) {
    return std::pair(a.second->where().line, a.second->where().column) <
           std::pair(b.second->where().line, b.second->where().column);
  });
  return out;
}

std::uint32_t positive_count(const ParamTable& t, const std::string& key) {
  const std::int64_t n = t.integer(key);
  if (n <= 0) throw t.error(key, fmt::format("must be a positive whole number, got {}", n));
  if (n > std::int64_t{1} << 31)
    throw t.error(key, fmt::format("{} is too large: sizes and counts are stored in 32 bits and may be at most 2^31 = {}",
                                   n, std::int64_t{1} << 31));
  return static_cast<std::uint32_t>(n);
}

// Neurons and sources get group-global ids in 32 bits: their total must fit.
void check_total_size(const Model& model) {
  std::uint64_t total = 0;
  const ParamTable* largest = nullptr;
  std::uint32_t largest_size = 0;
  auto add = [&](std::uint32_t size, const ParamTable& t) {
    total += size;
    if (size >= largest_size) {
      largest_size = size;
      largest = &t;
    }
  };
  for (const PopulationSpec& p : model.populations) add(p.size, *p.table);
  for (const InputSpec& in : model.inputs)
    if (in.emits_spikes()) add(in.size, *in.table);
  if (total > std::numeric_limits<std::uint32_t>::max())
    throw largest->error("size", fmt::format("the populations and inputs hold {} neurons and sources together, more than "
                                             "the {} that nvsyn numbers in 32 bits",
                                             total, std::numeric_limits<std::uint32_t>::max()));
}

// Whole numbers >= 0 of an array, each within what `Index` (the storage) holds:
// an index that does not fit is an error at its position, never a silent wrap.
template <typename Index>
std::vector<Index> index_list(const ParamTable& t, const std::string& key, const char* what) {
  std::vector<Index> out;
  for (const ParamValue& item : t.array(key)) {
    const auto* i = std::get_if<std::int64_t>(&item.value);
    if (!i || *i < 0) throw UserError(item.where, key, fmt::format("expected a list of {} indices (whole numbers >= 0)", what));
    if (static_cast<std::uint64_t>(*i) > std::numeric_limits<Index>::max())
      throw UserError(item.where, key, fmt::format("{} index {} exceeds the largest that nvsyn stores ({})", what, *i,
                                                   std::numeric_limits<Index>::max()));
    out.push_back(static_cast<Index>(*i));
  }
  return out;
}

std::vector<std::string> name_list(const ParamTable& t, const std::string& key) {
  std::vector<std::string> out;
  for (const ParamValue& item : t.array(key)) {
    if (!item.is_string()) throw UserError(item.where, key, "expected a list of names (strings)");
    out.push_back(std::get<std::string>(item.value));
  }
  return out;
}

SimulationSpec read_simulation(const ParamTable& root) {
  SimulationSpec sim;
  const ParamValue* v = root.find("simulation");
  if (!v)
    throw UserError(root.where(), "simulation",
                    "the model has no [simulation] table; add one with a 'duration' such as \"1 s\" (and optionally a 'seed')");
  auto t = root.table("simulation");
  sim.table = t;
  // The overrides come first: they decide how the values below are checked.
  sim.allow_implausible = t->flag_or("allow_implausible", false);
  sim.allow_large_run = t->flag_or("allow_large_run", false);
  if (sim.allow_implausible && t->range_policy()) t->range_policy()->allow_implausible(true);
  sim.duration = t->quantity("duration", QuantityKind::duration);
  if (!(sim.duration > 0)) throw t->error("duration", "must be positive");
  const std::int64_t seed = t->integer_or("seed", 1);
  if (seed < 0) throw t->error("seed", "must be a whole number >= 0");
  sim.seed = static_cast<std::uint64_t>(seed);
  t->reject_unknown_keys();
  return sim;
}

void read_populations(const ParamTable& root, Model& model) {
  for (auto& [name, t] : named_tables(root, "population", "population")) {
    PopulationSpec p;
    p.name = name;
    p.size = positive_count(*t, "size");
    p.neuron_model = t->text_or("neuron", "lif");
    p.table = t;
    model.populations.push_back(std::move(p));
  }
  if (model.populations.empty())
    throw UserError(root.where(), "population", "the model has no population; add a table such as [population.exc]");
}

std::vector<CurrentStep> read_steps(const ParamTable& t) {
  std::vector<CurrentStep> steps;
  if (t.has("amplitude")) {
    steps.push_back({0.0, t.quantity("amplitude", QuantityKind::current)});
    if (t.has("steps")) throw t.error("steps", "give either 'amplitude' or 'steps', not both");
    return steps;
  }
  const auto& items = t.array("steps");
  for (const ParamValue& item : items) {
    const auto* pair = std::get_if<std::shared_ptr<ParamValue::Array>>(&item.value);
    if (!pair || (*pair)->size() != 2)
      throw UserError(item.where, "steps", "each step is a pair [\"<time>\", \"<current>\"], e.g. [\"100 ms\", \"0.5 nA\"]");
    CurrentStep s{t.to_quantity((**pair)[0], "steps", QuantityKind::time_point),
                  t.to_quantity((**pair)[1], "steps", QuantityKind::current)};
    if (s.time < 0) throw UserError(item.where, "steps", "step times must not be negative");
    if (!steps.empty() && s.time <= steps.back().time)
      throw UserError(item.where, "steps", fmt::format("step times must increase, but {} follows {}",
                                                       format_quantity(s.time, Dimension::time),
                                                       format_quantity(steps.back().time, Dimension::time)));
    steps.push_back(s);
  }
  if (steps.empty()) throw t.error("steps", "needs at least one step");
  return steps;
}

// times = ["10 ms", "30 ms"] (one source) or [["10 ms"], ["12 ms", "40 ms"]] (one list per source).
std::vector<std::vector<double>> read_spike_times(const ParamTable& t) {
  const auto& items = t.array("times");
  std::vector<std::vector<double>> trains;
  const bool nested = !items.empty() && items[0].is_array();
  auto read_train = [&](const ParamValue::Array& list) {
    std::vector<double> train;
    for (const ParamValue& v : list) {
      const double at = t.to_quantity(v, "times", QuantityKind::time_point);
      if (at < 0) throw UserError(v.where, "times", "spike times must not be negative");
      if (!train.empty() && at <= train.back())
        throw UserError(v.where, "times", fmt::format("spike times of a source must increase: {} follows {}",
                                                      format_quantity(at, Dimension::time),
                                                      format_quantity(train.back(), Dimension::time)));
      train.push_back(at);
    }
    return train;
  };
  if (nested) {
    for (const ParamValue& v : items) {
      if (!v.is_array()) throw UserError(v.where, "times", "mix of lists and single times; give one list per source");
      trains.push_back(read_train(*std::get<std::shared_ptr<ParamValue::Array>>(v.value)));
    }
  } else {
    trains.push_back(read_train(items));
  }
  if (trains.empty()) throw t.error("times", "needs at least one source");
  return trains;
}

void read_inputs(const ParamTable& root, Model& model) {
  for (auto& [name, t] : named_tables(root, "input", "input")) {
    InputSpec in;
    in.name = name;
    in.table = t;
    if (model.find_population(name))
      throw t->error("", fmt::format("input '{}' has the same name as a population", name));
    const std::string kind = t->text("kind");
    if (kind == "poisson") {
      in.kind = InputKindSpec::poisson;
      in.size = positive_count(*t, "size");
      in.rate = t->quantity("rate", QuantityKind::rate);
      if (in.rate < 0) throw t->error("rate", "a rate cannot be negative");
      in.start = t->quantity_or("start", QuantityKind::time_point, 0.0);
      in.stop = t->quantity_or("stop", QuantityKind::time_point, -1.0);
      if (in.start < 0) throw t->error("start", "must not be negative");
      if (t->has("stop") && in.stop <= in.start) throw t->error("stop", "must be later than 'start'");
    } else if (kind == "current") {
      in.kind = InputKindSpec::current;
      in.target = t->text("target");
      const PopulationSpec* target = model.find_population(in.target);
      if (!target) throw t->error("target", fmt::format("no population named '{}'", in.target));
      if (t->has("neurons")) {
        in.neurons = index_list<std::uint32_t>(*t, "neurons", "neuron");
        for (auto n : in.neurons)
          if (n >= target->size)
            throw t->error("neurons", fmt::format("neuron {} is outside population '{}' of size {}", n, in.target, target->size));
      }
      in.steps = read_steps(*t);
    } else if (kind == "times") {
      in.kind = InputKindSpec::times;
      in.spike_times = read_spike_times(*t);
      in.size = static_cast<std::uint32_t>(in.spike_times.size());
    } else if (kind == "regular") {
      in.kind = InputKindSpec::regular;
      in.size = positive_count(*t, "size");
      in.rate = t->quantity("rate", QuantityKind::rate);
      if (!(in.rate > 0)) throw t->error("rate", "a regular train needs a positive rate");
      in.start = t->quantity_or("start", QuantityKind::time_point, 0.0);
      if (in.start < 0) throw t->error("start", "must not be negative");
      in.count = positive_count(*t, "count");
    } else {
      throw t->error("kind", fmt::format("unknown input kind '{}'; expected poisson, regular, times or current", kind));
    }
    t->reject_unknown_keys();
    model.inputs.push_back(std::move(in));
  }
}

std::uint32_t group_size(const Model& model, const std::string& name) {
  if (auto p = model.find_population(name)) return p->size;
  if (auto i = model.find_input(name)) return i->emits_spikes() ? i->size : 0;
  return 0;
}

// A sub-table that the model keeps, with a context for its messages.
std::shared_ptr<ParamTable> sub_table(const ParamTable& parent, const std::string& key, const std::string& context) {
  const ParamValue& v = parent.value(key);
  if (!v.is_table()) throw UserError(v.where, key, fmt::format("expected a table, got a {}", v.type_name()));
  auto table = std::get<std::shared_ptr<ParamTable>>(v.value);
  table->set_context(context);
  return table;
}

// [pathway.<name>.synapse]: a device preset (or an inline [..synapse.device] table)
// with overrides. The layout, gain and policy keys are read when the network is built.
void read_synapse(const ParamTable& pathway, PathwaySpec& p, const std::string& file) {
  auto synapse = sub_table(pathway, "synapse", fmt::format("synapse of pathway '{}'", p.name));
  std::shared_ptr<ParamTable> base = std::make_shared<ParamTable>();
  if (synapse->has("preset")) {
    const ParamValue& ref = synapse->value("preset");
    const DevicePreset preset = read_device_preset(synapse->text("preset"),
                                                   std::filesystem::path(file).parent_path().string(), ref.where,
                                                   synapse->range_policy());
    base = preset.device;
    p.device_preset = preset.name;
    p.device_preset_file = preset.file;
    p.device_preset_text = preset.text;
  }
  std::shared_ptr<const ParamTable> overrides;
  if (synapse->has("device")) overrides = synapse->table("device");
  if (!synapse->has("preset") && !overrides)
    throw synapse->error("preset", "a synapse needs a device: 'preset = \"<name or file>\"' or a [pathway." + p.name +
                                       ".synapse.device] table with 'model'");
  p.device = base->overlaid_with(overrides ? *overrides : ParamTable(),
                                 fmt::format("device of pathway '{}'", p.name));
  p.synapse = synapse;
}

void read_pathways(const ParamTable& root, Model& model, const std::string& file) {
  for (auto& [name, t] : named_tables(root, "pathway", "pathway")) {
    PathwaySpec p;
    p.name = name;
    p.table = t;
    p.from = t->text("from");
    p.to = t->text("to");
    const InputSpec* input = model.find_input(p.from);
    if (!model.find_population(p.from) && !input)
      throw t->error("from", fmt::format("no population or input named '{}'", p.from));
    if (input && !input->emits_spikes())
      throw t->error("from", fmt::format("input '{}' injects current and emits no spikes; it cannot start a pathway", p.from));
    const PopulationSpec* target = model.find_population(p.to);
    if (!target) throw t->error("to", fmt::format("no population named '{}'", p.to));
    p.receptor = t->text_or("receptor", "excitatory");
    if (p.receptor != "excitatory" && p.receptor != "inhibitory")
      throw t->error("receptor", fmt::format("unknown receptor '{}'; expected excitatory or inhibitory", p.receptor));

    const std::string wiring = t->text("wiring");
    const std::uint32_t n_from = group_size(model, p.from), n_to = target->size;
    if (wiring == "one_to_one") {
      p.wiring = WiringRule::one_to_one;
      if (n_from != n_to)
        throw t->error("wiring", fmt::format("one_to_one needs equal sizes, but '{}' has {} and '{}' has {}", p.from, n_from, p.to, n_to));
    } else if (wiring == "all_to_all") {
      p.wiring = WiringRule::all_to_all;
    } else if (wiring == "random") {
      p.wiring = WiringRule::random;
      p.probability = t->number("p", QuantityKind::fraction);
      if (!(p.probability >= 0.0 && p.probability <= 1.0))
        throw t->error("p", fmt::format("a connection probability must lie in [0, 1], got {}", p.probability));
    } else if (wiring == "in_degree") {
      p.wiring = WiringRule::in_degree;
      p.in_degree = positive_count(*t, "in_degree");
      p.self_connections = t->flag_or("self_connections", false);
      const std::uint32_t available = n_from - ((p.from == p.to && !p.self_connections) ? 1 : 0);
      if (p.in_degree > available)
        throw t->error("in_degree", fmt::format("{} inputs per neuron requested but '{}' offers only {}", p.in_degree, p.from, available));
    } else if (wiring == "list") {
      p.wiring = WiringRule::list;
      const std::string list = t->text("file");
      std::filesystem::path resolved = std::filesystem::path(file).parent_path() / list;
      p.list_file = std::filesystem::path(list).is_absolute() ? list : resolved.string();
      std::error_code ec;
      if (!std::filesystem::exists(p.list_file, ec))
        throw t->error("file", fmt::format("no connection list at '{}'{}", p.list_file,
                                           std::filesystem::path(list).is_absolute() ? "" : " (relative paths start at the model file's folder)"));
      if (auto problem = input_file_problem(p.list_file, "connection list"))
        throw t->error("file", fmt::format("'{}' {}", p.list_file, *problem));
    } else {
      throw t->error("wiring", fmt::format("unknown wiring '{}'; expected one_to_one, all_to_all, random, in_degree or list", wiring));
    }
    if (p.wiring != WiringRule::in_degree) p.self_connections = t->flag_or("self_connections", false);

    // Weights are current jumps; their sign follows the receptor.
    if (p.wiring != WiringRule::list || t->has("weight")) {
      p.weight = read_distribution(*t, "weight", QuantityKind::current);
      const bool excitatory = p.receptor == "excitatory";
      if (excitatory) {
        if (p.weight.max_value() < 0) throw t->error("weight", "an excitatory weight must not be negative");
        p.weight.low = std::max(p.weight.low, 0.0);
      } else {
        if (p.weight.min_value() > 0) throw t->error("weight", "an inhibitory weight must not be positive (write it with a minus sign)");
        p.weight.high = std::min(p.weight.high, 0.0);
      }
    }
    if (p.wiring != WiringRule::list || t->has("delay")) {
      p.delay = read_distribution(*t, "delay", QuantityKind::delay);
      if (!(p.delay.min_value() > 0))
        throw t->error("delay", p.delay.is_constant()
                                    ? "delays must be positive (spikes need time to travel)"
                                    : "a delay distribution must exclude zero: give 'low' > 0");
    }
    if (t->has("synapse")) read_synapse(*t, p, file);
    if (t->has("plasticity"))
      p.plasticity = sub_table(*t, "plasticity", fmt::format("plasticity of pathway '{}'", p.name));
    if (t->has("short_term"))
      p.short_term = sub_table(*t, "short_term", fmt::format("short-term plasticity of pathway '{}'", p.name));
    t->reject_unknown_keys();
    model.pathways.push_back(std::move(p));
  }
}

void read_record(const ParamTable& root, Model& model) {
  for (const auto& p : model.populations) model.record.spike_populations.push_back(p.name);
  if (!root.has("record")) return;
  auto t = root.table("record");
  if (t->has("spikes")) {
    model.record.spike_populations = name_list(*t, "spikes");
    for (const auto& name : model.record.spike_populations)
      if (!model.find_population(name)) throw t->error("spikes", fmt::format("no population named '{}'", name));
  }
  model.record.connectivity = t->flag_or("connectivity", true);
  if (t->has("weights")) {
    const ParamValue& weights = t->value("weights");
    if (!weights.is_table()) throw UserError(weights.where, "weights", "expected tables such as [record.weights.<name>]");
    const auto& wt = *std::get<std::shared_ptr<ParamTable>>(weights.value);
    for (const auto& name : wt.keys()) {
      auto table = wt.table(name);
      WeightRecordSpec w;
      w.table = table;
      w.pathway = table->text("pathway");
      auto path = std::find_if(model.pathways.begin(), model.pathways.end(),
                               [&](const PathwaySpec& p) { return p.name == w.pathway; });
      if (path == model.pathways.end()) throw table->error("pathway", fmt::format("no pathway named '{}'", w.pathway));
      for (const auto& other : model.record.weights)
        if (other.pathway == w.pathway)
          throw table->error("pathway", fmt::format("pathway '{}' already has a weight recording; give one table "
                                                    "per pathway", w.pathway));
      if (table->has("synapses")) {
        const ParamValue& v = table->value("synapses");
        if (v.is_string() && std::get<std::string>(v.value) == "all") {
          w.all_synapses = true;
        } else {
          w.synapses = index_list<std::uint64_t>(*table, "synapses", "synapse");
        }
      } else {
        w.all_synapses = true;
      }
      w.interval = table->quantity_or("interval", QuantityKind::interval, 0.0);
      if (w.interval < 0) throw table->error("interval", "must not be negative (0: no periodic samples)");
      w.every_change = table->flag_or("every_change", false);
      if (table->has("snapshots"))
        for (const ParamValue& item : table->array("snapshots")) {
          const double at = table->to_quantity(item, "snapshots", QuantityKind::time_point);
          if (at < 0) throw UserError(item.where, "snapshots", "snapshot times must not be negative");
          w.snapshots.push_back(at);
        }
      std::sort(w.snapshots.begin(), w.snapshots.end());
      if (w.interval == 0 && !w.every_change && w.snapshots.empty())
        throw table->error("interval", "records nothing: give 'interval', 'every_change = true' or 'snapshots'");
      table->reject_unknown_keys();
      model.record.weights.push_back(std::move(w));
    }
  }
  if (t->has("trace")) {
    const ParamValue& traces = t->value("trace");
    if (!traces.is_table()) throw UserError(traces.where, "trace", "expected tables such as [record.trace.<name>]");
    auto& tt = *std::get<std::shared_ptr<ParamTable>>(traces.value);
    for (const auto& name : tt.keys()) {
      auto trace_table = tt.table(name);
      TraceSpec s;
      s.table = trace_table;
      s.population = trace_table->text("population");
      const PopulationSpec* pop = model.find_population(s.population);
      if (!pop) throw trace_table->error("population", fmt::format("no population named '{}'", s.population));
      s.variables = trace_table->has("variables") ? name_list(*trace_table, "variables") : std::vector<std::string>{"v"};
      s.neurons = index_list<std::uint32_t>(*trace_table, "neurons", "neuron");
      for (auto n : s.neurons)
        if (n >= pop->size) throw trace_table->error("neurons", fmt::format("neuron {} is outside population '{}' of size {}", n, s.population, pop->size));
      s.interval = trace_table->quantity("interval", QuantityKind::interval);
      if (!(s.interval > 0)) throw trace_table->error("interval", "must be positive");
      trace_table->reject_unknown_keys();
      model.record.traces.push_back(std::move(s));
    }
  }
  t->reject_unknown_keys();
}

}  // namespace

Model read_model_text(const std::string& text, const std::string& file_name, const ModelReadOptions& options) {
  auto ranges = std::make_shared<RangePolicy>(
      "to go beyond it on purpose, set 'allow_implausible = true' in [simulation] or pass --allow-implausible",
      options.allow_implausible);
  auto root = parse_toml_tables(text, file_name, ranges);
  Model model;
  model.file = file_name;
  model.text = text;
  model.ranges = ranges;
  root->mark_used("population");
  root->mark_used("input");
  root->mark_used("pathway");
  root->mark_used("record");
  model.simulation = read_simulation(*root);
  read_populations(*root, model);
  read_inputs(*root, model);
  check_total_size(model);
  read_pathways(*root, model, file_name);
  read_record(*root, model);
  root->reject_unknown_keys();
  return model;
}

Model read_model_file(const std::string& path, const ModelReadOptions& options) {
  return read_model_text(read_text_file(path, "model file"), path, options);
}

}  // namespace nvsyn
