#include "allocsim/analysis/marginal_newton.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "allocsim/analysis/two_margin_system.hpp"

namespace allocsim {
namespace {

struct State {
  Matrix pi;
  double objective = 0;  // D(a, b)
  Vector row_sum, column_sum;
};

// Fills `s` for (a, b), reusing its storage.
void evaluate(const Matrix& x, const Matrix& allowed, const Vector& r, const Vector& c,
              const Vector& a, const Vector& b, State& s) {
  s.pi.resize(x.rows(), x.cols());
  s.row_sum.resize(x.rows());
  s.column_sum = Vector::Zero(x.cols());
  const auto shift = b.transpose().array();
  for (Eigen::Index i = 0; i < x.rows(); ++i) {
    s.pi.row(i).array() =
        (allowed.row(i).array() > 0).select((x.row(i).array() + a(i) + shift).exp(), 0.0);
    s.row_sum(i) = s.pi.row(i).sum();
    s.column_sum += s.pi.row(i).transpose();
  }
  s.objective = s.row_sum.sum() - a.dot(r) - b.dot(c);
  if (!std::isfinite(s.objective)) s.objective = std::numeric_limits<double>::infinity();
}

// One log-domain Sinkhorn sweep (rows, then columns): always lowers the
// violation, slowly; used when rounding spoils a Newton step.
void sinkhorn_sweep(const Matrix& x, const Matrix& allowed, const Vector& r, const Vector& c,
                    Vector& a, Vector& b) {
  auto log_sum = [](const std::vector<double>& terms) {
    const double top = *std::max_element(terms.begin(), terms.end());
    double sum = 0;
    for (double t : terms) sum += std::exp(t - top);
    return top + std::log(sum);
  };
  std::vector<double> terms;
  for (Eigen::Index i = 0; i < x.rows(); ++i) {
    terms.clear();
    for (Eigen::Index j = 0; j < x.cols(); ++j)
      if (allowed(i, j) > 0) terms.push_back(x(i, j) + b(j));
    if (!terms.empty()) a(i) = std::log(r(i)) - log_sum(terms);
  }
  for (Eigen::Index j = 0; j < x.cols(); ++j) {
    terms.clear();
    for (Eigen::Index i = 0; i < x.rows(); ++i)
      if (allowed(i, j) > 0) terms.push_back(x(i, j) + a(i));
    if (!terms.empty()) b(j) = std::log(c(j)) - log_sum(terms);
  }
}

// Newton direction: H [da; db] = -[gr; gc] (two_margin_system.hpp).
void newton_direction(const State& s, const Vector& gr, const Vector& gc, Vector& da, Vector& db) {
  TwoMarginSolution step = solve_two_margin_system(s.pi, s.row_sum, s.column_sum, -gr, -gc);
  da = std::move(step.a);
  db = std::move(step.b);
}

MarginalFit match_columns_smaller(const Matrix& x, const Matrix& allowed, const Vector& r,
                                  const Vector& c, Vector a, Vector b, double tolerance,
                                  long max_iterations) {
  MarginalFit fit;
  const double total = r.sum();
  State s, next;
  evaluate(x, allowed, r, c, a, b, s);
  for (;;) {
    const Vector gr = s.row_sum - r, gc = s.column_sum - c;
    fit.violation = (gr.lpNorm<1>() + gc.lpNorm<1>()) / total;
    if (fit.violation <= tolerance) {
      fit.converged = true;
      break;
    }
    if (fit.iterations >= max_iterations || !std::isfinite(fit.violation)) break;
    ++fit.iterations;
    Vector da, db;
    newton_direction(s, gr, gc, da, db);
    const double slope = gr.dot(da) + gc.dot(db);
    if (!(slope < 0)) {  // the direction lost its precision: one Sinkhorn sweep instead
      sinkhorn_sweep(x, allowed, r, c, a, b);
      evaluate(x, allowed, r, c, a, b, s);
      continue;
    }
    // Backtracking: a step is taken when D falls enough (Armijo) or, where
    // rounding hides changes of D near the solution, when the marginal
    // violation falls by a tenth.
    double t = 1.0;
    bool accepted = false;
    for (int halvings = 0; halvings < 40 && !accepted; ++halvings) {
      evaluate(x, allowed, r, c, a + t * da, b + t * db, next);
      const double v = ((next.row_sum - r).lpNorm<1>() + (next.column_sum - c).lpNorm<1>()) / total;
      accepted = next.objective <= s.objective + 1e-4 * t * slope || v < 0.9 * fit.violation;
      if (!accepted) t *= 0.5;
    }
    if (!accepted) {
      sinkhorn_sweep(x, allowed, r, c, a, b);
      evaluate(x, allowed, r, c, a, b, s);
      continue;
    }
    a += t * da;
    b += t * db;
    std::swap(s, next);
  }
  fit.row_effect = a;
  fit.column_effect = b;
  fit.coupling = std::move(s.pi);
  return fit;
}

}  // namespace

MarginalFit match_marginals(const Matrix& log_kernel, const Matrix& allowed, const Vector& rows,
                            const Vector& columns, const Vector& row_start,
                            const Vector& column_start, double tolerance, long max_iterations) {
  if (log_kernel.cols() <= log_kernel.rows())
    return match_columns_smaller(log_kernel, allowed, rows, columns, row_start, column_start,
                                 tolerance, max_iterations);
  const Matrix xt = log_kernel.transpose(), at = allowed.transpose();
  MarginalFit fit = match_columns_smaller(xt, at, columns, rows, column_start, row_start, tolerance,
                                          max_iterations);
  std::swap(fit.row_effect, fit.column_effect);
  fit.coupling.transposeInPlace();
  return fit;
}

}  // namespace allocsim
