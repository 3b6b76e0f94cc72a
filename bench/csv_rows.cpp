// CSV at disk speed: parsing and writing a dense matrix of numbers, and a
// whole `allocsim solve` process against the solve alone.
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>
#include <thread>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/core/csv.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "python_baselines.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

constexpr double kParseTarget = 200e6;  // bytes per second
constexpr double kWriteTarget = 150e6;
constexpr double kProcessTarget = 1.5;  // whole process / in-process solve
constexpr double kEpsilonShare = 0.01;  // of the gain range

std::string speed_text(double bytes, double seconds) {
  return format_number(bytes / seconds / 1e6) + " MB/s (" + format_seconds(seconds) + ")";
}

Row speed_row(const std::string& name, double bytes, double seconds, double target) {
  const double speed = bytes / seconds;
  Row row{"csv",
          name,
          speed_text(bytes, seconds),
          "target " + format_number(target / 1e6) + " MB/s",
          speed / target,
          ">= " + format_number(target / 1e6) + " MB/s",
          speed >= target ? Verdict::met : Verdict::missed,
          {}};
  row.values.add("bytes", bytes).add("seconds", seconds).add("bytes_per_second", speed);
  return row;
}

void write_vector(const std::string& path, const Vector& values) {
  write_matrix_csv(path, Matrix(values.transpose()));
}

// Seconds of one `allocsim solve` process, or a negative number when the
// program is missing or fails.
double solve_process_seconds(const std::string& folder, int threads, double tolerance = 1e-9) {
  if (access(ALLOCSIM_BENCH_PROGRAM, X_OK) != 0) return -1;
  const std::string command =
      std::string("'") + ALLOCSIM_BENCH_PROGRAM + "' solve --gains '" + folder +
      "/gains.csv' --budgets '" + folder + "/budgets.csv' --capacities '" + folder +
      "/capacities.csv' --method entropic --epsilon-of-range " + format_number(kEpsilonShare, 17) +
      " --tolerance " + format_number(tolerance, 17) + " --threads " + std::to_string(threads) +
      " --out '" + folder + "/coupling.csv' > /dev/null 2>&1";
  const auto start = Clock::now();
  const int status = std::system(command.c_str());
  return status == 0 ? seconds_since(start) : -1;
}

// The whole `solve` process at n = m = 600, tolerance 1e-9, against the
// numpy log-domain Sinkhorn timed on its solve alone (same instance).
void process_versus_numpy_row(const Settings& settings, Report& report) {
  const long n = settings.quick ? 200 : 600;
  const std::string folder = settings.workdir + "/process600";
  std::system(("mkdir -p '" + folder + "'").c_str());
  const TransportProblem p = make_instance(n, n, GainKind::geometric, 23);
  write_instance(p, folder);
  write_matrix_csv(folder + "/gains.csv", p.gains);
  write_vector(folder + "/budgets.csv", p.budgets);
  write_vector(folder + "/capacities.csv", p.capacities);
  const int threads = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  const double tolerance = 1e-9;
  double process_seconds = 1e300;
  for (int k = 0; k < std::max(1, settings.repeats) && process_seconds > 0; ++k)
    process_seconds = std::min(process_seconds, solve_process_seconds(folder, threads, tolerance));
  const PythonAnswer numpy = run_python(
      {"log", folder, std::to_string(n), std::to_string(n),
       format_number(kEpsilonShare * gain_range(p), 17), format_number(tolerance, 17),
       std::to_string(settings.quick ? 2000 : 200000), format_number(settings.python_budget, 6)});
  const bool numpy_ok = numpy.ok() && !numpy.flag("failed");
  const double numpy_seconds = numpy_ok ? numpy.number("seconds") : 0;
  const double ratio = process_seconds > 0 && numpy_ok ? numpy_seconds / process_seconds : 0;
  const bool numpy_converged = numpy_ok && numpy.flag("converged");
  Row row{"csv",
          "whole `solve --method entropic` n=m=" + std::to_string(n) +
              ", eps=0.01 range, tol 1e-9 vs numpy log-domain (its solve alone)",
          process_seconds > 0 ? format_seconds(process_seconds) : "did not run",
          numpy_ok ? "numpy log " + format_seconds(numpy_seconds) + ", " +
                         format_number(numpy.number("iterations")) + " it" +
                         (numpy_converged ? "" : " (stopped: ratio is a lower bound)")
                   : "numpy did not run",
          ratio,
          ">= 10x faster",
          ratio >= 10 ? Verdict::met : Verdict::missed,
          {}};
  row.values.add("n", static_cast<long long>(n))
      .add("process_seconds", process_seconds)
      .add("numpy_seconds", numpy_seconds)
      .add("numpy_converged", numpy_converged);
  report.add(std::move(row));
}

}  // namespace

