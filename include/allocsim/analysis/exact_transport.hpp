// Exact optimal transport: the coupling of largest total gain.
//
//   maximise   sum_ij gains_ij * pi_ij
//   subject to pi 1 = budgets, pi^T 1 = capacities, pi >= 0,
//              pi_ij = 0 where access_ij = 0.
//
// Solved as a min-cost flow on the bipartite graph by LEMON's network simplex.
// LEMON needs integer supplies, so the masses are scaled to `mass_units`
// integer units (largest-remainder rounding keeps both sides equal) and the
// flows scaled back; the marginals are then met to about total/mass_units.
//
// The coupling is a basic solution: at most n+m-1 positive cells and a
// support that is a forest. The dual potentials certify optimality:
//   agent_potential_i + partner_potential_j >= gains_ij  on allowed cells,
//   with equality on the support, and
//   sum_i budgets_i agent_potential_i + sum_j capacities_j partner_potential_j
//   = total_gain (strong duality).
#pragma once

#include <string>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"

namespace allocsim {

struct ExactOptions {
  // Integer units the total mass is split into for the network simplex;
  // in [1e3, 1e15]. Larger is more precise; flow * cost must fit a double.
  double mass_units = 1e12;

  // Throws InputError naming the wrong field.
  void validate() const;
};

enum class ExactStatus { optimal, infeasible };
std::string to_string(ExactStatus status);
ExactStatus exact_status_from_string(const std::string& text);

struct ExactResult {
  ExactStatus status = ExactStatus::infeasible;
  std::string message;       // for infeasible: the reason in words (which agents, partners)
  Matrix coupling;           // n x m, zero outside the support
  double total_gain = 0;     // <gains, coupling>
  Vector agent_potential;    // n, dual variables of the budget constraints
  Vector partner_potential;  // m, dual variables of the capacity constraints
  long support_size = 0;     // number of positive cells
  bool support_is_forest = false;
  double marginal_error = 0;  // (|pi 1 - r|_1 + |pi^T 1 - c|_1) / sum(r)
  double seconds = 0;         // wall time of the solve

  bool optimal() const { return status == ExactStatus::optimal; }
  // One line for the command line, e.g. "exact: optimal, total gain 3.2, 7 links (forest), 0.4 ms".
  std::string brief() const;
};

// Throws InputError for an invalid problem (see validate()) or options.
// Infeasible access masks give status infeasible with the reason in words.
// When the problem is feasible within the tolerance of explain_infeasibility
// but the rounded masses are not (a group that exactly fills its partners),
// the coupling ships what the rounded network can carry: the marginals are
// then met to a few units of total/mass_units.
ExactResult solve_exact(const TransportProblem& problem, const ExactOptions& options = {});

// When no coupling can meet the marginals under the access mask, says why in
// words (an agent or partner with no allowed pair, or a group of agents whose
// budgets exceed what their allowed partners can take, or the converse);
// returns an empty string when the problem is feasible. Groups are found by
// a max-flow / min-cut on agents -> partners; a shortfall of the max flow
// below 1e-9 of the total mass is taken for rounding, i.e. feasible. Indices
// in the message count from 1.
std::string explain_infeasibility(const TransportProblem& problem);

// True when the bipartite graph of the positive cells (value > threshold) has no cycle.
bool support_is_forest(const Matrix& coupling, double threshold = 0.0);

}  // namespace allocsim
