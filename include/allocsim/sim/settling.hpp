// Whether a run settled: its last windows meet the capacities and no longer
// change beyond what sampling alone gives.
//
// For the flows of one snapshot window W (n x m, summed over its rounds;
// shares P = W / sum(W)):
//   capacity error   e(W) = 1/2 sum_j | sum_i P_ij - c_j / sum(c) |
//                    (total variation between the window's column shares
//                    and the capacity shares; 0.02 = 2% of the units sit
//                    where capacity is missing)
//   change           d(W', W) = 1/2 sum_ij | P_ij - P'_ij | between window
//                    W and the one before it, W'
// Sampled rules add noise to both even when the dynamics are stationary.
// For windows of N and N' units the expected value from sampling alone
// (normal approximation to the multinomial, E|X| = sqrt(2/pi) sd) is
//   capacity allowance  1/2 sqrt(2/pi) sum_j sqrt(s_j (1 - s_j) / N),  s = c / sum(c)
//   change allowance    1/2 sqrt(2/pi) sum_ij sqrt(p_ij (1 - p_ij) (1/N + 1/N'))
// with p the pooled shares of both windows; both are 0 for mean-field runs.
//
// A run settled when the windows after burn-in (those whose first round is
// past the burn-in; at least two are needed) show no transient:
//   1. every one has a capacity error of at most capacity_tolerance + its
//      capacity allowance (the capacities were met before counting began);
//   2. the change between the last two is at most change_tolerance + its
//      change allowance (the run ends steady);
//   3. the change between the first and the last of them (the drift over the
//      counted rounds) is at most change_tolerance + its change allowance.
// The cumulative allocation is then the stationary one up to sampling; an
// unsettled one (e.g. still reaching its capacities after burn-in) biases
// what the analysis fits, e.g. the transport temperature.
#pragma once

#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct SettlingOptions {
  double capacity_tolerance = 0.01;  // of e(W), a share of all units; in (0, 1)
  double change_tolerance = 0.01;    // of d(W', W), a share of all units; in (0, 1)
};

// Per-window measurements the engine keeps (one entry per snapshot window).
struct SettlingTrace {
  std::vector<double> capacity_errors;      // e(W_k)
  std::vector<double> capacity_allowances;  // sampling part of e(W_k)
  std::vector<double> changes;              // d(W_{k-1}, W_k); NaN for the first window
  std::vector<double> change_allowances;    // sampling part of d; NaN for the first window
  std::vector<long> first_rounds;           // first round of each window (from 1)
  double drift = 0;                         // d(first counted window, last window); NaN if none
  double drift_allowance = 0;               // its sampling part
};

struct Settling {
  bool settled = false;
  long counted_windows = 0;          // windows after burn-in
  double capacity_error = 0;         // of the last window (NaN without windows)
  double capacity_limit = 0;         // tolerance + allowance the last window was held to
  double worst_capacity_excess = 0;  // max over counted windows of error - limit (<= 0: met)
  double change = 0;                 // between the last two windows (NaN with one window)
  double change_limit = 0;           // tolerance + allowance the change was held to
  double drift = 0;                  // between the first counted window and the last
  double drift_limit = 0;
  // When not settled: what to change, in words, and the DynamicsOptions
  // fields it names ("rounds", "burn_in", "price_step", "window"); the layer
  // that owns their names (e.g. the experiment keys dynamics.*) shows them.
  std::string advice;
  std::vector<std::string> settings_to_change;

  // One line of the measurements, e.g. "settled: capacity error 0.3% (limit
  // 1.2%), change ..."; without the advice.
  std::string brief() const;
};

// e(W) for a window's flows and the capacities (m, > 0).
double capacity_error(const Matrix& window, const Vector& capacities);
// d(W', W) of two windows of flows.
double window_change(const Matrix& previous, const Matrix& window);
// The sampling parts above; `units` is the window's total of whole units.
double capacity_allowance(const Vector& capacities, double units);
double change_allowance(const Matrix& previous, const Matrix& window);

// Adds window `window` (flows of rounds first_round..; `previous` is the
// window before it, or null for the first) to the trace. `sampled` is false
// for mean-field runs.
void add_window(SettlingTrace& trace, const Matrix* previous, const Matrix& window,
                long first_round, const Vector& capacities, bool sampled);

// The verdict on the windows after `burn_in` rounds (criteria 1-3 above).
Settling assess_settling(const SettlingTrace& trace, long burn_in,
                         const SettlingOptions& options = {});

}  // namespace allocsim
