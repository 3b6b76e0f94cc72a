// The benchmark's problems: seeded, dense, every pair allowed.
#pragma once

#include <string>

#include "allocsim/core/problem.hpp"

namespace allocsim::bench {

enum class GainKind {
  random,     // i.i.d. uniform in [0, 1)
  geometric,  // minus the squared distance between random points in the unit square
};
std::string to_string(GainKind kind);

// n agents, m partners, budgets and capacities uniform in [0.5, 1.5)
// rescaled to total 1.
TransportProblem make_instance(long n, long m, GainKind kind, std::uint64_t seed);

// Writes gains (n*m, row-major), budgets and capacities as raw float64
// files gains.bin, budgets.bin, capacities.bin in `folder` (for python).
void write_instance(const TransportProblem& problem, const std::string& folder);

}  // namespace allocsim::bench
