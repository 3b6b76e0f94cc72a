#include "allocsim/analysis/latent_association.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <random>
#include <sstream>

#include "allocsim/analysis/additive_residual.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

std::string short_number(double value) {
  std::ostringstream out;
  out.precision(3);
  out << value;
  return out.str();
}

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// log pi_ij = alpha_i + beta_j + (U V^T)_ij on the allowed cells.
struct LatentParameters {
  Vector alpha, beta;
  Matrix u, v;  // rows x K, columns x K
};

struct Table {
  Matrix p;        // shares (sum 1) on the kept cells
  Matrix allowed;  // 1 / 0
  Vector r, c;     // margins of p
};

Matrix fitted_means(const Table& t, const LatentParameters& q) {
  Matrix eta = q.u * q.v.transpose();
  eta.colwise() += q.alpha;
  eta.rowwise() += q.beta.transpose();
  return eta.array().exp().matrix().cwiseProduct(t.allowed);
}

// Per-unit Poisson log-likelihood up to constants: sum p log mu - sum mu.
double log_likelihood(const Table& t, const Matrix& mu) {
  double l = -mu.sum();
  for (Eigen::Index k = 0; k < mu.size(); ++k)
    if (t.p.data()[k] > 0) l += t.p.data()[k] * std::log(mu.data()[k]);
  return l;
}

// One damped Newton step for the Poisson regression of one row (or column)
// on the design [1, V] with mean exp(intercept + V s) * weight: parameters
// (intercept, s). `y` holds that row's shares; returns the largest score-equation violation before
// the step.
double newton_block(const Vector& y, const Vector& weight, const Matrix& design_scores,
                    double& intercept, RowVector& scores) {
  const Eigen::Index K = design_scores.cols();
  const Eigen::Index n = y.size();
  auto mean = [&](double a, const RowVector& s, Vector& mu) {
    mu = ((design_scores * s.transpose()).array() + a).exp().matrix().cwiseProduct(weight);
  };
  auto objective = [&](const Vector& mu) {
    double l = -mu.sum();
    for (Eigen::Index j = 0; j < n; ++j)
      if (y(j) > 0) l += y(j) * std::log(mu(j));
    return l;
  };
  Vector mu;
  RowVector s = scores;
  mean(intercept, s, mu);
  Vector gradient(K + 1);
  Eigen::MatrixXd hessian(K + 1, K + 1);
  const Vector residual = y - mu;
  gradient(0) = residual.sum();
  gradient.tail(K) = design_scores.transpose() * residual;
  hessian(0, 0) = mu.sum();
  hessian.block(1, 0, K, 1) = design_scores.transpose() * mu;
  hessian.block(0, 1, 1, K) = hessian.block(1, 0, K, 1).transpose();
  hessian.block(1, 1, K, K) = design_scores.transpose() * mu.asDiagonal() * design_scores;
  const double violation = gradient.cwiseAbs().maxCoeff();
  const Vector step = hessian.completeOrthogonalDecomposition().solve(gradient);
  if (!step.allFinite()) return violation;
  const double before = objective(mu);
  for (double t = 1.0; t > 1e-6; t *= 0.5) {
    const double a = intercept + t * step(0);
    const RowVector s_new = s + t * step.tail(K).transpose();
    Vector mu_new;
    mean(a, s_new, mu_new);
    if (mu_new.allFinite() && objective(mu_new) >= before - 1e-15 * std::abs(before)) {
      intercept = a;
      scores = s_new;
      return violation;
    }
  }
  return violation;
}

struct Ascent {
  LatentParameters q;
  double loglik = -std::numeric_limits<double>::infinity();
  double score_error = kNaN;
  long sweeps = 0;
  bool converged = false;
};

