// Private to the results layer: the HDF5 objects behind RunWriter and
// AllocationRecorder.
#pragma once

#include <H5Cpp.h>

#include "allocsim/results/results_file.hpp"

namespace allocsim {

struct RunWriter::Group {
  H5::Group group;
  std::string path;  // the results file, for messages
};

// Datasets that finish() did not close (an exception on its way) are
// abandoned, never closed (hdf5_io.hpp).
struct AllocationRecorder::State {
  ~State();
  H5::Group run_group, allocation;
  H5::DataSet snapshots, round_end, prices;
  bool has_prices = false;
  long agents = 0, partners = 0;
  hsize_t count = 0;
  std::string path;  // the results file, for messages
};

// Opens (creating when missing) the groups on `path` below `group` and
// returns the last one; "a/b" gives group a/b.
H5::Group open_or_create_groups(H5::Group group, const std::string& path);

}  // namespace allocsim
