// Which run `allocsim simulate` plays: a run of a results file again, or one
// point of a sweep file. Either way the run keeps its run index, so its
// random streams (scenario.seed, run index, stream) and hence every dataset
// are those of the original run, bit for bit.
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "allocsim/experiments/keys.hpp"

namespace allocsim {

struct RunToPlay {
  ExperimentValues values;  // every key of the run
  long run_index = 0;       // seeds the run's streams; names it run_name(run_index)
};

// The run `run` of results file `path`: its stored keys (every effective
// parameter) and run index. Throws InputError naming the file and run when
// either is missing or a stored key is not valid.
RunToPlay run_from_results(const std::string& path, const std::string& run);

// One point of the sweep of experiment file `path`, with command-line values
// over the file's. `point` >= 0 picks run `point` of the sweep; otherwise the
// swept keys among `command_line` (and `replicate`, default 0) must single
// out one point. Throws InputError naming the file, the axis and its values
// when no point or several points match.
RunToPlay point_of_sweep(const std::string& path,
                         const std::vector<std::pair<std::string, std::string>>& command_line,
                         long point, long replicate);

// True when the experiment file has a [sweep] section.
bool has_sweep(const std::string& path);

}  // namespace allocsim