Ascent ascend(const Table& t, LatentParameters q, const LatentAssociationOptions& options) {
  Ascent out;
  const Eigen::Index n = t.p.rows(), m = t.p.cols();
  for (out.sweeps = 0; out.sweeps < options.max_sweeps; ++out.sweeps) {
    double violation = 0;
    // Rows: offset beta_j, design V.
    for (Eigen::Index i = 0; i < n; ++i) {
      const Vector y = t.p.row(i).transpose();
      // mean = exp(alpha_i + V_j u_i) * exp(beta_j): beta enters as a multiplicative weight.
      const Vector weight =
          q.beta.array().exp().matrix().cwiseProduct(t.allowed.row(i).transpose());
      double intercept = q.alpha(i);
      RowVector scores = q.u.row(i);
      violation = std::max(violation, newton_block(y, weight, q.v, intercept, scores));
      q.alpha(i) = intercept;
      q.u.row(i) = scores;
    }
    for (Eigen::Index j = 0; j < m; ++j) {
      const Vector y = t.p.col(j);
      const Vector weight = q.alpha.array().exp().matrix().cwiseProduct(t.allowed.col(j));
      double intercept = q.beta(j);
      RowVector scores = q.v.row(j);
      violation = std::max(violation, newton_block(y, weight, q.u, intercept, scores));
      q.beta(j) = intercept;
      q.v.row(j) = scores;
    }
    out.score_error = violation;
    if (!q.u.allFinite() || !q.v.allFinite()) break;
    if (violation <= options.tolerance) {
      out.converged = true;
      break;
    }
  }
  out.loglik = log_likelihood(t, fitted_means(t, q));
  out.q = std::move(q);
  return out;
}

// Start: alpha, beta from the margins, U V^T from a rank-K decomposition of `interaction`.
LatentParameters start_from(const Table& t, const Matrix& interaction, long rank) {
  LatentParameters q;
  q.alpha = t.r.array().log();
  q.beta = t.c.array().log();
  const Eigen::BDCSVD<Eigen::MatrixXd> svd(interaction, Eigen::ComputeThinU | Eigen::ComputeThinV);
  const Vector root = svd.singularValues().head(rank).cwiseSqrt();
  q.u = svd.matrixU().leftCols(rank) * root.asDiagonal();
  q.v = svd.matrixV().leftCols(rank) * root.asDiagonal();
  return q;
}

std::vector<LatentParameters> starts(const Table& t, long rank,
                                     const LatentAssociationOptions& options) {
  std::vector<LatentParameters> out;
  // Double-centred log of the table (half a unit added to empty cells' shares).
  double half = 1.0;
  for (Eigen::Index k = 0; k < t.p.size(); ++k)
    if (t.p.data()[k] > 0) half = std::min(half, 0.5 * t.p.data()[k]);
  Matrix log_table = (t.p.array() + half).log().matrix().cwiseProduct(t.allowed);
  out.push_back(start_from(t, additive_residual(log_table, t.allowed), rank));
  // Standardised residuals of independence (correspondence analysis).
  Matrix standardised(t.p.rows(), t.p.cols());
  for (Eigen::Index i = 0; i < t.p.rows(); ++i)
    for (Eigen::Index j = 0; j < t.p.cols(); ++j) {
      const double e = t.r(i) * t.c(j);
      standardised(i, j) = t.allowed(i, j) > 0 ? (t.p(i, j) - e) / e : 0.0;
    }
  out.push_back(start_from(t, standardised, rank));
  std::mt19937_64 engine(options.seed);
  std::normal_distribution<double> normal;
  for (int s = 0; s < options.random_starts; ++s) {
    Matrix noise(t.p.rows(), t.p.cols());
    for (Eigen::Index k = 0; k < noise.size(); ++k) noise.data()[k] = normal(engine);
    out.push_back(start_from(t, noise, rank));
  }
  return out;
}

struct Normalised {
  Vector sigma;
  Matrix a, b, association;
};

// Weighted SVD of the weighted double-centred interaction.
Normalised normalise(const Table& t, const LatentParameters& q, long rank) {
  Matrix l = q.u * q.v.transpose();
  const Vector row_mean = l * t.c;
  const RowVector column_mean = t.r.transpose() * l;
  const double grand = t.r.dot(row_mean);
  l.colwise() -= row_mean;
  l.rowwise() -= column_mean;
  l.array() += grand;
  const Vector sr = t.r.cwiseSqrt(), sc = t.c.cwiseSqrt();
  const Matrix m = sr.asDiagonal() * l * sc.asDiagonal();
  const Eigen::BDCSVD<Eigen::MatrixXd> svd(m, Eigen::ComputeThinU | Eigen::ComputeThinV);
  Normalised out;
  out.sigma = svd.singularValues().head(rank);
  out.a = sr.cwiseInverse().asDiagonal() * svd.matrixU().leftCols(rank);
  out.b = sc.cwiseInverse().asDiagonal() * svd.matrixV().leftCols(rank);
  for (long k = 0; k < rank; ++k) {
    Eigen::Index at = 0;
    out.a.col(k).cwiseAbs().maxCoeff(&at);
    if (out.a(at, k) < 0) {
      out.a.col(k) *= -1;
      out.b.col(k) *= -1;
    }
  }
  out.association = out.a * out.sigma.asDiagonal() * out.b.transpose();
  return out;
}

