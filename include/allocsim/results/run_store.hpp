// Where the finished runs of a sweep wait until the results file is whole.
//
// Each finished run is its own small results file "<results>.parts/run-NNNNNN.h5",
// written under a temporary name and renamed when complete: a crash or a
// kill at any moment loses at most the runs in flight, and a part that
// exists is a complete run. The folder also keeps the experiment text; a
// rerun of the same experiment finishes the missing runs, a changed one is
// refused (unless restarted). When every run is there, merge() copies them
// into one results file (atomically, like every results file) with the
// /summary table, and the folder is removed.
//
// Threads and MPI ranks share the folder: each run has its own part file.
#pragma once

#include <set>
#include <string>
#include <vector>

#include "allocsim/results/results_file.hpp"

namespace allocsim {

class RunStore {
 public:
  explicit RunStore(std::string results_path);

  const std::string& folder() const { return folder_; }
  const std::string& results_path() const { return results_path_; }

  // Creates the folder, or checks that an existing one belongs to the same
  // experiment text; with `restart`, an existing folder is emptied first.
  // Throws InputError naming the results file when the experiment changed.
  void open(const std::string& experiment_text, bool restart);

  std::string part_path(long index) const;
  // Indices of the complete part files, read from the folder.
  std::set<long> finished() const;

  // Builds the results file from parts 0..runs-1 (all must exist): root
  // attributes, every run group, and /summary with one row per run and one
  // column per swept key, seed, status and every numeric attribute of the
  // runs' analysis groups. Then removes its own files and the folder (a
  // file someone else put there stays, and so does the folder).
  // Returns the summary table it wrote.
  SummaryTable merge(long runs, const std::string& experiment_text, const std::string& tool_version,
                     const std::vector<std::string>& swept_keys) const;

 private:
  std::string results_path_;
  std::string folder_;
};

}  // namespace allocsim
