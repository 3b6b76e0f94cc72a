// The subcommands of the allocsim program. Each takes its arguments (without
// the program and subcommand names) and returns the exit code; it throws
// InputError for unusable input, which main turns into one line on stderr.
#pragma once

#include <string>
#include <vector>

namespace allocsim::cli {

using Arguments = std::vector<std::string>;

struct Command {
  const char* name;
  const char* summary;  // one line for `allocsim --help`
  int (*run)(const Arguments& args);
};

int solve_command(const Arguments& args);
int run_command(const Arguments& args);
int demo_command(const Arguments& args);
int synth_command(const Arguments& args);
int score_command(const Arguments& args);
int simulate_command(const Arguments& args);
int inspect_command(const Arguments& args);
int analyze_command(const Arguments& args);
int plot_command(const Arguments& args);
int trend_command(const Arguments& args);

// Every subcommand, in the order `allocsim --help` lists them.
const std::vector<Command>& all_commands();

// Exit codes shared by all subcommands.
constexpr int kExitOk = 0;
constexpr int kExitProblem = 1;  // the input was read but the job failed (e.g. infeasible)
constexpr int kExitUsage = 2;    // unusable input: options, files, config keys

}  // namespace allocsim::cli
