// allocsim run: every run of an experiment file's sweep, in parallel,
// resumable, and over MPI ranks when launched by mpirun.
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <iostream>
#include <sstream>
#include <thread>

#include "allocsim/results/results_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/experiments/sweep_runner.hpp"
#include "allocsim/results/layout.hpp"
#include "commands.hpp"
#include "mpi_sweep.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

std::atomic<bool> stop_requested{false};

// First Ctrl-C: finish the runs in flight, then stop. Second: stop at once
// (the finished runs are kept either way).
extern "C" void on_interrupt(int) {
  if (stop_requested.exchange(true)) std::_Exit(130);
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

// A bar redrawn in place on a terminal; otherwise a plain line every 10% of
// the runs or every 30 s.
std::function<void(const SweepProgress&)> progress_printer(long already_done, long total) {
  const bool terminal = ::isatty(2);
  auto last_line = std::chrono::steady_clock::now();
  long last_tenth = 0;
  return [=](const SweepProgress& p) mutable {
    const double rate = p.seconds > 0 ? p.done / p.seconds : 0;
    const double left = rate > 0 ? (p.to_do - p.done) / rate : 0;
    const long done = already_done + p.done;
    std::ostringstream line;
    line.precision(3);
    line << done << "/" << total << " runs, " << rate << " runs/s, " << format_duration(left)
         << " left";
    if (terminal) {
      constexpr int kWidth = 30;
      const int filled = static_cast<int>(kWidth * done / std::max(total, 1L));
      std::cerr << "\r[" << std::string(filled, '#') << std::string(kWidth - filled, '.') << "] "
                << line.str() << "   " << (p.done == p.to_do ? "\n" : "") << std::flush;
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
  return "usage: allocsim run EXP.ini [--threads N] [--restart] [--csv FILE] [--section.key VALUE ...]\n"
         "       mpirun -np K allocsim run EXP.ini\n\n"
         "Runs every point of the experiment's [sweep] (one run without one) and writes\n"
         "one results file (output.file). Finished runs are kept as they complete in\n"
         "<output.file>.parts/: after a crash or Ctrl-C, the same command finishes the rest.\n\n";
}

JsonObject report_json(const SweepReport& report) {
  JsonObject json;
  json.add("status", report.complete      ? "complete"
                     : report.interrupted ? "interrupted"
                     : report.failures.empty() ? "partial" : "failed")
      .add("file", report.output_file)
      .add("runs", static_cast<long long>(report.total))
      .add("already_done", static_cast<long long>(report.already_done))
      .add("ran", static_cast<long long>(report.ran))
      .add("failed", static_cast<long long>(report.failures.size()))
      .add("seconds", report.seconds);
  return json;
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
  options.add_options()
      ("experiment", po::value<std::string>(), "experiment file (INI)")
      ("threads", po::value<int>()->default_value(static_cast<int>(std::max(1u, std::thread::hardware_concurrency()))),
       "worker threads (results do not depend on it)")
      ("restart", "discard the kept runs of an unfinished sweep of another experiment")
      ("csv", po::value<std::string>(), "also write the summary table to this CSV file")
      ("list-keys", "list every experiment key with its default and valid values")
      ("quiet", "no progress on stderr")
      ("json", "print one JSON object on stdout")
      ("help,h", "show this help");
  add_experiment_key_options(options);
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
  if (!vm.count("experiment")) throw InputError("allocsim run", "name an experiment file (see --help)");
  silence_hdf5_diagnostics();
  MpiSession mpi;
  const SweepPlan plan = plan_sweep(vm["experiment"].as<std::string>(), experiment_values_given(vm));

  SweepRequest request;
  request.threads = vm["threads"].as<int>();
  if (request.threads < 1) throw InputError("--threads", "must be at least 1");
  request.restart = vm.count("restart") > 0;
  request.tool_version = ALLOCSIM_VERSION;
  request.stop = &stop_requested;
  mpi.configure(request);
  if (!vm.count("quiet") && mpi.rank() == 0) {
    request.progress = progress_printer(0, static_cast<long>(plan.points.size()));
  }
  std::signal(SIGINT, on_interrupt);
  std::signal(SIGTERM, on_interrupt);
  const SweepReport report = run_sweep(plan, request);
  std::signal(SIGINT, SIG_DFL);
  std::signal(SIGTERM, SIG_DFL);
  if (mpi.rank() != 0) return report.failures.empty() ? kExitOk : kExitProblem;

  if (report.complete && vm.count("csv")) write_summary_csv(vm["csv"].as<std::string>(), report.summary);
  if (report.complete) warn_unsettled(report.summary);
  if (vm.count("json")) {
    std::cout << report_json(report).str() << "\n";
  } else {
    (report.complete ? std::cout : std::cerr) << "allocsim run: " << report.brief() << "\n";
  }
  return report.complete ? kExitOk : kExitProblem;
}

}  // namespace allocsim::cli
