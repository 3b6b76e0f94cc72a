// allocsim run: every run of an experiment file's sweep, in parallel,
// resumable, and over MPI ranks when launched by mpirun.
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <iostream>
#include <memory>
#include <sstream>
#include <thread>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/experiments/sweep_runner.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "commands.hpp"
#include "mpi_sweep.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

std::atomic<bool> stop_requested{false};
std::atomic<int> stop_signal{0};

// First Ctrl-C (or SIGTERM): finish the runs in flight, then stop with exit
// 128 + the signal. Second: stop at once (the finished runs are kept either
// way; temporary files are removed).
extern "C" void on_interrupt(int signal_number) {
  if (stop_requested.exchange(true)) remove_temporaries_and_exit(128 + signal_number);
  stop_signal.store(signal_number);
  const char message[] =
      "\nallocsim run: stopping after the runs in flight (Ctrl-C again to stop at once)\n";
  [[maybe_unused]] const auto written = ::write(2, message, sizeof message - 1);
}

std::string format_duration(double seconds) {
  std::ostringstream out;
  if (seconds < 60) {
    out << static_cast<long>(seconds + 0.5) << " s";
  } else if (seconds < 3600) {
    out << static_cast<long>(seconds / 60) << " min " << static_cast<long>(seconds) % 60 << " s";
  } else {
    out << static_cast<long>(seconds / 3600) << " h " << static_cast<long>(seconds / 60) % 60
        << " min";
  }
  return out.str();
}

// A bar redrawn in place on a terminal (each redraw clears the rest of its
// line); otherwise a plain line every 10% of the runs or every 30 s. Counts
// include the runs kept from an earlier start. `bar_open` tells whether the
// bar's line still waits for its line end.
std::function<void(const SweepProgress&)> progress_printer(std::shared_ptr<bool> bar_open) {
  const bool terminal = ::isatty(2);
  auto last_line = std::chrono::steady_clock::now();
  long last_tenth = 0;
  return [=](const SweepProgress& p) mutable {
    const double rate = p.seconds > 0 ? p.done / p.seconds : 0;
    const double left = rate > 0 ? (p.to_do - p.done) / rate : 0;
    const long total = p.already_done + p.to_do;
    const long done = p.already_done + p.done;
    std::ostringstream line;
    line.precision(3);
    line << done << "/" << total << " runs, " << rate << " runs/s, " << format_duration(left)
         << " left";
    if (terminal) {
      constexpr int kWidth = 30;
      const int filled = static_cast<int>(kWidth * done / std::max(total, 1L));
      const bool last = p.done == p.to_do;
      std::cerr << "\r\033[K[" << std::string(filled, '#') << std::string(kWidth - filled, '.')
                << "] " << line.str() << (last ? "\n" : "") << std::flush;
      *bar_open = !last;
      return;
    }
    const auto now = std::chrono::steady_clock::now();
    const long tenth = 10 * p.done / std::max(p.to_do, 1L);
    const double since = std::chrono::duration<double>(now - last_line).count();
    if ((tenth > last_tenth && since >= 1) || since >= 30) {
      last_tenth = tenth;
      last_line = now;
      std::cerr << "allocsim run: " << line.str() << "\n";
    }
  };
}

std::string usage() {
  return "usage: allocsim run EXP.ini [--threads N] [--restart] [--csv FILE] [--section.key VALUE "
         "...]\n"
         "                        [--sweep.section.key 'VALUES' ...] [--replicates N]\n"
         "       mpirun -np K allocsim run EXP.ini\n\n"
         "Runs every point of the experiment's [sweep] (one run without one) and writes\n"
         "one results file (output.file). Finished runs are kept as they complete in\n"
         "<output.file>.parts/: after a crash or Ctrl-C, the same command finishes the rest.\n"
         "A swept key cannot be given a single value: --sweep.KEY replaces its axis.\n"
         "The same command over a finished file leaves it alone; another experiment is\n"
         "refused unless --restart. Exit: 0 done, 1 runs failed or a write failed,\n"
         "2 unusable input, 130 Ctrl-C, 143 SIGTERM.\n\n";
}

JsonObject report_json(const SweepReport& report) {
  JsonObject json;
  json.add("status", report.left_alone         ? "already complete"
                     : report.complete         ? "complete"
                     : report.interrupted      ? "interrupted"
                     : report.failures.empty() ? "partial"
                                               : "failed")
      .add("file", report.output_file)
      .add("runs", static_cast<long long>(report.total))
      .add("already_done", static_cast<long long>(report.already_done))
      .add("ran", static_cast<long long>(report.ran))
      .add("failed", static_cast<long long>(report.failures.size()))
      .add("seconds", report.seconds);
  return json;
}

// --sweep.KEY options, one per experiment key.
void add_sweep_options(po::options_description& options) {
  for (const auto& key : experiment_keys()) {
    if (key.name == "output.file") continue;
    options.add_options()(("sweep." + key.name).c_str(), po::value<std::string>(),
                          ("replace (or add) the sweep axis of " + key.name).c_str());
  }
}

