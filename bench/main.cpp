// allocsim_bench: measured times and ratios of the solvers and the sandbox
// against outside baselines and the machine's bounds, in one run.
//
//   allocsim_bench [--quick] [--json] [--only GROUP,...]
//
// The table goes to stdout (Markdown), progress to stderr; --json prints one
// JSON object instead. The python baselines run through /usr/bin/python3
// (bench/python_baselines.py). A full run takes a few minutes on 2 cores.
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <ctime>
#include <exception>
#include <iostream>
#include <set>
#include <sstream>
#include <string>
#include <thread>

#include "bench.hpp"
#include "python_baselines.hpp"
#include "report.hpp"

namespace allocsim::bench {

double best_time(int repeats, const std::function<void()>& work) {
  double best = 1e300;
  for (int k = 0; k < std::max(1, repeats); ++k) {
    const auto start = Clock::now();
    work();
    best = std::min(best, seconds_since(start));
  }
  return best;
}

namespace {

const char* kUsage =
    "usage: allocsim_bench [--quick] [--json] [--only GROUP,...]\n"
    "  --quick   smoke run: small sizes and short caps (about half a minute)\n"
    "  --json    print one JSON object instead of the table\n"
    "  --only    comma-separated groups: exact, entropic, iteration, simulation, csv (machine always)\n";

std::string self_path() {
  char buffer[4096];
  const ssize_t size = readlink("/proc/self/exe", buffer, sizeof buffer - 1);
  return size > 0 ? std::string(buffer, static_cast<std::size_t>(size)) : std::string();
}

std::string utc_now() {
  const std::time_t now = std::time(nullptr);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", std::gmtime(&now));
  return text;
}

double load_average() {
  double load[1] = {-1};
  getloadavg(load, 1);
  return load[0];
}

}  // namespace
}  // namespace allocsim::bench

int main(int argc, char** argv) {
  using namespace allocsim::bench;
  if (argc == 5 && std::strcmp(argv[1], "--memory-child") == 0)
    return memory_child(std::atol(argv[2]), std::atol(argv[3]), argv[4]);

  Settings settings;
  bool json = false;
  std::set<std::string> only;
  for (int k = 1; k < argc; ++k) {
    const std::string a = argv[k];
    if (a == "--quick") {
      settings.quick = true;
    } else if (a == "--json") {
      json = true;
    } else if (a == "--only" && k + 1 < argc) {
      std::stringstream list(argv[++k]);
      for (std::string g; std::getline(list, g, ',');) only.insert(g);
    } else if (a == "--help" || a == "-h") {
      std::cout << kUsage;
      return 0;
    } else {
      std::cerr << "allocsim_bench: unknown argument '" << a << "'\n" << kUsage;
      return 2;
    }
  }
  if (settings.quick) {
    settings.repeats = 2;
    settings.python_budget = 3;
  }
  settings.self = self_path();
  char folder[] = "/tmp/allocsim-bench-XXXXXX";
  if (!mkdtemp(folder)) {
    std::cerr << "allocsim_bench: cannot create a scratch folder in /tmp\n";
    return 1;
  }
  settings.workdir = folder;
  const auto wanted = [&](const std::string& g) { return only.empty() || only.count(g) > 0; };

  Report report;
  const auto started = Clock::now();
  const double load_before = load_average();
  int code = 0;
  try {
    std::cerr << "allocsim_bench: machine bounds...\n";
    const Bandwidth bandwidth = measure_bandwidth(settings, report);
    if (wanted("exact")) {
      std::cerr << "allocsim_bench: exact transport vs HiGHS...\n";
      exact_rows(settings, report);
    }
    if (wanted("entropic")) {
      std::cerr << "allocsim_bench: entropic transport vs numpy...\n";
      entropic_rows(settings, report);
    }
    if (wanted("iteration")) {
      std::cerr << "allocsim_bench: Sinkhorn sweeps vs the machine's bounds...\n";
      iteration_rows(settings, bandwidth, report);
    }
    if (wanted("simulation")) {
      std::cerr << "allocsim_bench: simulation, sweeps, memory...\n";
      simulation_rows(settings, bandwidth, report);
    }
    if (wanted("csv")) {
      std::cerr << "allocsim_bench: CSV reading and writing, whole solve process...\n";
      csv_rows(settings, report);
    }
  } catch (const std::exception& e) {
    std::cerr << "allocsim_bench: " << e.what() << "\n";
    code = 1;
  }
  std::string command = "rm -rf '" + settings.workdir + "'";
  if (std::system(command.c_str()) != 0) std::cerr << "allocsim_bench: could not remove " << folder << "\n";

  const double seconds = seconds_since(started);
  const double load_after = load_average();
  const PythonAnswer info = run_python({"info"});
  allocsim::JsonObject context;
  context.add("created_utc", utc_now())
      .add("quick", settings.quick)
      .add("seconds", seconds)
      .add("load_average_before", load_before)
      .add("load_average_after", load_after)
      .add("hardware_threads", static_cast<long long>(std::thread::hardware_concurrency()))
      .add("numpy", info.word("numpy"));
  report.set_context(context);
  report.note("load average (1 min) " + format_number(load_before, 2) + " before, " +
              format_number(load_after, 2) + " after; " +
              std::to_string(std::thread::hardware_concurrency()) + " hardware threads; whole run " +
              format_seconds(seconds) + (settings.quick ? " (--quick)" : ""));
  report.note("numpy " + info.word("numpy") +
              " with OPENBLAS_NUM_THREADS=1 (OPENBLAS_CORETYPE, OPENBLAS_L2_SIZE unset for it); "
              "ratios are baseline time / our time, except 'vs bare LEMON' and the rows with a "
              "bound (bound / our time), the memory row (long / short), the CSV speed rows (our speed / "
              "target speed) and the whole-process row (process / solve alone)");
  std::cout << (json ? report.json() + "\n" : report.table());
  return code;
}
