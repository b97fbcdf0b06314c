#include "devices/calibration/fit_device.hpp"

#include <cmath>
#include <memory>
#include <fmt/format.h>
#include <set>
#include <utility>

#include "devices/calibration/drift_fit.hpp"

namespace nvsyn::calibration {
namespace {

// The fitted values must satisfy the model's own rules (DeviceParameters::from_table);
// data that drive a parameter outside them (a device that never switches, a set pulse
// that lowers the conductance) are the data's problem, reported at the end of the data.
void check_model_rules(const FitResult& r, const PulseData& data) {
  ParamTable table({data.file}, "fitted device");
  auto text = [](const std::string& s) { return ParamValue{s, {}}; };
  table.set("model", text(std::string(device_kind_name(r.kind))));
  for (const FittedParameter& p : r.parameters) {
    auto one = [&](double v) -> ParamValue {
      if (p.whole_number) return {static_cast<std::int64_t>(std::llround(v)), {}};
      if (p.dimension == Dimension::dimensionless) return {v, {}};
      return text(fmt::format("{:.17g} {}", v, p.dimension == Dimension::time ? "s" : "S"));
    };
    if (!p.polynomial) {
      table.set(p.key, one(p.value()));
      continue;
    }
    auto items = std::make_shared<ParamValue::Array>();
    for (double v : p.values) items->push_back(one(v));
    table.set(p.key, ParamValue{items, {}});
  }
  try {
    DeviceParameters::from_table(table);
  } catch (const UserError& e) {
    throw data.error_at_end(e.key(), fmt::format("the fitted {} breaks a rule of the model ({}); the data do not "
                                                 "follow {}",
                                                 e.key(), e.message(), device_kind_name(r.kind)));
  }
}

}  // namespace

FitResult fit_device(const PulseData& data, DeviceKind kind, const FitOptions& options) {
  if (kind == DeviceKind::ideal)
    throw UserError({}, "--model", "ideal devices have no pulse response to fit; choose a device kind with steps");
  if (options.full_range_pulses) {
    if (kind != DeviceKind::exponential_saturation)
      throw UserError({}, "--full-range-pulses", "applies only to --model exponential_saturation");
    if (!(*options.full_range_pulses >= 1) || !std::isfinite(*options.full_range_pulses))
      throw UserError({}, "--full-range-pulses", fmt::format("must be at least 1, got {}", *options.full_range_pulses));
  }
  if (options.polynomial_degree != 1) {
    if (kind != DeviceKind::phase_change) throw UserError({}, "--degree", "applies only to --model phase_change");
    if (options.polynomial_degree != 2)
      throw UserError({}, "--degree", fmt::format("must be 1 or 2, got {}", options.polynomial_degree));
  }
  data.validate();
  const TransitionSet set = build_transitions(data);

  FitResult r;
  switch (kind) {
    case DeviceKind::ideal:
      break;
    case DeviceKind::linear_levels:
      r = fit_linear_levels(data, set);
      break;
    case DeviceKind::soft_bounds:
      r = fit_soft_bounds(data, set);
      break;
    case DeviceKind::exponential_saturation:
      r = fit_exponential_saturation(data, set, options);
      break;
    case DeviceKind::phase_change:
      r = fit_phase_change(data, set, options);
      break;
    case DeviceKind::binary_stochastic:
      r = fit_binary_stochastic(data, set);
      break;
  }

  DriftFit drift = fit_drift(data);
  for (auto& p : drift.parameters) r.parameters.push_back(std::move(p));
  for (auto& n : drift.notes) r.notes.push_back(std::move(n));
  check_model_rules(r, data);

  r.data_file = data.file;
  r.records = data.records.size();
  r.devices = set.devices.size();
  r.cycles = set.cycles;
  return r;
}

}  // namespace nvsyn::calibration
