// allocsim simulate: one run of an experiment, written to a results file.

#include <chrono>
#include <filesystem>
#include <iostream>
#include <sstream>

#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/experiments/replay.hpp"
#include "allocsim/experiments/simulation.hpp"
#include "allocsim/results/results_file.hpp"
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
      "from", po::value<std::string>(), "results file holding a run to replay (with --run, --out)")(
      "run", po::value<std::string>(), "run of --from to replay, e.g. run-000017")(
      "point", po::value<long>(), "run K of the sweep of --config (from 0)")(
      "replicate", po::value<long>(), "replicate of the point the swept keys pick (default 0)")(
      "out", po::value<std::string>(), "results file to write (default: output.file)")(
      "threads", po::value<int>()->default_value(1),
      "worker threads (results do not depend on it)")("quiet", "no progress on stderr")(
      "json", "print one JSON object on stdout")("help,h", "show this help");
  add_experiment_key_options(options);
  return options;
}

std::string usage() {
  std::ostringstream out;
  out << "usage: allocsim simulate [--config EXP.ini] [--section.key VALUE ...] [--out FILE.h5]\n"
      << "       allocsim simulate --config SWEEP.ini (--point K | --swept.key VALUE ... "
         "[--replicate R])\n"
      << "       allocsim simulate --from RESULTS.h5 --run NAME --out FILE.h5\n\n"
      << "Runs one simulation and writes it to an HDF5 results file. A point of a sweep file\n"
      << "and a replayed run keep their run number, so they equal the original bit for bit.\n\n"
      << "  --config FILE   experiment file (INI); --section.key options win over it\n"
      << "  --point K       run K of the sweep of --config (as allocsim run numbers them)\n"
      << "  --replicate R   with swept keys given as options: the replicate (default 0)\n"
      << "  --from FILE     replay a run of a results file (every stored key, same seed)\n"
      << "  --run NAME      the run of --from, e.g. run-000017\n"
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

// The run to play: --from FILE --run NAME (a stored run again), a point of a
// sweep file (--point K, or the swept keys on the command line), or the
// experiment of --config and the command line.
ExperimentValues chosen_run(const po::variables_map& vm, const std::string& config,
                            std::vector<std::pair<std::string, std::string>> command_line,
                            long& run_index) {
  const long replicate = vm.count("replicate") ? vm["replicate"].as<long>() : 0;
  if (vm.count("from")) {
    if (!vm.count("run"))
      throw InputError("--from", "needs --run NAME (see 'allocsim inspect FILE')");
    if (!vm.count("out")) throw InputError("--from", "needs --out FILE.h5 for the replayed run");
    const std::string from = vm["from"].as<std::string>(), out = vm["out"].as<std::string>();
    if (std::filesystem::exists(out) && std::filesystem::equivalent(from, out)) {
      throw InputError("--out", "is the file replayed from; name another file");
    }
    for (const auto& [key, text] : command_line) {
      if (key != "output.file")
        throw InputError("--" + key, "cannot change a replayed run; leave it out");
    }
    if (!config.empty() || vm.count("point"))
      throw InputError("--from", "replays a stored run; leave out --config and --point");
    RunToPlay play = run_from_results(from, vm["run"].as<std::string>());
    play.values.set("output.file", out, "--out");
    run_index = play.run_index;
    return play.values;
  }
  if (vm.count("run")) throw InputError("--run", "names a run of --from FILE; give --from too");
  if (!config.empty() && (vm.count("point") || vm.count("replicate") || has_sweep(config))) {
    const long point = vm.count("point") ? vm["point"].as<long>() : -1;
    if (vm.count("point") && point < 0) throw InputError("--point", "must be 0 or more");
    RunToPlay play = point_of_sweep(config, command_line, point, replicate);
    run_index = play.run_index;
    return play.values;
  }
  if (vm.count("point") || vm.count("replicate")) {
    throw InputError(vm.count("point") ? "--point" : "--replicate",
                     "needs --config with a [sweep] section");
  }
  return experiment_values(config, command_line);
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
  SimulationRequest request;
  const ExperimentValues values = chosen_run(vm, config, command_line, request.run_index);
  require_simulation_memory(values);

  request.threads = checked_threads(vm);
  if (!config.empty()) request.inputs.emplace_back("--config", config);
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
              << report.result.settling.brief() << "; " << report.result.settling.advice << " ("
              << key_list("dynamics", report.result.settling.settings_to_change)
              << "); its allocation after burn-in is not the stationary one; see docs/guide.md\n";
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
