#include "allocsim/analysis/gains_fit.hpp"

#include <cmath>
#include <limits>
#include <sstream>

#include "allocsim/analysis/additive_residual.hpp"
#include "allocsim/analysis/marginal_newton.hpp"
#include "allocsim/analysis/temperature.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kInf = std::numeric_limits<double>::infinity();
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
    throw InputError("features", which +
                                     " are collinear once row and column constants are "
                                     "removed, so their weights are not identified");
  }
}

struct DualPoint {
  double objective = std::numeric_limits<double>::infinity();  // J(lambda) = -sum p log pi
  Vector moments;                                              // <F_k, pi>
  MarginalFit fit;
  bool ok = false;
};

// Everything one fit needs: the features, an offset added to the log-kernel
// (a feature whose weight is held fixed), and the observed moments.
struct FitProblem {
  const ObservedAllocation* observed = nullptr;
  std::vector<Matrix> features;
  Matrix offset;
  Matrix allowed;
  Vector scales, target;
};

DualPoint evaluate(const FitProblem& f, const Vector& lambda, const Vector& a0, const Vector& b0) {
  const ObservedAllocation& o = *f.observed;
  DualPoint d;
  Matrix x = f.offset;
  for (std::size_t k = 0; k < f.features.size(); ++k) x += lambda(k) * f.features[k];
  d.fit = match_marginals(x, f.allowed, o.problem.budgets, o.problem.capacities, a0, b0,
                          kMarginTolerance, 200);
  if (!d.fit.converged) return d;
  d.moments.resize(lambda.size());
  for (std::size_t k = 0; k < f.features.size(); ++k)
    d.moments(k) = f.features[k].cwiseProduct(d.fit.coupling).sum();
  d.objective = -(x.cwiseProduct(o.shares).sum() + d.fit.row_effect.dot(o.problem.budgets) +
                  d.fit.column_effect.dot(o.problem.capacities));
  d.ok = true;
  return d;
}

struct NewtonOutcome {
  GainsFitStatus status = GainsFitStatus::not_converged;
  std::string message;
  Vector lambda;
  DualPoint point;
  double moment_error = 0;
  long iterations = 0;
};

NewtonOutcome newton_fit(const FitProblem& f, Vector lambda, const Vector& a0, const Vector& b0,
                         const GainsFitOptions& options) {
  NewtonOutcome out;
  out.point = evaluate(f, lambda, a0, b0);
  for (;;) {
    if (!out.point.ok) {
      out.message = "the marginals could not be matched during the fit";
      break;
    }
    if (f.features.empty()) {
      out.status = GainsFitStatus::converged;
      break;
    }
    const Vector gradient = out.point.moments - f.target;
    out.moment_error = gradient.cwiseQuotient(f.scales).cwiseAbs().maxCoeff();
    if (out.moment_error <= options.tolerance) {
      out.status = GainsFitStatus::converged;
      break;
    }
    if (out.iterations >= options.max_iterations ||
        lambda.cwiseProduct(f.scales).cwiseAbs().maxCoeff() > options.max_lambda) {
      out.message = "no finite theta/epsilon matches the observed moments within " +
                    std::to_string(out.iterations) +
                    " Newton steps; they may lie on the edge of what couplings with these "
                    "marginals can reach (e.g. an optimal allocation)";
      break;
    }
    ++out.iterations;
    const Eigen::MatrixXd hessian = conditional_covariance(f.features, out.point.fit.coupling);
    const Vector step = -hessian.ldlt().solve(gradient);
    const double slope = gradient.dot(step);
    // Backtracking: a step is taken when J falls enough (Armijo) or, where
    // rounding hides changes of J near the optimum, when the moment error
    // falls by a tenth.
    double t = 1.0;
    DualPoint next;
    bool accepted = false;
    for (int halvings = 0; halvings < 40 && !accepted; ++halvings) {
      next = evaluate(f, lambda + t * step, out.point.fit.row_effect, out.point.fit.column_effect);
      accepted =
          next.ok && (next.objective <= out.point.objective + 1e-4 * t * slope ||
                      (next.moments - f.target).cwiseQuotient(f.scales).cwiseAbs().maxCoeff() <
                          0.9 * out.moment_error);
      if (!accepted) t *= 0.5;
    }
    if (!accepted) {
      out.message = "the line search stalled at moment error " + std::to_string(out.moment_error);
      break;
    }
    lambda += t * step;
    out.point = std::move(next);
  }
  out.lambda = lambda;
  return out;
}

// The fit with feature k held at weight t (an offset) and the others refitted.
class ProfileInOne {
 public:
  ProfileInOne(const FitProblem& full, Eigen::Index k, const Vector& lambda_hat,
               const DualPoint& best, const GainsFitOptions& options)
      : full_(full), k_(k), options_(options) {
    reduced_.observed = full.observed;
    reduced_.allowed = full.allowed;
    const auto count = static_cast<Eigen::Index>(full.features.size());
    others_.resize(count - 1);
    reduced_.scales.resize(count - 1);
    reduced_.target.resize(count - 1);
    for (Eigen::Index l = 0, r = 0; l < count; ++l) {
      if (l == k) continue;
      reduced_.features.push_back(full.features[l]);
      reduced_.scales(r) = full.scales(l);
      reduced_.target(r) = full.target(l);
      others_(r++) = lambda_hat(l);
    }
    a_ = best.fit.row_effect;
    b_ = best.fit.column_effect;
  }