// se(sigma_k): || P_A W^{-1/2} w ||, A = W^{1/2} J (J: d eta / d parameters
// on the allowed cells), W = diag(N pi), w_ij = r_i c_j a_ik b_jk.
Vector strength_errors(const Table& t, const LatentParameters& q, const Normalised& s,
                       const Matrix& coupling, double units) {
  const Eigen::Index n = t.p.rows(), m = t.p.cols(), K = q.u.cols();
  std::vector<std::pair<Eigen::Index, Eigen::Index>> cells;
  for (Eigen::Index i = 0; i < n; ++i)
    for (Eigen::Index j = 0; j < m; ++j)
      if (t.allowed(i, j) > 0) cells.emplace_back(i, j);
  const Eigen::Index parameters = (n + m) * (K + 1);
  Eigen::MatrixXd a = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(cells.size()), parameters);
  Vector root_weight(static_cast<Eigen::Index>(cells.size()));
  for (std::size_t c = 0; c < cells.size(); ++c) {
    const auto [i, j] = cells[c];
    const double w = std::sqrt(units * coupling(i, j));
    root_weight(c) = w;
    a(c, i) = w;
    a(c, n + j) = w;
    for (Eigen::Index k = 0; k < K; ++k) {
      a(c, n + m + i * K + k) = w * q.v(j, k);
      a(c, n + m + n * K + j * K + k) = w * q.u(i, k);
    }
  }
  const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(a);
  const Eigen::Index rank = qr.rank();
  const Eigen::MatrixXd basis = qr.householderQ() * Eigen::MatrixXd::Identity(a.rows(), rank);
  Vector errors(K);
  for (Eigen::Index k = 0; k < K; ++k) {
    Vector x(static_cast<Eigen::Index>(cells.size()));
    for (std::size_t c = 0; c < cells.size(); ++c) {
      const auto [i, j] = cells[c];
      x(c) = t.r(i) * t.c(j) * s.a(i, k) * s.b(j, k) / root_weight(c);
    }
    errors(k) = (basis.transpose() * x).norm();
  }
  return errors;
}

long saturated_rank(const Table& t) {
  return std::min<long>(static_cast<long>(t.p.rows()), static_cast<long>(t.p.cols())) - 1;
}

struct RankFit {
  Ascent best;
  bool converged = false;
};

RankFit fit_rank(const Table& t, long rank, const LatentAssociationOptions& options) {
  RankFit out;
  for (const LatentParameters& start : starts(t, rank, options)) {
    Ascent a = ascend(t, start, options);
    if (!std::isfinite(a.loglik)) continue;
    if (a.loglik > out.best.loglik) {
      out.best = std::move(a);
    }
  }
  out.converged = out.best.converged;
  return out;
}

}  // namespace

void LatentAssociationOptions::validate() const {
  if (rank < -1) throw InputError("latent rank", "must be 0 or more (or auto)");
  if (max_rank < 1) throw InputError("max_rank", "must be at least 1");
  if (!(tolerance > 0 && tolerance <= 1e-4)) throw InputError("tolerance", "must be in (0, 1e-4]");
  if (max_sweeps < 1) throw InputError("max_sweeps", "must be at least 1");
  if (random_starts < 0) throw InputError("random_starts", "must be 0 or more");
}

constexpr EnumWord<LatentFitStatus> kLatentFitStatusWords[] = {
    {LatentFitStatus::converged, "converged"}, {LatentFitStatus::not_converged, "not_converged"}};

std::string to_string(LatentFitStatus value) { return word_of(value, kLatentFitStatusWords); }

