// The linear system of a problem with one effect per row and one per column.
//
// For non-negative weights W (n x m) with row totals r = W 1 and column
// totals c = W^T 1, solves
//   [ diag(r)  W       ] [a]   [p]
//   [ W^T      diag(c) ] [b] = [q]
// (the normal equations of weighted least squares with row and column
// constants, and the Hessian of a two-margin log-linear fit). The matrix is
// singular along a + t, b - t (and on rows or columns of zero total), so the
// system is consistent only when sum(p) = sum(q) over rows and columns of
// positive total; then the solution returned has b of minimum norm among all
// solutions (b_j = 0 on columns of zero total) and a_i = 0 on rows of zero
// total. b comes from the Schur complement S = diag(c) - W^T diag(1/r) W
// (m x m), symmetric and positive semidefinite with S 1 = 0: a Cholesky
// factor of S plus a rank-one term along the ones on columns of positive
// total, or, when that is nearly singular (weights that split into blocks,
// or almost so), a complete orthogonal decomposition of S. Cost
// O(n m^2 / 2 + m^3 / 3): pass the orientation with fewer columns.
#pragma once

#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct TwoMarginSolution {
  Vector a;  // n
  Vector b;  // m
};

// `row_totals` and `column_totals` must be W 1 and W^T 1 (not recomputed).
TwoMarginSolution solve_two_margin_system(const Matrix& weights, const Vector& row_totals,
                                          const Vector& column_totals, const Vector& p,
                                          const Vector& q);

}  // namespace allocsim
