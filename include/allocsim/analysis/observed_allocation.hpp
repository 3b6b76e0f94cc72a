// An allocation read for analysis: checked against its gains (and access),
// cleared of all-zero rows and columns, and turned into shares with the
// transport problem its own marginals define.
//
// An allocation whose entries are all whole numbers is read as counts: N =
// its sum is the number of independent units the standard errors and
// intervals use. Otherwise it is read as shares and N is unknown (0).
//
// All-zero rows and columns carry no information about the temperature (the
// model fixes the observed marginals, and a zero marginal removes the row);
// they are dropped and named in `note`.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"

namespace allocsim {

// Names of the inputs for messages (e.g. their file names).
struct AllocationSources {
  std::string allocation = "allocation";
  std::string gains = "gains";
  std::string access = "access";
};

struct ObservedAllocation {
  Matrix shares;                           // P / sum(P) over the kept rows and columns
  TransportProblem problem;                // gains and access of the kept cells; budgets and
                                           // capacities = the row and column sums of `shares`
  bool counts = false;                     // all entries whole numbers
  double units = 0;                        // N = sum(P) for counts, else 0
  std::vector<Eigen::Index> kept_rows;     // indices into the input, increasing
  std::vector<Eigen::Index> kept_columns;
  std::vector<Eigen::Index> dropped_rows;  // all-zero rows (indices from 0)
  std::vector<Eigen::Index> dropped_columns;
  std::string note;                        // says what was dropped; empty when nothing
  AllocationSources sources;               // for messages of later steps

  double observed_gain() const;            // <gains, shares>
};

// Throws InputError (naming the source, and the row and column counted from
// 1) for: shapes that differ, a negative or non-finite allocation entry, a
// non-finite gain on an allowed cell, a positive entry where access is 0, an
// allocation with no positive entry.
ObservedAllocation observe_allocation(const Matrix& allocation, const Matrix& gains,
                                      const std::optional<AccessMask>& access,
                                      const AllocationSources& sources = {});

// Rows and columns of a full-size matrix picked out by `observed` (e.g. to
// put a coupling of the kept cells back into the input's shape, see expand).
Matrix restrict_to_kept(const Matrix& full, const ObservedAllocation& observed);
// The kept-size matrix placed into the input's shape, zeros elsewhere.
Matrix expand_to_input(const Matrix& kept, const ObservedAllocation& observed,
                       Eigen::Index rows, Eigen::Index columns);

}  // namespace allocsim