LatentFitStatus latent_fit_status_from_string(const std::string& text) {
  return value_of(text, kLatentFitStatusWords, "status");
}

std::string latent_model_name(long rank) {
  return rank == 0 ? "independence" : "latent rank " + std::to_string(rank);
}

LatentAssociationResult fit_latent_association(const ObservedAllocation& o,
                                               const LatentAssociationOptions& options) {
  options.validate();
  Table t;
  t.p = o.shares;
  t.allowed = allowed_cells_of(o);
  t.r = o.shares.rowwise().sum();
  t.c = o.shares.colwise().sum().transpose();
  const long saturated = saturated_rank(t);
  if (options.rank >= 0 && options.rank >= std::max(saturated, 1L))
    throw InputError("latent rank",
                     std::to_string(options.rank) + " is not below " + std::to_string(saturated) +
                         ", the rank that reproduces this " + std::to_string(t.p.rows()) + " x " +
                         std::to_string(t.p.cols()) + " table exactly (the saturated model)");
  if (options.rank < 0 && !(o.units > 0))
    throw InputError("latent rank",
                     "auto chooses the rank by BIC, which needs counts (the number of units N); "
                     "give a rank, or the number of units the shares were observed on");
  const long top = options.rank >= 0 ? options.rank : std::min(options.max_rank, saturated - 1);

  LatentAssociationResult result;
  result.rank_chosen = options.rank < 0;
  result.table.push_back(independence_summary(o));
  std::vector<RankFit> fits(1);
  fits[0].converged = true;
  for (long k = 1; k <= top; ++k) {
    if (options.rank >= 0 && k < options.rank) {
      fits.emplace_back();
      continue;
    }
    fits.push_back(fit_rank(t, k, options));
    const Matrix mu = fitted_means(t, fits.back().best.q);
    result.table.push_back(
        summarize_model_fit(latent_model_name(k), o, mu / mu.sum(),
                            k * static_cast<long>(t.p.rows() + t.p.cols() - k - 2)));
  }
  long chosen = std::max(options.rank, 0L);
  if (options.rank < 0) {
    for (std::size_t k = 1; k < result.table.size(); ++k)
      if (result.table[k].bic < result.table[chosen].bic) chosen = static_cast<long>(k);
  }
  result.rank = chosen;
  if (chosen == 0) {
    result.status = LatentFitStatus::converged;
    result.coupling = independence_coupling(o);
    result.strengths = result.strength_errors = Vector(0);
    result.row_scores = Matrix(t.p.rows(), 0);
    result.column_scores = Matrix(t.p.cols(), 0);
    result.association = Matrix::Zero(t.p.rows(), t.p.cols());
    return result;
  }
  const Ascent& best = fits[static_cast<std::size_t>(chosen)].best;
  result.status = best.converged ? LatentFitStatus::converged : LatentFitStatus::not_converged;
  if (!best.converged)
    result.message = "the score equations hold only to " + short_number(best.score_error) +
                     " per unit after " + std::to_string(best.sweeps) + " sweeps";
  result.sweeps = best.sweeps;
  result.score_error = best.score_error;
  const Matrix mu = fitted_means(t, best.q);
  result.coupling = mu / mu.sum();
  const Normalised s = normalise(t, best.q, chosen);
  result.strengths = s.sigma;
  result.row_scores = s.a;
  result.column_scores = s.b;
  result.association = s.association;
  result.strength_errors = Vector::Constant(chosen, kNaN);
  if (options.standard_errors && o.units > 0)
    result.strength_errors = strength_errors(t, best.q, s, result.coupling, o.units);
  return result;
}

std::string LatentAssociationResult::brief() const {
  std::ostringstream out;
  out.precision(4);
  out << latent_model_name(rank) << (rank_chosen ? " (chosen by BIC)" : "");
  if (rank > 0) {
    out << ": sigma = (";
    for (Eigen::Index k = 0; k < strengths.size(); ++k) {
      out << (k ? ", " : "") << strengths(k);
      if (std::isfinite(strength_errors(k))) out << " +- " << strength_errors(k);
    }
    out << "), " << to_string(status) << " after " << sweeps << " sweeps";
  }
  if (!message.empty()) out << ": " << message;
  return out.str();
}

}  // namespace allocsim
