// The recorder: streams one run into its group of a results file, in the
// layout of DESIGN.md section 7:
//   <run>/scenario/gains (n x m), budgets (n), capacities (m),
//                  access (n x m, uint8; only when not every pair is allowed)
//   <run>/allocation/snapshots (k x n x m, float64 counts per window;
//                  chunked one snapshot at a time, deflate-compressed, first
//                  axis unlimited and extended as snapshots arrive)
//   <run>/allocation/round_end (k, int64: last round of each window, from 1)
//   <run>/allocation/total (n x m, counts of the rounds after burn-in)
//   <run>/prices   (k x m, float64, prices at each round_end; rules with prices)
// Only the current snapshot is held in memory: O(n*m) whatever the rounds.
#pragma once

#include <H5Cpp.h>

#include "allocsim/core/problem.hpp"
#include "allocsim/sim/engine.hpp"

namespace allocsim {

// Writes <run>/scenario.
void write_scenario(H5::Group& run_group, const TransportProblem& problem);

class AllocationRecorder : public SnapshotSink {
 public:
  // Creates <run>/allocation with empty, extendable snapshots and round_end.
  AllocationRecorder(H5::Group& run_group, long agents, long partners);

  void add_snapshot(const Matrix& counts, long round_end, const Vector* prices) override;
  // Writes <run>/allocation/total.
  void finish(const RunResult& result);

 private:
  H5::Group run_group_;
  H5::Group allocation_;
  H5::DataSet snapshots_, round_end_, prices_;
  bool has_prices_ = false;
  long agents_, partners_;
  hsize_t count_ = 0;
};

}  // namespace allocsim
