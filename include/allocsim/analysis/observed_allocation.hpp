// An allocation read for analysis: checked against its gains (and access)
// when given, cleared of all-zero rows and columns, and turned into shares
// with the transport problem its own marginals define.
//
// Counts or shares (ValueReading): by default an allocation whose entries are
// all whole numbers is read as counts, N = its sum being the number of
// independent units the standard errors and intervals use; otherwise as
// shares, with N unknown (0: no interval). `counts` demands whole numbers;
// `shares` with units = N reads the matrix as shares observed on N
// independent units (the intervals then equal those of counts summing to N).
// When counts look like money or measurements rather than tallies (N above
// 1e7, or more than half of the non-zero cells above 1000), `warning` says
// that the intervals assume N independent choices.
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

enum class ValueKind { automatic, counts, shares };
// Words: "automatic", "counts", "shares".
std::string to_string(ValueKind kind);
// Throws InputError("values", ...) listing the words.
ValueKind value_kind_from_string(const std::string& text);
std::vector<std::string> value_kind_words();

struct ValueReading {
  ValueKind kind = ValueKind::automatic;  // automatic: counts when every entry is whole
  double units = 0;  // shares only: N independent units behind them; 0 = unknown

  // Throws InputError naming the wrong field ("values" or "units").
  void validate() const;
};

// Above either, whole-number values are suspected of being money or measurements.
constexpr double kLargeUnitCount = 1e7;
constexpr double kLargeCellValue = 1000;

struct ObservedAllocation {
  Matrix shares;                        // P / sum(P) over the kept rows and columns
  TransportProblem problem;             // gains and access of the kept cells (gains all 0
                                        // without gains); budgets and capacities = the row
                                        // and column sums of `shares`
  bool has_gains = false;               // gains were given
  bool counts = false;                  // read as counts
  double units = 0;                     // N: sum(P) for counts, the given N for shares, or 0
  std::string reading;                  // how the values were read, one phrase for reports
  std::string warning;                  // when the unit count looks doubtful; else empty
  std::vector<Eigen::Index> kept_rows;  // indices into the input, increasing
  std::vector<Eigen::Index> kept_columns;
  std::vector<Eigen::Index> dropped_rows;  // all-zero rows (indices from 0)
  std::vector<Eigen::Index> dropped_columns;
  std::string note;           // says what was dropped; empty when nothing
  AllocationSources sources;  // for messages of later steps

  double observed_gain() const;  // <gains, shares>
};

// Throws InputError (naming the source, and the row and column counted from
// 1) for: shapes that differ, a negative or non-finite allocation entry, a
// non-finite gain on an allowed cell, a positive entry where access is 0, an
// allocation with no positive entry, a cell that is not whole when read as
// counts.
ObservedAllocation observe_allocation(const Matrix& allocation, const std::optional<Matrix>& gains,
                                      const std::optional<AccessMask>& access,
                                      const AllocationSources& sources = {},
                                      const ValueReading& reading = {});

// Rows and columns of a full-size matrix picked out by `observed` (e.g. to
// put a coupling of the kept cells back into the input's shape, see expand).
Matrix restrict_to_kept(const Matrix& full, const ObservedAllocation& observed);
// The kept-size matrix placed into the input's shape, zeros elsewhere.
Matrix expand_to_input(const Matrix& kept, const ObservedAllocation& observed, Eigen::Index rows,
                       Eigen::Index columns);

}  // namespace allocsim
