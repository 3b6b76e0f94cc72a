// allocsim: parse the subcommand, dispatch, report errors as one line.
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <iostream>
#include <string>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/results_file.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace {

void print_overview() {
  std::cout
      << "allocsim: agent-based allocation dynamics and optimal transport\n\n"
         "usage: allocsim <command> [options]   (allocsim <command> --help for its options)\n\n"
         "commands:\n";
  for (const auto& command : allocsim::cli::all_commands()) {
    std::cout << "  " << command.name << std::string(10 - std::string(command.name).size(), ' ')
              << command.summary << "\n";
  }
  std::cout
      << "\nWhat the rules, scenarios, null models and epsilon mean: docs/guide.md (the modelling\n"
         "guide); every experiment key: docs/experiment-keys.md.\n";
}

// Ends a command that failed without the libraries' end-of-process
// cleanup: after a failed write (a full disk) HDF5's teardown can crash, and
// every file of ours is already committed or removed by then.
[[noreturn]] void end_failed_command(int code) {
  std::cout.flush();
  std::cerr.flush();
  std::fflush(nullptr);
  std::_Exit(code);
}

// Runs `command`; an error is one line on stderr: exit 2 for input the
// command cannot use, 1 for a failure (no solution, a write that failed).
int run_command(const allocsim::cli::Command& command, const std::string& name,
                const allocsim::cli::Arguments& arguments) {
  using namespace allocsim::cli;
  try {
    return command.run(arguments);
  } catch (const allocsim::InputError& e) {
    // Errors about the command itself name it already: do not say it twice.
    std::string message = e.what();
    const std::string prefix = "allocsim " + name + ": ";
    if (message.rfind(prefix, 0) == 0) message.erase(0, prefix.size());
    std::cerr << "allocsim " << name << ": error: " << allocsim::cli::with_option_names(message)
              << "\n";
    return kExitUsage;
  } catch (const std::exception& e) {
    std::cerr << "allocsim " << name << ": error: " << e.what() << "\n";
    return kExitProblem;
  }
}

}  // namespace

int main(int argc, char** argv) {
  using namespace allocsim::cli;
  // Ctrl-C and SIGTERM end any command with 130 / 143, removing its temporary files.
  allocsim::exit_cleanly_on_signals();
  // Before any HDF5 call: no HDF5 diagnostics, no flush of an abandoned file at exit.
  allocsim::silence_hdf5_diagnostics();
  if (argc < 2) {
    print_overview();
    return kExitUsage;
  }
  const std::string name = argv[1];
  if (name == "--help" || name == "-h" || name == "help") {
    print_overview();
    return kExitOk;
  }
  if (name == "--version") {
#ifdef ALLOCSIM_WITH_MPI
    std::cout << "allocsim " << ALLOCSIM_VERSION << " (with MPI)\n";
#else
    std::cout << "allocsim " << ALLOCSIM_VERSION << "\n";
#endif
    return kExitOk;
  }
  for (const auto& command : all_commands()) {
    if (name != command.name) continue;
    const int code = run_command(command, name, Arguments(argv + 2, argv + argc));
    if (code != kExitOk) end_failed_command(code);
    return code;
  }
  std::cerr << "allocsim: unknown command '" << name << "' (see 'allocsim --help')\n";
  return kExitUsage;
}
