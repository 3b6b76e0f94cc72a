// allocsim simulate: one run of an experiment, written to a results file.

#include <chrono>
#include <iostream>
#include <sstream>

#include "allocsim/results/results_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/experiments/simulation.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

constexpr double kProgressSeconds = 2.0;
// Dense n x m matrices of doubles a simulation holds at once (gains twice,
// rule state, window and cumulative counts, the feasibility check's network):
// an estimate, used to refuse sizes that cannot fit before anything is built.
constexpr double kSimulationMatrices = 8;

void require_simulation_memory(const ExperimentValues& values) {
  const std::string& where = values.where("scenario.agents");
  require_memory(dense_matrix_bytes(values.real("scenario.agents"),
                                    values.real("scenario.partners"), kSimulationMatrices),
                 "a simulation of " + values.text("scenario.agents") + " x " +
                     values.text("scenario.partners") + " cells",
                 where == "--scenario.agents" ? where
                 : where == "default"         ? std::string("scenario.agents")
                                              : where + ": scenario.agents",
                 "use fewer agents or partners");
}

po::options_description simulate_options() {
  po::options_description options("simulate options");
  options.add_options()("config", po::value<std::string>(),
                        "experiment file (INI); --section.key options win over it")(
      "out", po::value<std::string>(), "results file to write (default: output.file)")(
      "threads", po::value<int>()->default_value(1),
      "worker threads (results do not depend on it)")("quiet", "no progress on stderr")(
      "json", "print one JSON object on stdout")("help,h", "show this help");
  add_experiment_key_options(options);
  return options;
}

std::string usage() {
  std::ostringstream out;
  out << "usage: allocsim simulate [--config EXP.ini] [--section.key VALUE ...] [--out FILE.h5]\n\n"
      << "Runs one simulation and writes it to an HDF5 results file.\n\n"
      << "  --config FILE   experiment file (INI); --section.key options win over it\n"
      << "  --out FILE      results file to write (default: output.file)\n"
      << "  --threads N     worker threads (results do not depend on it; default 1)\n"
      << "  --quiet         no progress on stderr\n"
      << "  --json          print one JSON object on stdout\n\n"
      << "A run that did not settle (capacities not met after burn-in, or still changing) gets a\n"
      << "warning with advice. What each rule, scenario and key means: docs/guide.md.\n\n"
      << experiment_keys_help();
  return out.str();
}

ProgressCallback stderr_progress() {
  const auto start = std::chrono::steady_clock::now();
  auto last = start;
  return [start, last](long round, long rounds) mutable {
    const auto now = std::chrono::steady_clock::now();
    if (std::chrono::duration<double>(now - last).count() < kProgressSeconds && round < rounds) {
      return;
    }
    if (round == rounds && std::chrono::duration<double>(now - start).count() < kProgressSeconds) {
      return;
    }
    last = now;
    std::cerr << "allocsim simulate: round " << round << "/" << rounds << " ("
              << (100 * round / rounds) << "%), "
              << std::chrono::duration<double>(now - start).count() << " s\n";
  };
}

}  // namespace

int simulate_command(const Arguments& args) {
  const po::options_description options = simulate_options();
  const po::variables_map vm = parse_with_experiment_keys(args, options, nullptr, "simulate");
  if (vm.count("help")) {
    std::cout << usage();
    return kExitOk;
  }
  std::vector<std::pair<std::string, std::string>> command_line = experiment_values_given(vm);
  if (vm.count("out")) command_line.emplace_back("output.file", vm["out"].as<std::string>());
  const std::string config = vm.count("config") ? vm["config"].as<std::string>() : "";
  const ExperimentValues values = experiment_values(config, command_line);
  require_simulation_memory(values);

  SimulationRequest request;
  request.threads = vm["threads"].as<int>();
  if (request.threads < 1) throw InputError("--threads", "must be at least 1");
  request.tool_version = ALLOCSIM_VERSION;
  if (!vm.count("quiet")) request.progress = stderr_progress();
  silence_hdf5_diagnostics();
  const SimulationReport report = simulate_to_file(values, request);
  if (!report.infeasibility.empty()) {
    std::cerr << "allocsim simulate: warning: no coupling meets the budgets and capacities under "
                 "the access mask ("
              << report.infeasibility
              << "); prices drift and queue leaves "
                 "units unplaced\n";
  }
  if (!report.result.settling.settled) {
    std::cerr << "allocsim simulate: warning: " << report.run << " "
              << report.result.settling.brief()
              << " (its allocation after burn-in is not the stationary one; see docs/guide.md)\n";
  }

  if (vm.count("json")) {
    JsonObject json;
    json.add("status", "complete")
        .add("file", report.output_file)
        .add("run", report.run)
        .add("agents", static_cast<long long>(report.agents))
        .add("partners", static_cast<long long>(report.partners))
        .add("rule", values.text("dynamics.rule"))
        .add("rounds", static_cast<long long>(report.result.rounds))
        .add("snapshots", static_cast<long long>(report.result.snapshots))
        .add("units_after_burn_in", report.result.total.sum())
        .add("unplaced_units", static_cast<long long>(report.result.unplaced_units))
        .add("settled", report.result.settling.settled)
        .add("capacity_error", report.result.settling.capacity_error)
        .add("window_change", report.result.settling.change)
        .add("seconds", report.result.seconds);
    std::cout << json.str() << "\n";
  } else {
    std::cout << report.brief() << "\n";
  }
  return kExitOk;
}

}  // namespace allocsim::cli
