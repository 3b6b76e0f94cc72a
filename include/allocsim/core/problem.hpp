// A balanced transport problem: agents (rows) with budgets, partners
// (columns) with capacities, gains per unit, and an optional access mask.
//
// Maximise sum_ij gains_ij * pi_ij subject to pi 1 = budgets,
// pi^T 1 = capacities, pi >= 0 and pi_ij = 0 where access_ij = 0.
#pragma once

#include <optional>
#include <string>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct TransportProblem {
  Matrix gains;                      // n x m, gain per unit sent from agent i to partner j
  Vector budgets;                    // n, > 0
  Vector capacities;                 // m, > 0; same total as budgets
  std::optional<AccessMask> access;  // n x m of 0/1; absent = every pair allowed

  Eigen::Index agents() const { return gains.rows(); }
  Eigen::Index partners() const { return gains.cols(); }
  bool allowed(Eigen::Index i, Eigen::Index j) const { return !access || (*access)(i, j) != 0; }
  double total_mass() const { return budgets.sum(); }
};

// Names of the inputs, used in messages (e.g. the CSV file each came from).
struct ProblemSources {
  std::string gains = "gains";
  std::string budgets = "budgets";
  std::string capacities = "capacities";
  std::string access = "access";
};

// Checks sizes, finiteness, signs and balance; throws InputError naming the
// source and the first offending entry. Totals may differ by at most
// `balance_tolerance` relative to the larger total.
void validate(const TransportProblem& problem, const ProblemSources& sources = {},
              double balance_tolerance = 1e-9);

// Scales capacities so that their total equals the budgets' total.
void rescale_capacities(TransportProblem& problem);

// Total gain <gains, coupling> over allowed cells.
double total_gain(const TransportProblem& problem, const Matrix& coupling);

}  // namespace allocsim
