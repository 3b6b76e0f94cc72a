// The transport temperature epsilon of an allocation with known gains.
//
// Model: the shares p = P / sum(P) come from the entropic coupling
//   pi_ij(beta) = exp(beta * gains_ij + a_i + b_j),   beta = 1 / epsilon,
// on the allowed cells, whose row and column effects a, b are nuisance
// parameters. For counts (N units drawn independently from pi) this is the
// log-linear model of a two-way table with row and column effects and the
// gains as one covariate (Agresti, Categorical Data Analysis, ch. 9), an
// exponential family in beta with sufficient statistic <gains, P>. Its
// likelihood equations fix the fitted marginals at the observed ones, so the
// profile of the likelihood in beta is the entropic coupling of
// DESIGN.md section 3 with the observed marginals (r_hat, c_hat) at
// epsilon = 1/beta, and the maximum-likelihood estimate solves
//   <gains, pi_eps(r_hat, c_hat)> = <gains, p>,
// a monotone 1-D root (the left side falls as epsilon grows). It is the same
// number as 1 / (the gains coefficient of a Poisson regression of the counts
// on row and column fixed effects and the gains).
//
// Search: safeguarded Newton on u = log(beta) inside a bracket that is
// widened until it holds the root, with bisection when a Newton step leaves
// the bracket; each Sinkhorn solve is warm-started from the potentials of
// the nearest beta solved so far. The derivative is exact, not a finite
// difference:
//   d<gains, pi_beta>/d beta = V(beta) = sum_ij pi_ij R_ij^2,
// R = the residual of the gains after removing row and column constants by
// least squares weighted by pi (additive_residual.hpp): the variance of the
// gains under pi conditional on the marginals.
//
// Uncertainty (counts only): Fisher information for beta with the margins
// profiled out, I = N * V(beta_hat); standard error of epsilon by the delta
// method, se(eps) = 1 / (beta_hat^2 * sqrt(I)). The likelihood-ratio
// interval holds the epsilon whose profile log-likelihood
//   l(beta) = N * sum_ij p_ij log pi_ij(beta)
// is within chi2_1(confidence) / 2 of its maximum (Wilks). Its upper end is
// +infinity when even the independent coupling (beta = 0) is within reach.
//
// Boundaries (reported as statuses, not numbers): observed gain at or above
// the exact optimum's -> epsilon = 0 (at_optimum); at or below the gain of
// the independent coupling (beta = 0: r c^T, or its access-restricted
// scaling) -> no positive temperature explains it (not_explained_by_noise).
// There the likelihood-ratio set of the same level is one-sided and is
// reported in ci_low, ci_high (counts only):
//   at_optimum:  [0, eps_up], l(beta) rising to its supremum l(infinity) (the
//     limit of the profile as beta grows, reached along a ladder of beta);
//     eps_up = 1 / the beta where l is chi2_1(confidence)/(2N) below it;
//   not_explained_by_noise: [eps_lo, infinity), l falling from l(0) (beta >= 0
//     is the parameter space); eps_lo = 1 / the beta where it has fallen by
//     chi2_1(confidence)/(2N).
// Either end is +infinity when the profile never falls that far.
// Gains that are additive on the allowed cells (gains_ij = a_i + b_j) give
// every coupling the same gain and carry no information: an InputError.
//
// Scale: epsilon is in gain units. Multiplying the gains by s > 0 multiplies
// epsilon, its standard error and its interval by s exactly up to rounding:
// the gains are divided by a power of two near their largest magnitude
// before any solve. Gains below 2.2e-308 (subnormal doubles), or a result
// that leaves the range of normal doubles, are an InputError.
#pragma once

#include <string>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/analysis/observed_allocation.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct TemperatureOptions {
  double confidence = 0.95;           // level of the likelihood-ratio interval; in (0, 1)
  double beta_tolerance = 1e-11;      // stop when a step changes log(beta) by less; in (0, 1e-3]
  double sinkhorn_tolerance = 1e-12;  // relative L1 marginal violation of each solve; in (0, 1e-6]
  long max_sinkhorn_iterations = 500000;  // per solve; >= 1
  long max_solves = 300;                  // entropic solves in all (estimate and interval); >= 10
  double boundary_tolerance = 1e-9;       // share of (optimum gain - independent gain) within which
                                          // the observed gain counts as at a boundary; in [0, 0.01]
  bool interval = true;                   // compute the likelihood-ratio interval (counts only)

  // Throws InputError naming the wrong field.
  void validate() const;
};

enum class TemperatureStatus {
  estimated,               // a finite epsilon > 0
  at_optimum,              // observed gain >= the exact optimum's: epsilon = 0
  not_explained_by_noise,  // observed gain <= the independent coupling's: epsilon = infinity
  not_converged            // a solve or the search failed; see message
};
// Words: "estimated", "at_optimum", "not_explained_by_noise", "not_converged".
std::string to_string(TemperatureStatus status);
TemperatureStatus temperature_status_from_string(const std::string& text);

struct TemperatureResult {
  TemperatureStatus status = TemperatureStatus::not_converged;
  std::string message;
  double epsilon = 0;         // estimate (gain units); 0 at_optimum, +inf not_explained_by_noise
  double beta = 0;            // 1 / epsilon
  double standard_error = 0;  // of epsilon; NaN without counts or at a boundary
  double ci_low = 0;          // likelihood-ratio interval for epsilon; NaN when not computed
  double ci_high = 0;         // may be +inf
  double confidence = 0.95;
  double units = 0;                 // N; 0 for shares
  double observed_gain = 0;         // <gains, p>
  double fitted_gain = 0;           // <gains, pi_eps_hat>; equals observed_gain at the estimate
  double optimum_gain = 0;          // exact optimum with the observed marginals
  double independent_gain = 0;      // beta = 0 coupling
  double conditional_variance = 0;  // V(beta_hat), per unit
  long solves = 0;                  // entropic solves in all
  long search_steps = 0;            // Newton or bisection steps of the estimate
  Matrix coupling;                  // pi at epsilon_hat (kept rows and columns); the exact
                                    // coupling at_optimum; empty when not_explained_by_noise

  bool estimated() const { return status == TemperatureStatus::estimated; }
  // One line, e.g. "epsilon 0.102 (se 0.004; 95% interval 0.095 to 0.110), N = 20000".
  std::string brief() const;
};

// Throws InputError("<gains source>", ...) when the gains are additive on the
// allowed cells of `observed`.
TemperatureResult estimate_temperature(const ObservedAllocation& observed,
                                       const TemperatureOptions& options = {});

// The (1 - alpha) quantile of chi-square with one degree of freedom for
// confidence = 1 - alpha, by inverting erfc (for tests and messages).
double chi_square_1_quantile(double confidence);

// Throws InputError(gains source) with the sentence above when the gains of
// `problem` are additive (to 1e-10 of their scale) on its allowed cells.
void require_informative_gains(const TransportProblem& problem, const std::string& gains_source);

}  // namespace allocsim
