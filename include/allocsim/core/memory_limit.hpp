// Refusing work whose memory would exceed what the machine has, before any
// of it is allocated.
//
// The memory that is available is the smallest of
//   * MemAvailable in /proc/meminfo (sysconf's free pages where that is missing),
//   * the cgroup v2 limit of this process (memory.max - memory.current), when set,
//   * ALLOCSIM_MEMORY_LIMIT_BYTES from the environment, when set (e.g. a cluster
//     job's share of a shared node; also what the tests use).
// Estimates are in bytes and held as doubles, so that sizes such as
// 1e6 x 1e6 cells do not overflow an integer before they are compared.
#pragma once

#include <string>

namespace allocsim {

// Bytes this process may still allocate (see above); +infinity when nothing
// can be measured. Throws InputError when ALLOCSIM_MEMORY_LIMIT_BYTES is set
// but is not a positive number.
double available_memory_bytes();

// Throws InputError(where, ...) when `bytes` exceeds available_memory_bytes().
// The message says what needs the memory, the estimate, what is available,
// and what to do, e.g.
//   "--scenario.agents: a simulation of 1000000 x 1000000 cells needs about
//    64 TB of memory (estimate), but 21.3 GB is available; use fewer agents
//    or partners".
// `what` names the work ("a simulation of 1000000 x 1000000 cells"); `advice`
// (optional) replaces the default "use a smaller problem".
void require_memory(double bytes, const std::string& what, const std::string& where,
                    const std::string& advice = "");

// Bytes of `count` dense double matrices of rows x cols.
double dense_matrix_bytes(double rows, double cols, double count = 1);

// "512 B", "3.2 MB", "21.3 GB", "64 TB" (powers of 1000).
std::string format_bytes(double bytes);

}  // namespace allocsim
