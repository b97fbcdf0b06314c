#include <catch2/catch.hpp>
#include <cmath>

#include "devices/program_verify.hpp"
#include "device_test_support.hpp"

using namespace nvsyn;

TEST_CASE("program-and-verify reaches the tolerance for targets in range", "[devices][verify]") {
  DeviceParameters p = test::device_of(DeviceKind::soft_bounds);
  p.alpha_p = 0.02;
  p.alpha_d = 0.02;
  p.programming_noise = 0.3;
  p.read_noise = 0.01;
  constexpr int n = 200;
  DeviceArray d(p, n, 9, 0);
  VerifyOptions o;
  o.tolerance = 0.2e-6;
  o.max_attempts = 50;
  for (int i = 0; i < n; ++i) {
    const double target = 1e-6 + 7e-6 * i / n;
    const auto r = program_and_verify(d, i, target, 0.0, o);
    INFO("device " << i << " target " << target);
    REQUIRE(r.ok());
    REQUIRE(std::abs(r.error) <= o.tolerance);
  }
}

TEST_CASE("program-and-verify works on a set-only phase-change device", "[devices][verify]") {
  DeviceParameters p = test::device_of(DeviceKind::phase_change);
  p.reset_mean = 0.2e-6;
  p.reset_sd = 0.02e-6;
  DeviceArray d(p, 50, 10, 0);
  VerifyOptions o;
  o.tolerance = 0.3e-6;
  o.max_attempts = 100;
  for (int i = 0; i < 50; ++i) CHECK(program_and_verify(d, i, 3e-6, 0.0, o).ok());
}

TEST_CASE("program-and-verify reports out-of-range targets and stuck devices", "[devices][verify]") {
  DeviceParameters p = test::device_of(DeviceKind::linear_levels);
  VerifyOptions o;
  o.tolerance = 0.1e-6;
  DeviceArray d(p, 1, 1, 0);
  auto high = program_and_verify(d, 0, 2 * p.g_max, 0.0, o);
  CHECK(high.status == VerifyStatus::out_of_range);
  CHECK_FALSE(high.ok());
  CHECK(program_and_verify(d, 0, -1e-6, 0.0, o).status == VerifyStatus::out_of_range);

  p.stuck_low = 1.0;
  DeviceArray stuck(p, 3, 1, 0);
  for (int i = 0; i < 3; ++i) {
    auto r = program_and_verify(stuck, i, 5e-6, 0.0, o);
    CHECK(r.status == VerifyStatus::unresponsive);
    CHECK(stuck.programmed(i) == p.g_min);
  }
}
