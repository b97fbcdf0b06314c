#include <catch2/catch.hpp>
#include <cmath>

#include "devices/synapse_devices.hpp"
#include "device_test_support.hpp"

using namespace nvsyn;

TEST_CASE("differential pair with refresh keeps the weight within one step", "[devices][synapse]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  p.levels = 100;
  SynapseLayoutParameters s;
  s.layout = SynapseLayout::differential;
  s.gain = 1e-3;
  s.refresh_threshold = 0.9;
  s.verify.tolerance = 0.5 * p.nominal_step();
  SynapseDevices syn(p, s, 1, 4, 0);
  const double weight_step = s.gain * p.nominal_step();
  // Alternate potentiation and depression so both devices climb to the threshold.
  for (int round = 0; round < 200; ++round) {
    const double before = syn.weight_programmed(0);
    const auto a = syn.pulse(0, round % 3 == 2 ? Polarity::depress : Polarity::potentiate, 1, round * 1e-3);
    const double after = syn.weight_programmed(0);
    // Across a refresh the weight may move by at most one step plus the update itself.
    INFO("round " << round << (a.refreshed ? " (refresh)" : ""));
    REQUIRE(std::abs(after - before) <= 2 * weight_step * (1 + 1e-9));
    if (a.refreshed) REQUIRE(std::abs(after - (before + (round % 3 == 2 ? -1 : 1) * weight_step)) <= weight_step * (1 + 1e-9));
  }
  CHECK(syn.refresh_count() > 0);
}

TEST_CASE("differential depression goes to the partner device", "[devices][synapse]") {
  DeviceParameters p = test::device_of(DeviceKind::phase_change);
  p.reset_sd = 0.0;
  p.increment_sd = {0.0};
  SynapseLayoutParameters s;
  s.layout = SynapseLayout::differential;
  s.gain = 1e-3;
  SynapseDevices syn(p, s, 1, 4, 0);
  const auto down = syn.pulse(0, Polarity::depress, 3, 0.0);
  CHECK(down.route == UpdateRoute::partner);
  CHECK(down.realised < 0);
  const auto up = syn.pulse(0, Polarity::potentiate, 3, 0.0);
  CHECK(up.route == UpdateRoute::direct);
  CHECK(up.realised > 0);
}

TEST_CASE("multi-device synapse arbitration", "[devices][synapse]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  SynapseLayoutParameters s;
  s.layout = SynapseLayout::multi;
  s.devices_per_synapse = 3;
  s.gain = 1e-3;
  SECTION("round robin programs the next device each update") {
    SynapseDevices syn(p, s, 1, 1, 0);
    for (int i = 0; i < 6; ++i) syn.pulse(0, Polarity::potentiate, 1, 0.0);
    for (std::uint32_t j = 0; j < 3; ++j) CHECK(syn.devices().pulse_count(syn.device_index(0, j)) == 2);
  }
  SECTION("a counter stays on one device for counter_limit pulses") {
    s.arbitration = Arbitration::counter;
    s.counter_limit = 4;
    SynapseDevices syn(p, s, 1, 1, 0);
    for (int i = 0; i < 6; ++i) syn.pulse(0, Polarity::potentiate, 1, 0.0);
    CHECK(syn.devices().pulse_count(syn.device_index(0, 0)) == 4);
    CHECK(syn.devices().pulse_count(syn.device_index(0, 1)) == 2);
  }
  SynapseDevices syn(p, s, 1, 1, 0);
  syn.pulse(0, Polarity::potentiate, 2, 0.0);
  CHECK(syn.weight_programmed(0) == Approx(s.gain * (3 * p.g_min + 2 * p.nominal_step())));
}
