// Entropic optimal transport: the coupling of largest regularised gain.
//
//   maximise <gains, pi> + epsilon * H(pi),  H(pi) = -sum_ij pi_ij (log pi_ij - 1)
//   subject to pi 1 = budgets, pi^T 1 = capacities, pi_ij = 0 where access_ij = 0.
//
// The solution is pi_ij = exp((gains_ij + f_i + g_j) / epsilon) with dual
// potentials f (agents) and g (partners) found by Sinkhorn's iterations
// (Sinkhorn 1964; Cuturi 2013). The solver runs the fast scaling form
// pi = diag(u) K diag(v) on a stabilised kernel K = exp((gains + f + g)/eps),
// absorbs u and v into f and g whenever they grow large (Schmitzer 2019,
// SIAM J. Sci. Comput.), switches to exact log-domain updates for rows or
// columns whose kernel underflows, and reaches small epsilon by
// epsilon-scaling: it starts at gain range / 600 (the smallest epsilon whose
// first kernel stays within floating-point range) and shrinks geometrically,
// warm-starting the potentials. It stays finite down to epsilon = 1e-6 of the
// gain range; below that it may report not_converged, never NaN.
//
// Stopping rule: marginal violation
//   (|pi 1 - r|_1 + |pi^T 1 - c|_1) / sum(r) <= tolerance.
// Limits used by the tests: epsilon -> infinity gives r c^T / sum(r);
// epsilon -> 0 approaches the exact optimum's gain; <gains, pi_eps> falls
// monotonically as epsilon grows.
#pragma once

#include <string>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"

namespace allocsim {

struct EntropicOptions {
  double epsilon = 1.0;            // transport temperature, in gain units; > 0
  double tolerance = 1e-9;         // relative L1 marginal violation to stop at; in (0, 1)
  long max_iterations = 100000;    // Sinkhorn sweeps in all (one sweep updates f and g); >= 1
  double epsilon_shrink = 0.5;     // factor between epsilon-scaling stages; in (0, 1)
  bool epsilon_scaling = true;     // false: start directly at epsilon
  double absorb_threshold = 1e30;  // absorb u, v into f, g when any leaves [1/t, t]; > 1
  int threads = 1;                 // threads sharing each iteration, at most; >= 1. Results do
                                   // not depend on it. Keep 1 inside sweeps, which run solves
                                   // in parallel already.
  double parallel_cells = 1e6;     // problems with fewer cells (n * m) use one thread; >= 0

  // Throws InputError naming the wrong field.
  void validate() const;
};

// infeasible: the access mask admits no coupling with these marginals
// (the message says why, as for exact transport).
enum class EntropicStatus { converged, not_converged, infeasible };
std::string to_string(EntropicStatus status);
EntropicStatus entropic_status_from_string(const std::string& text);

// Dual potentials, also used to warm-start a solve at a nearby epsilon.
struct DualPotentials {
  Vector agent;    // f, n
  Vector partner;  // g, m
};

struct EntropicResult {
  EntropicStatus status = EntropicStatus::not_converged;
  std::string message;
  Matrix coupling;            // n x m
  DualPotentials potentials;  // pi_ij = exp((gains_ij + f_i + g_j) / epsilon)
  double epsilon = 0;
  double total_gain = 0;        // <gains, pi>
  double entropy = 0;           // H(pi) = -sum pi (log pi - 1)
  double primal_value = 0;      // total_gain + epsilon * entropy
  double dual_value = 0;        // epsilon * sum(pi) - <f, r> - <g, c>; equals primal at the optimum
  double marginal_error = 0;    // relative L1 violation, as in the stopping rule
  long iterations = 0;          // Sinkhorn sweeps over all stages
  long stages = 0;              // epsilon-scaling stages
  long log_domain_updates = 0;  // sweeps that needed exact log-domain updates
  double seconds = 0;

  bool converged() const { return status == EntropicStatus::converged; }
  // One line for the command line.
  std::string brief() const;
};

// `warm_start` (optional) supplies potentials from a solve of the same
// problem, e.g. at a nearby epsilon; epsilon-scaling then starts at that
// solve's epsilon when given through `warm_epsilon` > epsilon.
EntropicResult solve_entropic(const TransportProblem& problem, const EntropicOptions& options,
                              const DualPotentials* warm_start = nullptr, double warm_epsilon = 0);

// max - min of the gains over allowed cells (0 when all are equal).
double gain_range(const TransportProblem& problem);

}  // namespace allocsim
