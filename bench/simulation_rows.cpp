// The sandbox's costs: one price-rule round against one log-domain sweep,
// independent runs on one and two threads, and a long run's peak memory.
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>


#include <atomic>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <thread>
#include <vector>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/sim/engine.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/sim/rules.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "log_domain_iteration.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

std::vector<double> shares(const Vector& budgets) {
  return std::vector<double>(budgets.data(), budgets.data() + budgets.size());
}

// Seconds per round of `options`' rule, after a few rounds of warm-up.
double seconds_per_round(const TransportProblem& p, const DynamicsOptions& options, int rounds) {
  auto rule = make_rule(p, options, 11, 0);
  RoundQuota quota(options.units, shares(p.budgets));
  Matrix flows(p.agents(), p.partners());
  long round = 0;
  for (int k = 0; k < 3; ++k) rule->play_round(++round, quota.next_round(), flows);
  double best = 1e300;
  for (int k = 0; k < rounds; ++k) {
    const auto& units = quota.next_round();
    const auto start = Clock::now();
    rule->play_round(++round, units, flows);
    best = std::min(best, seconds_since(start));
  }
  return best;
}

// Independent runs spread over `threads` workers; returns runs per second.
double runs_per_second(long runs, int threads, long size, long rounds) {
  std::atomic<long> next{0};
  const auto start = Clock::now();
  std::vector<std::thread> workers;
  for (int t = 0; t < threads; ++t) {
    workers.emplace_back([&] {
      for (long k; (k = next++) < runs;) {
        const TransportProblem p = make_instance(size, size, GainKind::random, 100 + k);
        DynamicsOptions o;
        o.rounds = rounds;
        o.burn_in = rounds / 4;
        o.temperature = 0.05;
        run_dynamics(p, o, 5, static_cast<std::uint64_t>(k));
      }
    });
  }
  for (auto& w : workers) w.join();
  return static_cast<double>(runs) / seconds_since(start);
}

// Seconds `allocsim run` takes for `ini` with `threads` workers, or a
// negative number when the program is missing or fails.
double allocsim_run_seconds(const Settings& settings, const std::string& ini, int threads) {
  if (access(ALLOCSIM_BENCH_PROGRAM, X_OK) != 0) return -1;
  const std::string out = settings.workdir + "/sweep-" + std::to_string(threads) + ".h5";
  const std::string command = std::string("'") + ALLOCSIM_BENCH_PROGRAM + "' run '" + ini +
                              "' --threads " + std::to_string(threads) + " --output.file '" + out +
                              "' > /dev/null 2>&1";
  const auto start = Clock::now();
  const int status = std::system(command.c_str());
  const double seconds = seconds_since(start);
  std::remove(out.c_str());
  return status == 0 ? seconds : -1;
}

// Peak resident memory (bytes) of this program re-executed as a memory child.
long child_peak_bytes(const Settings& settings, long size, long rounds) {
  const std::string file = settings.workdir + "/memory.h5";
  const std::string size_text = std::to_string(size), rounds_text = std::to_string(rounds);
  const pid_t pid = fork();
  if (pid == 0) {
    execl(settings.self.c_str(), settings.self.c_str(), "--memory-child", size_text.c_str(),
          rounds_text.c_str(), file.c_str(), static_cast<char*>(nullptr));
    _exit(127);
  }
  int status = 0;
  struct rusage usage {};
  if (pid < 0 || wait4(pid, &status, 0, &usage) != pid || !WIFEXITED(status) ||
      WEXITSTATUS(status) != 0)
    return -1;
  std::remove(file.c_str());
  return usage.ru_maxrss * 1024L;  // Linux reports kilobytes
}

}  // namespace

int memory_child(long size, long rounds, const std::string& file) {
  const TransportProblem p = make_instance(size, size, GainKind::random, 3);
  DynamicsOptions o;
  o.rounds = rounds;
  o.burn_in = std::min(100L, rounds / 2);
  o.window = 50;
  o.temperature = 0.05;
  ResultsFile results(file, "", "bench");
  RunWriter run = results.create_run(run_name(0));
  run.write_scenario(p);
  AllocationRecorder recorder = run.record_allocation(size, size);
  const RunResult result = run_dynamics(p, o, 9, 0, &recorder);
  recorder.finish(result);
  results.commit();
  return 0;
}

