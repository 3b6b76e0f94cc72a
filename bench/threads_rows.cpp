// Threads of one entropic solve: at rest (2 threads vs 1 on a problem
// whose kernel does not fit in the caches) and under load (every core kept
// busy by spinning processes this program starts and stops).
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <thread>
#include <vector>

#include "allocsim/analysis/entropic_transport.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

// Processes that keep `count` cores busy until they are stopped.
class Spinners {
 public:
  explicit Spinners(int count) {
    for (int k = 0; k < count; ++k) {
      const pid_t pid = fork();
      if (pid == 0) {
        volatile unsigned long spin = 0;
        for (;;) spin = spin + 1;
      }
      if (pid > 0) pids_.push_back(pid);
    }
    usleep(200000);  // let the scheduler spread them
  }
  ~Spinners() {
    for (pid_t pid : pids_) kill(pid, SIGKILL);
    for (pid_t pid : pids_) waitpid(pid, nullptr, 0);
  }
  Spinners(const Spinners&) = delete;
  Spinners& operator=(const Spinners&) = delete;

 private:
  std::vector<pid_t> pids_;
};

struct Timed {
  double seconds = 0;
  EntropicResult result;
};

Timed timed_solve(const TransportProblem& p, EntropicOptions o, int threads, double parallel_cells,
                  int repeats) {
  o.threads = threads;
  o.parallel_cells = parallel_cells;
  Timed t;
  t.seconds = best_time(repeats, [&] { t.result = solve_entropic(p, o); });
  return t;
}

std::string it_text(const Timed& t) {
  return format_seconds(t.seconds) + ", " + std::to_string(t.result.iterations) + " it" +
         (t.result.converged() ? "" : " (" + to_string(t.result.status) + ")");
}

}  // namespace

void threads_rows(const Settings& settings, Report& report) {
  const int cores = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  const double default_cells = EntropicOptions{}.parallel_cells;
  {
    // At rest: 2 threads vs 1 where the kernel (32 MB) streams from memory.
    const long n = settings.quick ? 1200 : 2000;
    const TransportProblem p = make_instance(n, n, GainKind::geometric, 21);
    EntropicOptions o;
    o.epsilon = 0.01 * gain_range(p);
    o.tolerance = 1e-6;
    const Timed one = timed_solve(p, o, 1, default_cells, settings.repeats);
    const Timed two = timed_solve(p, o, 2, default_cells, settings.repeats);
    const double ratio = one.seconds / two.seconds;
    Row row{"threads",
            "entropic solve at rest, geometric, eps=0.01 range, n=m=" + std::to_string(n) +
                ", tol 1e-6, 2 threads vs 1",
            it_text(two),
            "1 thread " + it_text(one),
            ratio,
            ">= 1.6x",
            ratio >= 1.6 ? Verdict::met : Verdict::missed,
            {}};
    row.values.add("n", static_cast<long long>(n))
        .add("one_thread_seconds", one.seconds)
        .add("two_threads_seconds", two.seconds)
        .add("identical", one.result.coupling == two.result.coupling);
    report.add(std::move(row));
  }
  // Under load: as many spinning processes as cores, started here.
  for (long n : {600L, settings.quick ? 1200L : 2000L}) {
    const TransportProblem p = make_instance(n, n, GainKind::geometric, 22);
    EntropicOptions o;
    o.epsilon = 0.01 * gain_range(p);
    o.tolerance = n <= 600 ? 1e-9 : 1e-6;
    const int repeats = n <= 600 ? settings.repeats + 2 : settings.repeats;
    Timed one, fallback, forced;
    {
      Spinners load(cores);
      one = timed_solve(p, o, 1, default_cells, repeats);
      fallback = timed_solve(p, o, cores, default_cells, repeats);
      forced = timed_solve(p, o, cores, 0, repeats);
      one.seconds = std::min(one.seconds, timed_solve(p, o, 1, default_cells, repeats).seconds);
    }
    const std::string what =
        "entropic solve under load (" + std::to_string(cores) +
        " spinning processes), geometric, eps=0.01 range, n=m=" + std::to_string(n) + ", tol " +
        (n <= 600 ? "1e-9" : "1e-6");
    const double ratio = fallback.seconds / one.seconds;
    const bool threaded = static_cast<double>(n) * n >= default_cells;
    Row row{"threads",
            what + ", default threads (" + std::to_string(threaded ? cores : 1) + " used) vs 1",
            it_text(fallback),
            "1 thread " + it_text(one),
            ratio,
            "<= 1.2x the 1-thread time",
            ratio <= 1.2 ? Verdict::met : Verdict::missed,
            {}};
    row.values.add("n", static_cast<long long>(n))
        .add("spinning_processes", static_cast<long long>(cores))
        .add("one_thread_seconds", one.seconds)
        .add("default_seconds", fallback.seconds)
        .add("threads_used", static_cast<long long>(threaded ? cores : 1));
    report.add(std::move(row));
    if (!threaded) {
      Row info{"threads",
               what + ", " + std::to_string(cores) + " threads forced vs 1",
               it_text(forced),
               "1 thread " + it_text(one),
               forced.seconds / one.seconds,
               "",
               Verdict::info,
               {}};
      info.values.add("n", static_cast<long long>(n))
          .add("forced_seconds", forced.seconds)
          .add("one_thread_seconds", one.seconds);
      report.add(std::move(info));
    }
  }
}

}  // namespace allocsim::bench