  // Per-unit profile log-likelihood at lambda_k = t and its slope in t.
  bool at(double t, double& loglik, double& slope) {
    reduced_.offset = t * full_.features[k_];
    const NewtonOutcome fit = newton_fit(reduced_, others_, a_, b_, options_);
    if (fit.status != GainsFitStatus::converged) return false;
    others_ = fit.lambda;
    a_ = fit.point.fit.row_effect;
    b_ = fit.point.fit.column_effect;
    loglik = -fit.point.objective;
    slope = full_.target(k_) - full_.features[k_].cwiseProduct(fit.point.fit.coupling).sum();
    return true;
  }

 private:
  const FitProblem& full_;
  Eigen::Index k_;
  const GainsFitOptions& options_;
  FitProblem reduced_;
  Vector others_, a_, b_;
};

// One end of the likelihood-ratio interval of lambda_k: the t on side
// `direction` (+1 or -1) of lambda_hat where the profile has dropped by
// `drop` (per unit). +-infinity when it never drops that far before
// max_lambda; NaN when a refit fails.
double interval_end(ProfileInOne& profile, double lambda_hat, double best_loglik, double drop,
                    double first_step, double direction, double limit) {
  double inside = lambda_hat, outside = direction * kInf;
  double t = lambda_hat + direction * first_step;
  for (int step = 0; step < 200; ++step) {
    double loglik = 0, slope = 0;
    if (!profile.at(t, loglik, slope)) return kNaN;
    const double excess = best_loglik - loglik - drop;  // rises away from lambda_hat
    if (excess > 0)
      outside = t;
    else
      inside = t;
    const double tolerance = 1e-10 * (std::abs(t) + first_step);
    if (std::isfinite(outside) && std::abs(outside - inside) < tolerance) return t;
    double next = slope != 0 ? t - excess / (-slope) : kNaN;  // d excess / dt = -slope
    const bool inside_bracket =
        direction > 0 ? next > inside && next < outside : next < inside && next > outside;
    if (!std::isfinite(next) || !inside_bracket)
      next = std::isfinite(outside) ? 0.5 * (inside + outside) : lambda_hat + 2 * (t - lambda_hat);
    if (std::abs(next - t) < tolerance) return next;
    if (std::abs(next) > limit) return direction * kInf;
    t = next;
  }
  return kNaN;
}

}  // namespace

void GainsFitOptions::validate() const {
  if (!(tolerance > 0 && tolerance <= 1e-3)) throw InputError("tolerance", "must be in (0, 1e-3]");
  if (max_iterations < 1) throw InputError("max_iterations", "must be at least 1");
  if (!(max_lambda > 0)) throw InputError("max_lambda", "must be positive");
  if (!(confidence > 0 && confidence < 1)) throw InputError("confidence", "must be in (0, 1)");
}

constexpr EnumWord<GainsFitStatus> kGainsFitStatusWords[] = {
    {GainsFitStatus::converged, "converged"}, {GainsFitStatus::not_converged, "not_converged"}};

std::string to_string(GainsFitStatus value) { return word_of(value, kGainsFitStatusWords); }

GainsFitStatus gains_fit_status_from_string(const std::string& text) {
  return value_of(text, kGainsFitStatusWords, "status");
}

GainsFitResult fit_gains(const ObservedAllocation& o, const std::vector<Matrix>& features,
                         const std::vector<std::string>& names, const GainsFitOptions& options) {
  options.validate();
  FitProblem problem;
  problem.observed = &o;
  problem.allowed = allowed_cells(o.problem);
  problem.features = kept_features(o, features, names, problem.allowed);
  require_identified(problem.features, problem.allowed, names, problem.scales);
  problem.offset = Matrix::Zero(problem.allowed.rows(), problem.allowed.cols());
  const auto count = static_cast<Eigen::Index>(problem.features.size());
  problem.target.resize(count);
  for (Eigen::Index k = 0; k < count; ++k)
    problem.target(k) = problem.features[k].cwiseProduct(o.shares).sum();

  NewtonOutcome fit = newton_fit(problem, Vector::Zero(count), o.problem.budgets.array().log(),
                                 o.problem.capacities.array().log(), options);
  GainsFitResult result;
  result.status = fit.status;
  result.message = fit.message;
  result.iterations = fit.iterations;
  result.moment_error = fit.moment_error;
  result.confidence = options.confidence;
  for (Eigen::Index k = 0; k < count; ++k) result.names.push_back(name_of(names, k));
  result.theta_over_epsilon = fit.lambda;
  result.coupling = fit.point.fit.coupling;
  result.covariance = Eigen::MatrixXd::Constant(count, count, kNaN);
  result.standard_errors = result.ci_low = result.ci_high = Vector::Constant(count, kNaN);
  result.fit = summarize_model_fit("features", o, result.coupling, count);
  if (!result.converged() || !(o.units > 0)) return result;
  const Eigen::MatrixXd hessian = conditional_covariance(problem.features, result.coupling);
  result.covariance = hessian.inverse() / o.units;
  result.standard_errors = result.covariance.diagonal().cwiseSqrt();
  if (!options.intervals) return result;
  const double drop = chi_square_1_quantile(options.confidence) / (2 * o.units);
  const double z = std::sqrt(chi_square_1_quantile(options.confidence));
  for (Eigen::Index k = 0; k < count; ++k) {
    const double limit = options.max_lambda / problem.scales(k);
    const double lambda_k = fit.lambda(k), step = z * result.standard_errors(k);
    ProfileInOne up(problem, k, fit.lambda, fit.point, options);
    result.ci_high(k) = interval_end(up, lambda_k, -fit.point.objective, drop, step, +1, limit);
    ProfileInOne down(problem, k, fit.lambda, fit.point, options);
    result.ci_low(k) = interval_end(down, lambda_k, -fit.point.objective, drop, step, -1, limit);
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
