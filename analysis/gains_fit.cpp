#include "allocsim/analysis/gains_fit.hpp"

#include <cmath>
#include <limits>
#include <sstream>

#include "allocsim/analysis/additive_residual.hpp"
#include "allocsim/analysis/marginal_newton.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kMarginTolerance = 1e-13;
constexpr double kIdentificationTolerance = 1e-10;

std::string name_of(const std::vector<std::string>& names, std::size_t k) {
  return k < names.size() ? names[k] : "feature " + std::to_string(k + 1);
}

Matrix allowed_cells(const TransportProblem& problem) {
  Matrix allowed = Matrix::Ones(problem.agents(), problem.partners());
  if (problem.access)
    for (Eigen::Index i = 0; i < allowed.size(); ++i)
      allowed.data()[i] = problem.access->data()[i] != 0 ? 1.0 : 0.0;
  return allowed;
}

// Features on the kept cells, zero where access forbids; checks shape and values.
std::vector<Matrix> kept_features(const ObservedAllocation& o, const std::vector<Matrix>& features,
                                  const std::vector<std::string>& names, const Matrix& allowed) {
  const auto rows = static_cast<Eigen::Index>(o.kept_rows.size() + o.dropped_rows.size());
  const auto cols = static_cast<Eigen::Index>(o.kept_columns.size() + o.dropped_columns.size());
  if (features.empty()) throw InputError("features", "give at least one feature matrix");
  std::vector<Matrix> kept;
  for (std::size_t k = 0; k < features.size(); ++k) {
    const Matrix& f = features[k];
    if (f.rows() != rows || f.cols() != cols)
      throw InputError(name_of(names, k), "is " + std::to_string(f.rows()) + " x " +
                                              std::to_string(f.cols()) + " but the allocation is " +
                                              std::to_string(rows) + " x " + std::to_string(cols));
    Matrix m = restrict_to_kept(f, o).cwiseProduct(allowed);
    for (Eigen::Index i = 0; i < m.size(); ++i)
      if (allowed.data()[i] > 0 && !std::isfinite(m.data()[i]))
        throw InputError(name_of(names, k), "holds a value that is not a finite number");
    kept.push_back(std::move(m));
  }
  return kept;
}

// Features must keep something after removing row and column constants, and
// what they keep must not be collinear (uniform weights on the allowed cells).
void require_identified(const std::vector<Matrix>& features, const Matrix& allowed,
                        const std::vector<std::string>& names, Vector& scales) {
  const auto count = static_cast<Eigen::Index>(features.size());
  scales.resize(count);
  std::vector<Matrix> normalised;
  for (Eigen::Index k = 0; k < count; ++k) {
    scales(k) = std::max(features[k].cwiseAbs().maxCoeff(), 1e-300);
    normalised.push_back(features[k] / scales(k));
    if (additive_residual(normalised.back(), allowed).cwiseAbs().maxCoeff() <=
        kIdentificationTolerance)
      throw InputError(name_of(names, k),
                       "is additive in rows and columns on the allowed cells (F_ij = u_i + v_j), "
                       "which no coupling with fixed marginals can reveal: leave it out");
  }
  const Eigen::MatrixXd cov = conditional_covariance(normalised, allowed / allowed.sum());
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eigen(cov);
  if (eigen.eigenvalues().minCoeff() <= kIdentificationTolerance * eigen.eigenvalues().maxCoeff()) {
    const Eigen::VectorXd direction = eigen.eigenvectors().col(0);
    std::string which;
    for (Eigen::Index k = 0; k < count; ++k)
      if (std::abs(direction(k)) > 1e-6) which += (which.empty() ? "" : ", ") + name_of(names, k);
    throw InputError("features", which + " are collinear once row and column constants are "
                                         "removed, so their weights are not identified");
  }
}

struct DualPoint {
  double objective = std::numeric_limits<double>::infinity();  // J(lambda)
  Vector moments;                                               // <F_k, pi>
  MarginalFit fit;
  bool ok = false;
};

DualPoint evaluate(const ObservedAllocation& o, const std::vector<Matrix>& features,
                   const Matrix& allowed, const Vector& lambda, const Vector& a0, const Vector& b0) {
  DualPoint d;
  Matrix x = Matrix::Zero(allowed.rows(), allowed.cols());
  for (std::size_t k = 0; k < features.size(); ++k) x += lambda(k) * features[k];
  d.fit = match_marginals(x, allowed, o.problem.budgets, o.problem.capacities, a0, b0,
                          kMarginTolerance, 200);
  if (!d.fit.converged) return d;
  d.moments.resize(lambda.size());
  for (std::size_t k = 0; k < features.size(); ++k)
    d.moments(k) = features[k].cwiseProduct(d.fit.coupling).sum();
  d.objective = -(x.cwiseProduct(o.shares).sum() + d.fit.row_effect.dot(o.problem.budgets) +
                  d.fit.column_effect.dot(o.problem.capacities));
  d.ok = true;
  return d;
}

}  // namespace

