#include "allocsim/sim/engine.hpp"

#include <chrono>
#include <cmath>
#include <sstream>
#include <vector>

#include "allocsim/core/random.hpp"

namespace allocsim {

std::string RunResult::brief() const {
  std::ostringstream out;
  out.precision(3);
  out << rounds << " rounds in " << seconds << " s (" << (rounds > 0 ? 1e3 * seconds / rounds : 0)
      << " ms/round), " << snapshots << " snapshots, " << total.sum() << " units after burn-in";
  if (unplaced_units > 0) out << ", " << unplaced_units << " units unplaced";
  if (!settling.settled) out << "; NOT settled";
  return out.str();
}

RunResult run_dynamics(const TransportProblem& problem, const DynamicsOptions& options,
                       std::uint64_t seed, std::uint64_t run, SnapshotSink* sink,
                       const ProgressCallback& progress) {
  options.validate();
  const long n = problem.agents(), m = problem.partners();
  auto rule = make_rule(problem, options, seed, run);
  RoundQuota quota(options.units,
                   std::vector<double>(problem.budgets.data(), problem.budgets.data() + n));
  RunResult result;
  result.total = Matrix::Zero(n, m);
  result.last_round = Matrix::Zero(n, m);
  Matrix window = Matrix::Zero(n, m);
  Matrix previous_window, first_counted;  // the window before; the first after burn-in
  long window_start = 1;
  const auto start = std::chrono::steady_clock::now();
  for (long round = 1; round <= options.rounds; ++round) {
    rule->play_round(round, quota.next_round(), result.last_round);
    window += result.last_round;
    if (round > options.burn_in) result.total += result.last_round;
    result.unplaced_units += rule->unplaced_units();
    if (round % options.window == 0 || round == options.rounds) {
      if (sink) sink->add_snapshot(window, round, rule->prices());
      add_window(result.trace, result.snapshots > 0 ? &previous_window : nullptr, window,
                 window_start, problem.capacities, !options.mean_field);
      if (window_start > options.burn_in && first_counted.size() == 0) first_counted = window;
      window_start = round + 1;
      previous_window.swap(window);
      window.setZero(n, m);
      ++result.snapshots;
    }
    if (progress) progress(round, options.rounds);
  }
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  result.rounds = options.rounds;
  if (rule->prices()) result.final_prices = *rule->prices();
  if (first_counted.size() > 0) {
    result.trace.drift = window_change(first_counted, previous_window);
    result.trace.drift_allowance =
        options.mean_field ? 0.0 : change_allowance(first_counted, previous_window);
  } else {
    result.trace.drift = result.trace.drift_allowance = std::nan("");
  }
  result.settling = assess_settling(result.trace, options.burn_in);
  return result;
}

}  // namespace allocsim