SweepOverrides sweep_overrides(const po::variables_map& vm) {
  SweepOverrides overrides;
  for (const auto& key : experiment_keys()) {
    const std::string option = "sweep." + key.name;
    if (vm.count(option)) overrides.axes.emplace_back(key.name, vm[option].as<std::string>());
  }
  if (vm.count("replicates")) {
    const long replicates = vm["replicates"].as<long>();
    if (replicates < 1)
      throw InputError("--replicates", std::to_string(replicates) + " is not a whole number >= 1");
    overrides.replicates = replicates;
  }
  return overrides;
}

int exit_code(const SweepReport& report) {
  if (report.complete) return kExitOk;
  if (report.interrupted && stop_signal.load()) return 128 + stop_signal.load();
  return kExitProblem;
}

// One warning line for the runs whose settled column is "false" (sim/settling.hpp).
void warn_unsettled(const SummaryTable& summary) {
  const std::vector<std::string>* settled = nullptr;
  const std::vector<std::string>* runs = nullptr;
  for (const auto& [name, column] : summary.texts) {
    if (name == layout::kSettled) settled = &column;
    if (name == layout::kRunColumn) runs = &column;
  }
  if (!settled || !runs) return;
  std::vector<std::string> unsettled;
  for (std::size_t k = 0; k < settled->size(); ++k) {
    if ((*settled)[k] == "false") unsettled.push_back((*runs)[k]);
  }
  if (unsettled.empty()) return;
  std::cerr << "allocsim run: warning: " << unsettled.size() << " of " << settled->size()
            << " runs did not settle (first: " << unsettled.front()
            << "; /summary column settled): their allocation after burn-in is not the stationary "
               "one; play more rounds with a longer burn-in (dynamics.rounds, dynamics.burn_in), "
               "a larger dynamics.price_step at low temperature, or a smaller dynamics.window; "
               "see docs/guide.md\n";
}

}  // namespace

int run_command(const Arguments& args) {
  po::options_description options("run options");
  options.add_options()("experiment", po::value<std::string>(), "experiment file (INI)")(
      "threads",
      po::value<int>()->default_value(
          static_cast<int>(std::max(1u, std::thread::hardware_concurrency()))),
      "worker threads (results do not depend on it; at most 1024)")(
      "restart",
      "discard the kept runs or the finished file of another experiment (only files allocsim "
      "wrote)")("csv", po::value<std::string>(), "also write the summary table to this CSV file")(
      "replicates", po::value<long>(),
      "runs per sweep point (replaces the file's sweep.replicates)")(
      "list-keys", "list every experiment key with its default and valid values")(
      "quiet", "no progress on stderr")("json", "print one JSON object on stdout")(
      "help,h", "show this help");
  add_experiment_key_options(options);
  add_sweep_options(options);
  po::positional_options_description positional;
  positional.add("experiment", 1);
  const po::variables_map vm = parse_with_experiment_keys(args, options, &positional, "run");
  if (vm.count("help")) {
    std::cout << usage() << options << "\n";
    return kExitOk;
  }
  if (vm.count("list-keys")) {
    std::cout << experiment_keys_help() << "\n" << sweep_syntax_help();
    return kExitOk;
  }
  if (!vm.count("experiment"))
    throw InputError("allocsim run", "name an experiment file (see --help)");
  const int threads = checked_threads(vm);
  silence_hdf5_diagnostics();
  MpiSession mpi;
  const std::string experiment = vm["experiment"].as<std::string>();
  const SweepPlan plan = plan_sweep(experiment, experiment_values_given(vm), sweep_overrides(vm));
  require_sweep_memory(plan, threads);
  if (vm.count("csv")) {
    const std::string csv = vm["csv"].as<std::string>();
    std::vector<std::pair<std::string, std::string>> others = plan.inputs;
    others.emplace_back("output.file (the results file)", plan.output_file);
    require_distinct(csv, "--csv", others);
    const ResolvedOutput target = resolve_output(csv);
    if (target.kind == OutputKind::directory)
      throw InputError("--csv", csv + " is a directory; name a CSV file");
  }

  SweepRequest request;
  request.threads = threads;
  request.restart = vm.count("restart") > 0;
  request.tool_version = ALLOCSIM_VERSION;
  request.stop = &stop_requested;
  mpi.configure(request);
  const auto bar_open = std::make_shared<bool>(false);
  if (!vm.count("quiet") && mpi.rank() == 0) request.progress = progress_printer(bar_open);
  std::signal(SIGINT, on_interrupt);
  std::signal(SIGTERM, on_interrupt);
  const SweepReport report = run_sweep(plan, request);
  exit_cleanly_on_signals();
  if (*bar_open) std::cerr << "\n";
  if (mpi.rank() != 0) return report.failures.empty() ? kExitOk : kExitProblem;

  if (report.complete && vm.count("csv"))
    write_summary_csv(vm["csv"].as<std::string>(), report.summary);
  if (report.complete) warn_unsettled(report.summary);
  if (vm.count("json")) {
    JsonObject json = report_json(report);
    std::cout << json.str() << "\n";
  } else {
    (report.complete && !report.left_alone ? std::cout : std::cerr)
        << "allocsim run: " << report.brief() << "\n";
  }
  return exit_code(report);
}

}  // namespace allocsim::cli
