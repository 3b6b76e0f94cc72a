// Writing the analysis of one allocation into a run group of a results file.
#pragma once

#include <H5Cpp.h>

#include "allocsim/analysis/allocation_report.hpp"

namespace allocsim {

// Replaces <run>/analysis with the report: scalar metrics as attributes
// (these become /summary columns in a sweep), the exact and entropic
// couplings as datasets.
void write_allocation_report(H5::Group& run_group, const AllocationReport& report);

}  // namespace allocsim
