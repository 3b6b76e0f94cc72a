// The engine: plays a rule for a number of rounds and streams what emerges.
//
// Every round the engine hands out `units` whole units to the agents in
// proportion to their budgets (cumulative largest remainder, see
// RoundQuota in core/random.hpp: each round spends exactly `units`, and each
// agent's running total stays within one unit of its exact share), the rule
// turns them into flows, and the flows are added to
//   * the current window (rounds (k-1)*window+1 .. k*window), handed to the
//     sink as snapshot k when the window closes (the last window may be
//     shorter), together with the prices at that moment, and measured for
//     settling (settling.hpp: capacity error, change from the window before);
//   * the cumulative allocation of the rounds after burn_in.
// Memory is O(n*m) whatever the number of rounds.
#pragma once

#include <cstdint>
#include <functional>
#include <string>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"
#include "allocsim/sim/rules.hpp"
#include "allocsim/sim/settling.hpp"

namespace allocsim {

// Receives snapshots as they close (e.g. the HDF5 recorder).
class SnapshotSink {
 public:
  virtual ~SnapshotSink() = default;
  // counts: flows summed over the window (n x m); round_end: last round of
  // the window (from 1); prices: m, or nullptr for rules without prices.
  virtual void add_snapshot(const Matrix& counts, long round_end, const Vector* prices) = 0;
};

struct RunResult {
  Matrix total;         // n x m, flows summed over rounds burn_in+1 .. rounds
  Matrix last_round;    // n x m, flows of the final round
  Vector final_prices;  // m; empty for rules without prices
  long rounds = 0;
  long snapshots = 0;
  long unplaced_units = 0;  // over all rounds (queue)
  double seconds = 0;       // wall time of the rounds
  SettlingTrace trace;      // capacity error and change of every window (settling.hpp)
  Settling settling;        // whether the last two windows settled

  // One line for the command line.
  std::string brief() const;
};

// Called after each round with (round, rounds); may print progress.
using ProgressCallback = std::function<void(long, long)>;

// Throws InputError for invalid options; `sink` and `progress` may be null.
RunResult run_dynamics(const TransportProblem& problem, const DynamicsOptions& options,
                       std::uint64_t seed, std::uint64_t run, SnapshotSink* sink = nullptr,
                       const ProgressCallback& progress = nullptr);

}  // namespace allocsim
