// Shared declarations of the benchmark program: its settings, the timing
// helper and one function per group of rows (each in its own file).
#pragma once

#include <chrono>
#include <functional>
#include <string>

namespace allocsim::bench {

class Report;

struct Settings {
  bool quick = false;         // smoke run: small sizes, short caps
  int repeats = 3;            // timed repetitions of the fast measurements (the best counts)
  double python_budget = 25;  // seconds a numpy baseline may run before it gives up
  std::string workdir;        // scratch folder for the instances handed to python
  std::string self;           // path of this program (re-executed for the memory rows)
};

using Clock = std::chrono::steady_clock;

inline double seconds_since(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

// Best wall time of `repeats` calls of `work` (at least one call).
double best_time(int repeats, const std::function<void()>& work);

// The groups of rows, in the order the table shows them.
struct Bandwidth {
  double read_one = 0, read_two = 0;  // bytes per second over a buffer the size of a 1000x1000 kernel
  double dram_one = 0, dram_two = 0;  // the same over a buffer far larger than the caches
  double exp_seconds = 0;             // seconds per vectorised exp (one thread)
};
Bandwidth measure_bandwidth(const Settings& settings, Report& report);
void exact_rows(const Settings& settings, Report& report);
void entropic_rows(const Settings& settings, Report& report);
void iteration_rows(const Settings& settings, const Bandwidth& bandwidth, Report& report);
void simulation_rows(const Settings& settings, const Bandwidth& bandwidth, Report& report);
void csv_rows(const Settings& settings, Report& report);

// The child side of the memory rows (this program re-executed): plays a
// simulation and exits; returns the exit code.
int memory_child(long size, long rounds, const std::string& file);

}  // namespace allocsim::bench
