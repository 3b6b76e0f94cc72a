// Fitting the gains when they are unknown: gains = sum_k theta_k F_k for
// given feature matrices F_k, with the allocation modelled as the entropic
// coupling with its observed marginals,
//   pi_ij = exp(sum_k lambda_k F_k,ij + a_i + b_j),   lambda = theta / epsilon.
//
// What is identified, and what is not:
//   * only lambda = theta / epsilon: multiplying all gains and the
//     temperature by the same factor gives the same coupling, so the scale of
//     the gains (and with it epsilon) is not identified without fixing one;
//   * gains only up to row and column constants: adding c_i + d_j to every
//     gain changes no coupling with fixed marginals, so a feature that is
//     additive on the allowed cells (F_ij = u_i + v_j) carries no
//     information, and features are identified only through what is left
//     after removing row and column constants. Such a feature, or features
//     that are collinear after that removal, are an InputError.
//
// Estimation: maximum likelihood of the log-linear model (Agresti,
// Categorical Data Analysis, ch. 9), which is moment matching,
//   <F_k, pi_lambda> = <F_k, p>  for every k,  with pi 1 = r_hat, pi^T 1 = c_hat:
// the maximum-entropy coupling with these moments (Jaynes 1957). Solved by
// Newton's method with a backtracking line search on the convex dual
//   J(lambda) = -sum_ij p_ij log pi_ij(lambda)
// (a, b profiled out by marginal_newton.hpp), whose gradient is
// <F, pi_lambda> - <F, p> and whose Hessian is the covariance of the
// features under pi conditional on the marginals (additive_residual.hpp).
// With counts (N units), cov(lambda_hat) = Hessian^-1 / N; standard errors
// are its diagonal's square roots. This is the same estimator, with the
// same standard errors, as a Poisson regression of the counts on row and
// column fixed effects and the features (a Poisson GLM with two-way fixed
// effects): its likelihood equations fix the fitted margins at the
// observed ones, so the margins are profiled out exactly.
//
// Likelihood-ratio interval of lambda_k (counts only): the values t whose
// profile log-likelihood (the other weights refitted with lambda_k = t held
// as an offset) lies within chi2_1(confidence) / 2 of the maximum (Wilks).
// Goodness of fit: deviance, degrees of freedom, AIC and BIC of the Poisson
// model (model_table.hpp), with K parameters beyond the row and column ones.
//
// When the observed moments lie on the edge of what couplings with these
// marginals can reach (e.g. an allocation that is exactly optimal for some
// combination of the features), no finite lambda matches them: the
// status is then not_converged and the message says so.
#pragma once

#include <string>
#include <vector>

#include "allocsim/analysis/model_table.hpp"
#include "allocsim/analysis/observed_allocation.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct GainsFitOptions {
  double tolerance = 1e-10;  // stop when max_k |<F_k, pi> - <F_k, p>| / scale_k <= this; in (0,
                             // 1e-3] (scale_k = max |F_k| over allowed cells)
  long max_iterations = 100;  // Newton steps; >= 1
  double max_lambda =
      1e8;  // |lambda_k| above this (in units of 1/scale_k) counts as diverging; > 0
  double confidence = 0.95;  // level of the likelihood-ratio intervals; in (0, 1)
  bool intervals = true;     // compute the likelihood-ratio intervals (counts only)

  // Throws InputError naming the wrong field.
  void validate() const;
};

enum class GainsFitStatus { converged, not_converged };
// Words: "converged", "not_converged".
std::string to_string(GainsFitStatus status);
GainsFitStatus gains_fit_status_from_string(const std::string& text);

struct GainsFitResult {
  GainsFitStatus status = GainsFitStatus::not_converged;
  std::string message;
  Vector theta_over_epsilon;  // lambda, one per feature
  Vector standard_errors;     // of lambda; NaN without counts
  Vector ci_low, ci_high;     // likelihood-ratio interval of each lambda_k; NaN without counts
                              // or when not computed; +-inf when the profile never drops enough
  double confidence = 0.95;
  std::vector<std::string> names;  // of the features, as given (or "feature k")
  Eigen::MatrixXd covariance;      // of lambda (K x K); NaN without counts
  double moment_error = 0;         // max_k |<F_k, pi> - <F_k, p>| / scale_k reached
  long iterations = 0;             // Newton steps
  Matrix coupling;                 // pi at lambda_hat (kept rows and columns of `observed`)
  ModelFitSummary fit;             // deviance, df, AIC, BIC (model "features")

  bool converged() const { return status == GainsFitStatus::converged; }
  // One line, e.g. "theta/epsilon = (8.02 +- 0.11, -2.95 +- 0.09), 6 Newton steps".
  std::string brief() const;
};

// `features` are in the shape of the allocation given to observe_allocation
// (all rows and columns, before dropping); `names` label them in messages
// (e.g. their file names; "feature 1", ... when empty). Throws InputError
// naming the feature for a wrong shape, a non-finite value on an allowed
// cell, an additive feature, or collinear features.
GainsFitResult fit_gains(const ObservedAllocation& observed, const std::vector<Matrix>& features,
                         const std::vector<std::string>& names = {},
                         const GainsFitOptions& options = {});

}  // namespace allocsim
