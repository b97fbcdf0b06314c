#pragma once
#include "devices/device_parameters.hpp"

namespace nvsyn::test {

inline DeviceParameters device_of(DeviceKind kind) {
  DeviceParameters p;
  p.kind = kind;
  p.g_min = 0.1e-6;
  p.g_max = 10e-6;
  return p;
}

}  // namespace nvsyn::test
