// The analysis an experiment's [analysis] keys ask for.
#pragma once

#include <cstdint>

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/experiments/keys.hpp"

namespace allocsim {

// The options of the [analysis] keys; the null ensemble's seed is derived
// from (scenario.seed, run index), like every random draw.
AllocationAnalysisOptions analysis_options(const ExperimentValues& values, std::uint64_t run_index);

}  // namespace allocsim
