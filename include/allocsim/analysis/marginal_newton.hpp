// Matching the marginals of a log-linear table by Newton's method.
//
// Given a log-kernel X (n x m) on the allowed cells and marginals r, c of
// equal total, finds a, b with
//   pi_ij = exp(X_ij + a_i + b_j)  (allowed cells; 0 elsewhere),
//   pi 1 = r,  pi^T 1 = c,
// by minimising the convex function
//   D(a, b) = sum_ij pi_ij(a, b) - <a, r> - <b, c>
// with Newton steps and a backtracking (Armijo) line search. Its Hessian is
// [[diag(pi 1), pi], [pi^T, diag(pi^T 1)]]; a step eliminates a and solves
// the Schur complement in b (the smaller side; two_margin_system.hpp), whose
// minimum-norm solution ignores the direction along which a + t, b - t
// leaves pi unchanged. Converges quadratically near the solution, where
// Sinkhorn's iterations (the same fixed point, Sinkhorn 1964) slow down
// when exp(X) is badly conditioned (a small transport temperature). Where
// rounding spoils a Newton direction (no descent, or no step of the line
// search helps) one log-domain Sinkhorn sweep is taken instead. Each Newton
// step costs O(n m min(n, m) / 2 + min(n, m)^3 / 3) on one thread.
//
// Stopping rule as for entropic transport: (|pi 1 - r|_1 + |pi^T 1 - c|_1) /
// sum(r) <= tolerance.
#pragma once

#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct MarginalFit {
  Vector row_effect;     // a, n
  Vector column_effect;  // b, m
  Matrix coupling;       // pi
  double violation = 0;  // relative L1 marginal violation reached
  long iterations = 0;   // Newton steps
  bool converged = false;
};

// `allowed` is 1 on usable cells and 0 elsewhere; X is ignored where it is 0.
// `row_start` and `column_start` (sizes n and m) are the starting a and b.
MarginalFit match_marginals(const Matrix& log_kernel, const Matrix& allowed, const Vector& rows,
                            const Vector& columns, const Vector& row_start,
                            const Vector& column_start, double tolerance, long max_iterations);

}  // namespace allocsim
