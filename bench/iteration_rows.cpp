// The cost of one Sinkhorn sweep against the machine's bounds measured in
// the same run: the scaling form against one read of the kernel (1 and 2
// threads), a log-domain sweep against 2nm vectorised exps.
#include "allocsim/analysis/entropic_transport.hpp"
#include "bench.hpp"
#include "instances.hpp"
#include "log_domain_iteration.hpp"
#include "report.hpp"

namespace allocsim::bench {
namespace {

// Seconds per sweep of the solver in scaling form: two solves that stop on
// their sweep budget, the difference divided by the extra sweeps.
double seconds_per_sweep(const TransportProblem& p, double epsilon, int threads, int repeats,
                         long extra) {
  EntropicOptions o;
  o.epsilon = epsilon;
  o.epsilon_scaling = false;
  o.tolerance = 1e-300;  // never reached: the sweep budget ends the solve
  o.threads = threads;
  const auto timed = [&](long sweeps) {
    o.max_iterations = sweeps;
    return best_time(repeats, [&] { solve_entropic(p, o); });
  };
  return (timed(10 + extra) - timed(10)) / static_cast<double>(extra);
}

}  // namespace

void iteration_rows(const Settings& settings, const Bandwidth& bandwidth, Report& report) {
  const long n = settings.quick ? 300 : 1000;
  const std::string size = "n=m=" + std::to_string(n);
  // One sweep against the bounds, random gains at 0.1 of the range.
  const TransportProblem p = make_instance(n, n, GainKind::random, 7);
  const double eps = 0.1 * gain_range(p);
  const long extra = settings.quick ? 100 : 200;
  const double one = seconds_per_sweep(p, eps, 1, settings.repeats, extra);
  const double two = seconds_per_sweep(p, eps, 2, settings.repeats, extra);
  const double bytes = static_cast<double>(n) * n * 8;
  const double bound_one = bytes / bandwidth.read_one;
  Row bw{"iteration",
         "scaling-form sweep, " + size + ", 1 thread",
         format_seconds(one),
         "bound " + format_seconds(bound_one) + " (one read of K at " +
             format_number(bandwidth.read_one / 1e9) + " GB/s)",
         bound_one / one,
         ">= 0.8 of the bound",
         bound_one / one >= 0.8 ? Verdict::met : Verdict::missed,
         {}};
  bw.values.add("seconds_per_sweep", one)
      .add("bound_seconds", bound_one)
      .add("bytes_per_sweep", bytes)
      .add("dram_bound_seconds", bytes / bandwidth.dram_one);
  report.add(std::move(bw));
  Row threads{"iteration",
              "scaling-form sweep, " + size + ", 2 threads vs 1",
              format_seconds(two),
              "1 thread " + format_seconds(one),
              one / two,
              ">= 1.6x",
              one / two >= 1.6 ? Verdict::met : Verdict::missed,
              {}};
  threads.values.add("one_thread_seconds", one)
      .add("two_threads_seconds", two)
      .add("bound_two_threads_seconds", bytes / bandwidth.read_two);
  report.add(std::move(threads));

  LogDomainSweep log_sweep(p, eps);
  log_sweep.sweep();
  const int log_sweeps = settings.quick ? 5 : 10;
  const double log_one = best_time(settings.repeats,
                                   [&] {
                                     for (int k = 0; k < log_sweeps; ++k) log_sweep.sweep();
                                   }) /
                         log_sweeps;
  const double exp_bound = 2.0 * n * n * bandwidth.exp_seconds;
  Row lg{"iteration",
         "log-domain sweep (C++), " + size,
         format_seconds(log_one),
         "bound " + format_seconds(exp_bound) + " (2nm vectorised exps)",
         exp_bound / log_one,
         ">= 0.5 of the bound",
         exp_bound / log_one >= 0.5 ? Verdict::met : Verdict::missed,
         {}};
  lg.values.add("seconds_per_sweep", log_one).add("exp_bound_seconds", exp_bound);
  report.add(std::move(lg));
}

}  // namespace allocsim::bench
