#include "core/machine_memory.hpp"

#include <unistd.h>

#include <fmt/format.h>

namespace nvsyn {

std::uint64_t physical_memory_bytes() {
  const long pages = ::sysconf(_SC_PHYS_PAGES);
  const long page_size = ::sysconf(_SC_PAGESIZE);
  if (pages <= 0 || page_size <= 0) return 0;
  return static_cast<std::uint64_t>(pages) * static_cast<std::uint64_t>(page_size);
}

std::uint64_t memory_budget_bytes() {
  const std::uint64_t physical = physical_memory_bytes();
  return physical > 0 ? physical / 2 : std::uint64_t{4} << 30;
}

std::string format_bytes(double bytes) {
  constexpr const char* kUnits[] = {"bytes", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"};
  int unit = 0;
  while (bytes >= 1024.0 && unit < 6) {
    bytes /= 1024.0;
    ++unit;
  }
  return unit == 0 ? fmt::format("{:.0f} bytes", bytes) : fmt::format("{:.1f} {}", bytes, kUnits[unit]);
}

}  // namespace nvsyn
