// One simulated run from an experiment's key values to a results file:
// scenario, dynamics, recorder, parameters and summary (what `allocsim
// simulate` does; sweeps call record_run once per run).
#pragma once

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "allocsim/experiments/experiment.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/sim/engine.hpp"

namespace allocsim {

struct SimulationRequest {
  int threads = 1;                // worker threads; results are identical for any count
  std::string tool_version = "";  // stored as the tool_version attribute
  ProgressCallback progress;      // may be empty
  // Files read besides the data files of the values, (label, path): the
  // output may not be one of them (e.g. {"--config", "exp.ini"}).
  std::vector<std::pair<std::string, std::string>> inputs;
  long run_index = 0;  // seeds the run's streams and names it (run_name); >= 0
};

struct SimulationReport {
  std::string output_file;
  std::string run;  // e.g. run-000000
  long agents = 0, partners = 0;
  RunResult result;
  // Why no coupling meets the budgets and capacities under the access mask
  // (then prices drift and queue leaves units unplaced); empty when feasible.
  std::string infeasibility;

  // One line for the command line.
  std::string brief() const;
};

// Bytes one run of these values holds at once (an estimate: about 8 dense
// agents x partners matrices of doubles: gains twice, rule state, window and
// cumulative counts, the feasibility check's network).
double simulation_memory_bytes(const ExperimentValues& values);

// Every key as an attribute of the run group: numbers as float64 (int64 for
// whole-number keys), words, paths and truth values as text; plus seed and
// status.
void write_run_parameters(RunWriter& run, const ExperimentValues& values,
                          const std::string& status);

// Builds the scenario of run `run_index`, plays the dynamics and writes
// /runs/<run>/ (parameters, scenario, allocation, prices, empty analysis;
// attribute feasible = "true" | "false" from the transport module's check).
RunResult record_run(ResultsFile& file, const std::string& run, std::uint64_t run_index,
                     const ExperimentValues& values, const SimulationSettings& settings,
                     const ProgressCallback& progress);

// The whole of `allocsim simulate`: checks everything it can before creating
// the file, so bad input leaves no file behind.
SimulationReport simulate_to_file(const ExperimentValues& values, const SimulationRequest& request);

}  // namespace allocsim
