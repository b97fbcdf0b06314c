#include "devices/synapse_devices.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <fmt/format.h>

namespace nvsyn {

std::string_view synapse_layout_name(SynapseLayout l) {
  switch (l) {
    case SynapseLayout::single: return "single";
    case SynapseLayout::differential: return "differential";
    case SynapseLayout::multi: return "multi";
  }
  return "?";
}

std::string_view update_route_name(UpdateRoute r) {
  switch (r) {
    case UpdateRoute::none: return "none";
    case UpdateRoute::direct: return "direct";
    case UpdateRoute::partner: return "partner";
  }
  return "?";
}

void WriteSummary::add(const VerifyResult& r, double weight_error) {
  ++written;
  if (!r.ok()) ++failed;
  if (r.status == VerifyStatus::out_of_range) ++out_of_range;
  if (r.status == VerifyStatus::unresponsive) ++unresponsive;
  sum_abs_error += std::abs(weight_error);
  max_abs_error = std::max(max_abs_error, std::abs(weight_error));
}

SynapseLayoutParameters SynapseLayoutParameters::from_table(const ParamTable& t, const DeviceParameters& device) {
  SynapseLayoutParameters s;
  const std::string layout = t.text_or("layout", device.bidirectional() ? "single" : "differential");
  if (layout == "single") s.layout = SynapseLayout::single;
  else if (layout == "differential") s.layout = SynapseLayout::differential;
  else if (layout == "multi") s.layout = SynapseLayout::multi;
  else throw t.error("layout", fmt::format("unknown layout '{}'; expected single, differential or multi", layout));
  if (s.layout == SynapseLayout::multi) {
    const std::int64_t n = t.integer_or("devices_per_synapse", 4);
    if (n < 1 || n > 64) throw t.error("devices_per_synapse", "must be a whole number from 1 to 64");
    s.devices_per_synapse = static_cast<std::uint32_t>(n);
    const std::string arbitration = t.text_or("arbitration", "round_robin");
    if (arbitration == "round_robin") s.arbitration = Arbitration::round_robin;
    else if (arbitration == "counter") s.arbitration = Arbitration::counter;
    else throw t.error("arbitration", fmt::format("unknown arbitration '{}'; expected round_robin or counter", arbitration));
    const std::int64_t limit = t.integer_or("counter_limit", QuantityKind::update_count, s.counter_limit);
    if (limit < 1) throw t.error("counter_limit", "must be at least 1");
    if (limit > std::numeric_limits<std::uint32_t>::max())
      throw t.error("counter_limit", fmt::format("{} does not fit the 32-bit counter", limit));
    s.counter_limit = static_cast<std::uint32_t>(limit);
  }
  // The gain is given directly, or as the weight a fully programmed synapse carries:
  // with weight_max, switching presets keeps the weight range.
  if (t.has("gain") == t.has("weight_max"))
    throw t.error(t.has("gain") ? "weight_max" : "gain",
                  "give exactly one of 'gain' (weight per siemens, a voltage such as \"5 uV\") and 'weight_max' "
                  "(the weight of a fully programmed synapse, a current such as \"0.1 nA\")");
  if (t.has("gain")) {
    s.gain = t.quantity("gain", QuantityKind::gain);
    if (!(s.gain > 0)) throw t.error("gain", "must be positive (the weight's sign comes from the receptor)");
  } else {
    const double w_max = t.quantity("weight_max", QuantityKind::weight_scale);
    if (!(w_max > 0)) throw t.error("weight_max", "must be positive (the weight's sign comes from the receptor)");
    const double span = s.layout == SynapseLayout::multi ? s.devices_per_synapse * device.g_max
                        : s.layout == SynapseLayout::single ? device.g_max
                                                            : device.g_max - device.g_min;
    s.gain = w_max / span;
  }
  if (s.layout == SynapseLayout::differential) {
    s.refresh_threshold = t.number_or("refresh_threshold", QuantityKind::fraction, 0.0);
    if (!(s.refresh_threshold >= 0 && s.refresh_threshold <= 1))
      throw t.error("refresh_threshold", "a fraction of g_max in [0, 1] (0 turns refresh off)");
    s.refresh_interval = t.quantity_or("refresh_interval", QuantityKind::interval, 0.0);
    if (s.refresh_interval < 0) throw t.error("refresh_interval", "must not be negative");
  }
  s.verify.tolerance = t.quantity_or("verify_tolerance", QuantityKind::conductance, 0.5 * device.nominal_step());
  if (s.verify.tolerance < 0) throw t.error("verify_tolerance", "must not be negative");
  const std::int64_t attempts = t.integer_or("verify_attempts", QuantityKind::verify_attempts, s.verify.max_attempts);
  if (attempts < 1) throw t.error("verify_attempts", "must be at least 1");
  if (attempts > std::numeric_limits<std::uint32_t>::max())
    throw t.error("verify_attempts", fmt::format("{} does not fit the 32-bit attempt counter", attempts));
  s.verify.max_attempts = static_cast<std::uint32_t>(attempts);
  if (!device.bidirectional() && s.layout == SynapseLayout::single)
    throw t.error("layout", "a phase-change device cannot depress gradually; use layout = \"differential\"");
  return s;
}

SynapseDevices::SynapseDevices(const DeviceParameters& device, const SynapseLayoutParameters& layout,
                               std::size_t synapses, std::uint64_t seed, std::uint32_t pathway_id)
    : layout_(layout),
      synapses_(synapses),
      devices_(device, synapses * layout.devices(), seed, std::uint64_t{pathway_id} << 40),
      selector_(layout.layout == SynapseLayout::multi ? synapses : 0, 0),
      last_refresh_(layout.refresh_interval > 0 ? synapses : 0, 0.0) {}

double SynapseDevices::read_weight(std::size_t k, double t) {
  const std::size_t base = device_index(k, 0);
  double g = 0.0;
  switch (layout_.layout) {
    case SynapseLayout::single: g = devices_.read(base, t); break;
    case SynapseLayout::differential: {
      const std::array<double, 2> pair = devices_.read_pair(base, t);
      g = pair[0] - pair[1];
      break;
    }
    case SynapseLayout::multi: {
      // Devices read two at a time share a random block (DeviceArray::read_pair);
      // the sum is taken in device order either way.
      const std::uint32_t n = layout_.devices();
      std::uint32_t j = 0;
      if (base % 2 != 0) g += devices_.read(base + j++, t);
      for (; j + 1 < n; j += 2) {
        const std::array<double, 2> pair = devices_.read_pair(base + j, t);
        g += pair[0];
        g += pair[1];
      }
      if (j < n) g += devices_.read(base + j, t);
      break;
    }
  }
  return layout_.gain * std::max(g, 0.0);
}

double SynapseDevices::weight_mean(std::size_t k, double t) const {
  const std::size_t base = device_index(k, 0);
  double g = 0.0;
  if (layout_.layout == SynapseLayout::differential) g = devices_.read_mean(base, t) - devices_.read_mean(base + 1, t);
  else
    for (std::uint32_t j = 0; j < layout_.devices(); ++j) g += devices_.read_mean(base + j, t);
  return layout_.gain * std::max(g, 0.0);
}

double SynapseDevices::weight_programmed(std::size_t k) const {
  const std::size_t base = device_index(k, 0);
  double g = 0.0;
  if (layout_.layout == SynapseLayout::differential) g = devices_.programmed(base) - devices_.programmed(base + 1);
  else
    for (std::uint32_t j = 0; j < layout_.devices(); ++j) g += devices_.programmed(base + j);
  return layout_.gain * g;
}

std::uint32_t SynapseDevices::select_device(std::size_t k) const {
  if (layout_.layout != SynapseLayout::multi) return 0;
  // round_robin: selector counts updates; counter: selector counts pulses.
  const std::uint32_t n = layout_.devices();
  return layout_.arbitration == Arbitration::round_robin ? selector_[k] % n : (selector_[k] / layout_.counter_limit) % n;
}

double SynapseDevices::expected_weight_step(std::size_t k, Polarity dir) const {
  const std::size_t base = device_index(k, 0);
  if (layout_.layout == SynapseLayout::differential) {
    const std::size_t d = dir == Polarity::potentiate ? base : base + 1;
    return layout_.gain * std::abs(devices_.expected_step(d, Polarity::potentiate));
  }
  return layout_.gain * std::abs(devices_.expected_step(base + select_device(k), dir));
}

double SynapseDevices::weight_headroom(std::size_t k, Polarity dir) const {
  const std::size_t base = device_index(k, 0);
  // A differential pair moves either way by potentiating one of its two devices.
  std::size_t d = base + select_device(k);
  Polarity pol = dir;
  if (layout_.layout == SynapseLayout::differential) {
    d = dir == Polarity::potentiate ? base : base + 1;
    pol = Polarity::potentiate;
  }
  const double g = devices_.programmed(d);
  const double room = pol == Polarity::potentiate ? devices_.g_max_of(d) - g : g - devices_.parameters().g_min;
  return layout_.gain * std::max(room, 0.0);
}

PulseOutcome SynapseDevices::pulse(std::size_t k, Polarity dir, std::uint32_t count, double t) {
  PulseOutcome out;
  if (count == 0) return out;
  const double before = weight_programmed(k);
  const std::size_t base = device_index(k, 0);
  switch (layout_.layout) {
    case SynapseLayout::single:
      if (devices_.expected_step(base, dir) == 0.0 && !devices_.parameters().bidirectional()) return out;
      devices_.pulse(base, dir, count, t);
      out.route = UpdateRoute::direct;
      break;
    case SynapseLayout::differential:
      devices_.pulse(dir == Polarity::potentiate ? base : base + 1, Polarity::potentiate, count, t);
      out.route = dir == Polarity::potentiate ? UpdateRoute::direct : UpdateRoute::partner;
      break;
    case SynapseLayout::multi: {
      const std::uint32_t j = select_device(k);
      if (!devices_.parameters().bidirectional() && dir == Polarity::depress) return out;
      devices_.pulse(base + j, dir, count, t);
      selector_[k] += layout_.arbitration == Arbitration::round_robin ? 1 : count;
      out.route = UpdateRoute::direct;
      break;
    }
  }
  out.pulses = count;
  if (needs_refresh(k, t)) {
    refresh(k, t);
    out.refreshed = true;
  }
  out.realised = weight_programmed(k) - before;
  return out;
}

PulseOutcome SynapseDevices::change_exact(std::size_t k, double dw, double t) {
  PulseOutcome out;
  const double before = weight_programmed(k);
  const std::size_t base = device_index(k, 0);
  const double dg = dw / layout_.gain;
  switch (layout_.layout) {
    case SynapseLayout::single: devices_.set_exact(base, devices_.programmed(base) + dg, t); break;
    case SynapseLayout::differential:
      if (dg >= 0) devices_.set_exact(base, devices_.programmed(base) + dg, t);
      else devices_.set_exact(base + 1, devices_.programmed(base + 1) - dg, t);
      break;
    case SynapseLayout::multi: {
      const std::uint32_t n = layout_.devices();
      for (std::uint32_t j = 0; j < n; ++j) devices_.set_exact(base + j, devices_.programmed(base + j) + dg / n, t);
      break;
    }
  }
  out.realised = weight_programmed(k) - before;
  out.route = out.realised != 0.0 ? (dw < 0 && layout_.layout == SynapseLayout::differential ? UpdateRoute::partner
                                                                                                : UpdateRoute::direct)
                                   : UpdateRoute::none;
  return out;
}

VerifyResult SynapseDevices::write_weight(std::size_t k, double w, double t) {
  const std::size_t base = device_index(k, 0);
  const double g = w / layout_.gain;
  VerifyResult worst;
  // The first failure wins; if every device succeeds, the last result stands.
  auto keep_worst = [&](const VerifyResult& r) {
    if (worst.ok()) worst = r;
  };
  switch (layout_.layout) {
    case SynapseLayout::single: keep_worst(program_and_verify(devices_, base, g, t, layout_.verify)); break;
    case SynapseLayout::differential: {
      // Lower both devices, then write the difference onto the positive one.
      devices_.reset(base, t);
      devices_.reset(base + 1, t);
      const double low = devices_.read(base + 1, t);
      VerifyResult r = program_and_verify(devices_, base, low + g, t, layout_.verify);
      // A partner stuck high pushes the target out of range: the cause is the partner.
      if (!r.ok() && !devices_.responsive(base + 1)) r.status = VerifyStatus::unresponsive;
      keep_worst(r);
      break;
    }
    case SynapseLayout::multi:
      for (std::uint32_t j = 0; j < layout_.devices(); ++j)
        keep_worst(program_and_verify(devices_, base + j, g / layout_.devices(), t, layout_.verify));
      break;
  }
  if (!last_refresh_.empty()) last_refresh_[k] = t;
  return worst;
}

bool SynapseDevices::needs_refresh(std::size_t k, double t) const {
  if (layout_.layout != SynapseLayout::differential) return false;
  const std::size_t base = device_index(k, 0);
  if (layout_.refresh_threshold > 0) {
    const double limit = layout_.refresh_threshold;
    if (devices_.programmed(base) >= limit * devices_.g_max_of(base) ||
        devices_.programmed(base + 1) >= limit * devices_.g_max_of(base + 1))
      return true;
  }
  return layout_.refresh_interval > 0 && t - last_refresh_[k] >= layout_.refresh_interval;
}

void SynapseDevices::refresh(std::size_t k, double t) {
  // Keep the weight, free the headroom: reset both devices and write the
  // difference back onto one of them with program-and-verify.
  const std::size_t base = device_index(k, 0);
  const std::array<double, 2> pair = devices_.read_pair(base, t);
  const double difference = pair[0] - pair[1];
  devices_.reset(base, t);
  devices_.reset(base + 1, t);
  const std::size_t up = difference >= 0 ? base : base + 1;
  const std::size_t other = difference >= 0 ? base + 1 : base;
  program_and_verify(devices_, up, devices_.read(other, t) + std::abs(difference), t, layout_.verify);
  if (!last_refresh_.empty()) last_refresh_[k] = t;
  refreshes_.fetch_add(1, std::memory_order_relaxed);
}

}  // namespace nvsyn
