// MPI for `allocsim run`: when the program is built with MPI and started by
// mpirun, the ranks share one sweep. Rank 0 lists the runs still to do and
// shares the list; a counter held by rank 0 (MPI one-sided fetch-and-add)
// hands out runs one at a time, so fast ranks take more (dynamic
// distribution); every rank writes its runs' part files into the same
// folder, and rank 0 merges them once all ranks are done. Run k is seeded
// by k alone, so the file equals a threaded run's.
//
// Without MPI, or when not started by mpirun, this is a session of one rank
// and changes nothing.
#pragma once

#include "allocsim/experiments/sweep_runner.hpp"

namespace allocsim::cli {

class MpiSession {
 public:
  MpiSession();
  ~MpiSession();
  MpiSession(const MpiSession&) = delete;
  MpiSession& operator=(const MpiSession&) = delete;

  int rank() const { return rank_; }
  int size() const { return size_; }
  // Fills the request's distributor, list sharing, barrier and merge role.
  void configure(SweepRequest& request) const;

 private:
  int rank_ = 0;
  int size_ = 1;
  bool initialised_ = false;
};

}  // namespace allocsim::cli