void simulation_rows(const Settings& settings, const Bandwidth&, Report& report) {
  const long n = settings.quick ? 300 : 1000;
  const std::string size = "n=m=" + std::to_string(n);
  {
    const TransportProblem p = make_instance(n, n, GainKind::random, 7);
    const double eps = 0.1 * gain_range(p);
    LogDomainSweep log_sweep(p, eps);
    log_sweep.sweep();
    const double log_one = best_time(settings.repeats + 2, [&] { log_sweep.sweep(); });
    DynamicsOptions o;
    o.temperature = eps;
    const double sampled = seconds_per_round(p, o, settings.repeats + 5);
    o.mean_field = true;
    const double mean_field = seconds_per_round(p, o, settings.repeats + 5);
    Row row{"simulation", "price-rule round (10000 units), " + size, format_seconds(sampled),
            "log-domain sweep " + format_seconds(log_one), sampled / log_one,
            "<= 1x a log-domain sweep", sampled <= log_one ? Verdict::met : Verdict::missed, {}};
    row.values.add("round_seconds", sampled).add("log_domain_sweep_seconds", log_one)
        .add("units", static_cast<long long>(10000));
    report.add(std::move(row));
    Row mf{"simulation", "price-rule round, mean-field, " + size, format_seconds(mean_field),
           "log-domain sweep " + format_seconds(log_one), mean_field / log_one,
           "<= 1x a log-domain sweep", mean_field <= log_one ? Verdict::met : Verdict::missed, {}};
    mf.values.add("round_seconds", mean_field).add("log_domain_sweep_seconds", log_one);
    report.add(std::move(mf));
  }
  {
    // A sweep of `runs` independent runs through `allocsim run` (process
    // start, HDF5 results and summary included); without the program, the
    // same runs played in this process on a pool of threads.
    const long runs = settings.quick ? 8 : 24, side = settings.quick ? 40 : 100;
    const long rounds = settings.quick ? 100 : 400;
    const std::string ini = settings.workdir + "/sweep.ini";
    std::ofstream(ini) << "[scenario]\nagents = " << side << "\npartners = " << side
                       << "\ngains = trait-distance\nseed = 3\n[dynamics]\nrule = price\nrounds = "
                       << rounds << "\nunits = 20000\nburn_in = " << rounds / 4
                       << "\nwindow = 50\n[sweep]\ndynamics.temperature = log(0.01, 0.5, "
                       << runs / 2 << ")\nreplicates = 2\n[output]\nfile = unused.h5\n";
    double one = allocsim_run_seconds(settings, ini, 1), two = -1;
    if (one > 0) two = allocsim_run_seconds(settings, ini, 2);
    const bool program = one > 0 && two > 0;
    std::string what = "allocsim run: " + std::to_string(runs) + " runs of n=m=" +
                       std::to_string(side) + ", " + std::to_string(rounds) + " rounds, 2 threads vs 1";
    if (program) {
      one = static_cast<double>(runs) / one;
      two = static_cast<double>(runs) / two;
    } else {
      one = runs_per_second(runs, 1, side, rounds);
      two = runs_per_second(runs, 2, side, rounds);
      what = "in-process runs (allocsim run missing): " + what.substr(what.find(':') + 2);
    }
    Row row{"sweep", what, format_number(two) + " runs/s", "1 thread " + format_number(one) + " runs/s",
            two / one, ">= 1.8x", two / one >= 1.8 ? Verdict::met : Verdict::missed, {}};
    row.values.add("runs", static_cast<long long>(runs)).add("one_thread_runs_per_second", one)
        .add("two_threads_runs_per_second", two).add("through_allocsim_run", program);
    report.add(std::move(row));
  }
  {
    const long side = settings.quick ? 200 : 1000;
    const long short_rounds = settings.quick ? 50 : 100, long_rounds = settings.quick ? 500 : 1000;
    const long small = child_peak_bytes(settings, side, short_rounds);
    const long large = child_peak_bytes(settings, side, long_rounds);
    const double matrix = static_cast<double>(side) * side * 8;
    const double growth = static_cast<double>(large) / static_cast<double>(small);
    Row row{"simulation", "peak memory, n=m=" + std::to_string(side) + ", " +
                              std::to_string(long_rounds) + " vs " + std::to_string(short_rounds) +
                              " rounds (HDF5 recorder)",
            format_number(large / 1e6) + " MB = " + format_number(large / matrix) + " n*m*8",
            format_number(small / 1e6) + " MB = " + format_number(small / matrix) + " n*m*8",
            growth, "no growth with rounds (<= 1.05x)",
            small > 0 && large > 0 && growth <= 1.05 ? Verdict::met : Verdict::missed, {}};
    row.values.add("n_m_8_bytes", matrix).add("short_rounds", static_cast<long long>(short_rounds))
        .add("long_rounds", static_cast<long long>(long_rounds))
        .add("short_peak_bytes", static_cast<long long>(small))
        .add("long_peak_bytes", static_cast<long long>(large));
    report.add(std::move(row));
  }
}

}  // namespace allocsim::bench
