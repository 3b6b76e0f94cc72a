#include "commands.hpp"

namespace allocsim::cli {

const std::vector<Command>& all_commands() {
  static const std::vector<Command> commands = {
      {"demo", "runs the built-in demo sweep, draws it and tells what it found", demo_command},
      {"solve", "exact or entropic transport from CSV files", solve_command},
      {"run", "every run of an experiment file's sweep, in parallel and resumable", run_command},
      {"simulate", "one simulated run of an experiment, written to HDF5", simulate_command},
      {"inspect", "lists what a results file holds", inspect_command},
      {"analyze", "temperature, distance to optimal couplings and structure of an allocation",
       analyze_command},
      {"synth", "writes benchmark sets of allocations with known temperature", synth_command},
      {"score", "scores an estimator's answers against a benchmark set's truth", score_command},
      {"plot", "draws the figures of a results file", plot_command},
      {"trend",
       "per level of a factor, whether a metric rises with a swept key, in numbers and words",
       trend_command},
  };
  return commands;
}

}  // namespace allocsim::cli