void GainsFitOptions::validate() const {
  if (!(tolerance > 0 && tolerance <= 1e-3)) throw InputError("tolerance", "must be in (0, 1e-3]");
  if (max_iterations < 1) throw InputError("max_iterations", "must be at least 1");
  if (!(max_lambda > 0)) throw InputError("max_lambda", "must be positive");
}

std::string to_string(GainsFitStatus status) {
  return status == GainsFitStatus::converged ? "converged" : "not_converged";
}

GainsFitStatus gains_fit_status_from_string(const std::string& text) {
  if (text == "converged") return GainsFitStatus::converged;
  if (text == "not_converged") return GainsFitStatus::not_converged;
  throw InputError("status", "'" + text + "' is not one of converged, not_converged");
}

GainsFitResult fit_gains(const ObservedAllocation& o, const std::vector<Matrix>& features,
                         const std::vector<std::string>& names, const GainsFitOptions& options) {
  options.validate();
  const Matrix allowed = allowed_cells(o.problem);
  const std::vector<Matrix> kept = kept_features(o, features, names, allowed);
  Vector scales;
  require_identified(kept, allowed, names, scales);
  const auto count = static_cast<Eigen::Index>(kept.size());
  Vector target(count);
  for (Eigen::Index k = 0; k < count; ++k) target(k) = kept[k].cwiseProduct(o.shares).sum();

  GainsFitResult result;
  Vector lambda = Vector::Zero(count);
  DualPoint point = evaluate(o, kept, allowed, lambda, o.problem.budgets.array().log(),
                             o.problem.capacities.array().log());
  for (;;) {
    if (!point.ok) {
      result.message = "the marginals could not be matched during the fit";
      break;
    }
    const Vector gradient = point.moments - target;
    result.moment_error = gradient.cwiseQuotient(scales).cwiseAbs().maxCoeff();
    if (result.moment_error <= options.tolerance) {
      result.status = GainsFitStatus::converged;
      break;
    }
    if (result.iterations >= options.max_iterations ||
        lambda.cwiseProduct(scales).cwiseAbs().maxCoeff() > options.max_lambda) {
      result.message = "no finite theta/epsilon matches the observed moments within " +
                       std::to_string(result.iterations) +
                       " Newton steps; they may lie on the edge of what couplings with these "
                       "marginals can reach (e.g. an optimal allocation)";
      break;
    }
    ++result.iterations;
    const Eigen::MatrixXd hessian = conditional_covariance(kept, point.fit.coupling);
    const Vector step = -hessian.ldlt().solve(gradient);
    const double slope = gradient.dot(step);
    // Backtracking: a step is taken when J falls enough (Armijo) or, where
    // rounding hides changes of J near the optimum, when the moment error
    // falls by a tenth.
    double t = 1.0;
    DualPoint next;
    bool accepted = false;
    for (int halvings = 0; halvings < 40 && !accepted; ++halvings) {
      next = evaluate(o, kept, allowed, lambda + t * step, point.fit.row_effect,
                      point.fit.column_effect);
      accepted = next.ok && (next.objective <= point.objective + 1e-4 * t * slope ||
                             (next.moments - target).cwiseQuotient(scales).cwiseAbs().maxCoeff() <
                                 0.9 * result.moment_error);
      if (!accepted) t *= 0.5;
    }
    if (!accepted) {
      result.message = "the line search stalled at moment error " +
                       std::to_string(result.moment_error);
      break;
    }
    lambda += t * step;
    point = std::move(next);
  }
  result.theta_over_epsilon = lambda;
  result.coupling = point.fit.coupling;
  result.covariance = Eigen::MatrixXd::Constant(count, count, kNaN);
  result.standard_errors = Vector::Constant(count, kNaN);
  if (result.converged() && o.units > 0) {
    const Eigen::MatrixXd hessian = conditional_covariance(kept, point.fit.coupling);
    result.covariance = hessian.inverse() / o.units;
    result.standard_errors = result.covariance.diagonal().cwiseSqrt();
  }
  return result;
}

std::string GainsFitResult::brief() const {
  std::ostringstream out;
  out.precision(4);
  out << "theta/epsilon = (";
  for (Eigen::Index k = 0; k < theta_over_epsilon.size(); ++k) {
    out << (k ? ", " : "") << theta_over_epsilon(k);
    if (std::isfinite(standard_errors(k))) out << " +- " << standard_errors(k);
  }
  out << "), " << to_string(status) << " after " << iterations << " Newton steps";
  if (!message.empty()) out << ": " << message;
  return out.str();
}

}  // namespace allocsim
