// What is left of a matrix after removing row and column constants, by
// weighted least squares:
//
//   R = X - a 1^T - 1 b^T,  (a, b) minimising sum_ij w_ij (X_ij - a_i - b_j)^2.
//
// With w = 1 on the allowed cells this is double-centring restricted to the
// access mask: R = 0 exactly when X is additive (X_ij = a_i + b_j) there, i.e.
// when every coupling with the given marginals has the same <X, pi>.
// With w = pi (a coupling) sum_ij pi_ij R_ij^2 is the variance of X under pi
// conditional on the marginals: the derivative d<X, pi_beta>/d beta of the
// entropic family pi_beta ~ exp(beta X + a_i + b_j) with fixed marginals, and
// its Fisher information per unit (the efficient information for beta with
// the row and column effects as nuisance; see e.g. Agresti, Categorical Data
// Analysis, ch. 9, log-linear models).
//
// Solved exactly from the normal equations (two_margin_system.hpp): the row
// constants are eliminated and the column constants (the smaller side)
// solved from the Schur complement, so weights that split the matrix into
// disconnected blocks are handled (minimum-norm constants). Cost
// O(n m min(n, m) / 2 + min(n, m)^3 / 3).
#pragma once

#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

// Weights must be non-negative with the shape of `values` (asserted). Cells of
// zero weight get residual 0; a row or column of zero total weight gets 0.
Matrix additive_residual(const Matrix& values, const Matrix& weights);

// sum_ij w_ij R_ij^2 with R = additive_residual(values, weights): the
// conditional variance above when the weights sum to 1.
double conditional_variance(const Matrix& values, const Matrix& weights);

// Several matrices at once: entry (k, l) = sum_ij w_ij R^k_ij R^l_ij (the
// conditional covariance of features k and l under w).
Eigen::MatrixXd conditional_covariance(const std::vector<Matrix>& features, const Matrix& weights);

}  // namespace allocsim
