#pragma once
// The machine's memory, for checking sizes before allocating: a size that a user's
// file states (a dataset's shape, a population's size) is refused with a message
// when holding it would need more than the budget, instead of ending in
// std::bad_alloc or in the kernel's out-of-memory killer.
#include <cstdint>
#include <string>

namespace nvsyn {

// Physical memory of the machine in bytes (sysconf(_SC_PHYS_PAGES) x page size);
// 0 when the system does not say.
std::uint64_t physical_memory_bytes();

// What one reader may hold at once: half of physical memory, leaving room for the
// rest of the program and the system (common practice). When the system does not
// report its memory, 4 GiB.
std::uint64_t memory_budget_bytes();

// "12.3 GiB": bytes for messages.
std::string format_bytes(double bytes);

}  // namespace nvsyn
