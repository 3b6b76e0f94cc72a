#include "allocsim/analysis/two_margin_system.hpp"

#include <algorithm>
#include <cmath>

namespace allocsim {
namespace {

// Smallest squared pivot ratio of the Cholesky factor accepted before the
// orthogonal decomposition takes over (a condition number of about 1e10).
constexpr double kSmallestPivotRatio = 1e-10;

// S = diag(c) - W^T diag(1/r) W, lower triangle filled (symmetric rank update
// of sqrt(1/r_i) times the rows of W), then mirrored.
Eigen::MatrixXd schur_complement(const Matrix& w, const Vector& inv_r, const Vector& c) {
  const Eigen::Index m = w.cols();
  const Matrix scaled = inv_r.cwiseSqrt().asDiagonal() * w;
  Eigen::MatrixXd s = Eigen::MatrixXd::Zero(m, m);
  s.selfadjointView<Eigen::Lower>().rankUpdate(scaled.transpose(), -1.0);
  s.diagonal() += c;
  s.triangularView<Eigen::StrictlyUpper>() = s.transpose();
  return s;
}

// b of minimum norm with S b = rhs (rhs orthogonal to the null space of S).
Vector solve_schur(Eigen::MatrixXd s, const Vector& c, const Vector& rhs) {
  const Eigen::Index m = s.rows();
  Vector used = Vector::Zero(m);
  double diagonal_sum = 0;
  long count = 0;
  for (Eigen::Index j = 0; j < m; ++j)
    if (c(j) > 0) {
      used(j) = 1;
      diagonal_sum += s(j, j);
      ++count;
    }
  if (count > 0 && diagonal_sum > 0) {
    // The ones on used columns span the null space when the weights are
    // connected; a rank-one term there (of the diagonal's mean size) makes S
    // positive definite without changing the solution orthogonal to it.
    Eigen::MatrixXd shifted = s;
    const double lambda = diagonal_sum / static_cast<double>(count) / static_cast<double>(count);
    shifted.noalias() += lambda * used * used.transpose();
    for (Eigen::Index j = 0; j < m; ++j)
      if (c(j) <= 0) shifted(j, j) = 1;  // an empty column: b_j = 0 (its rhs is 0)
    const Eigen::LLT<Eigen::MatrixXd> cholesky(shifted);
    if (cholesky.info() == Eigen::Success) {
      const auto pivots = cholesky.matrixLLT().diagonal();
      const double low = pivots.minCoeff(), high = pivots.maxCoeff();
      if (low * low >= kSmallestPivotRatio * high * high) {
        Vector b = cholesky.solve(rhs.cwiseProduct(used));
        if (b.allFinite()) return b;
      }
    }
  }
  return s.completeOrthogonalDecomposition().solve(rhs);
}

}  // namespace

TwoMarginSolution solve_two_margin_system(const Matrix& weights, const Vector& row_totals,
                                          const Vector& column_totals, const Vector& p,
                                          const Vector& q) {
  Vector inv_r(row_totals.size());
  for (Eigen::Index i = 0; i < inv_r.size(); ++i)
    inv_r(i) = row_totals(i) > 0 ? 1.0 / row_totals(i) : 0.0;
  const Vector pr = inv_r.cwiseProduct(p);
  const Vector rhs = q - weights.transpose() * pr;
  TwoMarginSolution out;
  out.b = solve_schur(schur_complement(weights, inv_r, column_totals), column_totals, rhs);
  out.a = inv_r.cwiseProduct(p - weights * out.b);
  return out;
}

}  // namespace allocsim