void csv_rows(const Settings& settings, Report& report) {
  const long n = settings.quick ? 300 : 1000;
  const std::string size = std::to_string(n) + "x" + std::to_string(n);
  const TransportProblem p = make_instance(n, n, GainKind::geometric, 19);
  const std::string gains_path = settings.workdir + "/gains.csv";

  const double write_seconds =
      best_time(settings.repeats, [&] { write_matrix_csv(gains_path, p.gains); });
  const double bytes = static_cast<double>(std::filesystem::file_size(gains_path));
  LabeledMatrix read;
  const double parse_seconds =
      best_time(settings.repeats, [&] { read = read_matrix_csv(gains_path); });
  if (read.values != p.gains)
    throw std::runtime_error("csv rows: the gains did not read back exactly");

  Row parse = speed_row("parse " + size + " numbers (" + format_number(bytes / 1e6) + " MB)", bytes,
                        parse_seconds, kParseTarget);
  report.add(std::move(parse));
  Row write = speed_row("write " + size + " numbers (shortest round-trip text)", bytes,
                        write_seconds, kWriteTarget);
  report.add(std::move(write));

  write_vector(settings.workdir + "/budgets.csv", p.budgets);
  write_vector(settings.workdir + "/capacities.csv", p.capacities);
  const int threads = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  EntropicOptions o;
  o.epsilon = kEpsilonShare * gain_range(p);
  o.threads = threads;
  EntropicResult result;
  // Alternating, so that both meet the same background load; best of each.
  double solve_seconds = 1e300, process_seconds = 1e300;
  for (int k = 0; k < std::max(1, settings.repeats); ++k) {
    solve_seconds = std::min(solve_seconds, best_time(1, [&] { result = solve_entropic(p, o); }));
    const double process = solve_process_seconds(settings.workdir, threads);
    if (process < 0) {
      process_seconds = -1;
      break;
    }
    process_seconds = std::min(process_seconds, process);
  }
  const double over = process_seconds / solve_seconds;
  Row process{"csv",
              "whole `solve --method entropic` n=m=" + std::to_string(n) + ", eps=0.01 range, " +
                  std::to_string(threads) + " threads",
              process_seconds < 0 ? "did not run" : format_seconds(process_seconds),
              "solve alone " + format_seconds(solve_seconds) + ", " +
                  std::to_string(result.iterations) + " it",
              process_seconds < 0 ? 0 : over,
              "<= 1.5x the solve alone",
              process_seconds > 0 && over <= kProcessTarget ? Verdict::met : Verdict::missed,
              {}};
  process.values.add("n", static_cast<long long>(n))
      .add("threads", static_cast<long long>(threads))
      .add("process_seconds", process_seconds)
      .add("solve_seconds", solve_seconds)
      .add("iterations", static_cast<long long>(result.iterations))
      .add("converged", result.converged());
  report.add(std::move(process));
  process_versus_numpy_row(settings, report);
  for (const char* name : {"gains.csv", "budgets.csv", "capacities.csv", "coupling.csv"}) {
    std::remove((settings.workdir + "/" + name).c_str());
  }
}

}  // namespace allocsim::bench
