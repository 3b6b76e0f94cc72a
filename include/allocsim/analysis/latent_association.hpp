// Latent gains from the matrix alone: the row-column association model
// RC(K) of Goodman (1979, "Simple models for the analysis of association in
// cross-classifications having ordered categories", JASA 74; 1985, "The
// analysis of cross-classified data having ordered and/or unordered
// categories", Annals of Statistics 13).
//
// Model: with counts n_ij = N p_ij (or shares p_ij) on the allowed cells,
//   log pi_ij = alpha_i + beta_j + sum_{k<=K} sigma_k a_ik b_jk,
// i.e. gains / epsilon = sum_k sigma_k a_k b_k^T, identified only up to row
// and column constants (which alpha, beta absorb). The scores are
// normalised with the observed margins r (rows) and c (columns) as weights:
//   sum_i r_i a_ik = 0,  sum_i r_i a_ik^2 = 1,  sum_i r_i a_ik a_il = 0 (k != l),
// and likewise for b with c; sigma_1 >= sigma_2 >= ... >= 0 (the weighted
// singular value decomposition of the fitted interaction). sigma_k is the
// association strength in units of the score scale: two rows one score unit
// apart (on dimension k) differ in their log-odds of choosing two columns
// one score unit apart by sigma_k. Equivalently, if the gains are a_k b_k^T
// (traits whose weighted spread is 1), sigma_k is 1/epsilon on that scale.
// Scores are the reconstructed traits; their signs are conventional (the
// largest |a_ik| is positive).
//
// Estimation: maximum likelihood of the Poisson log-linear model (the
// margins are fitted exactly, so they are profiled out, as in a Poisson GLM
// with row and column fixed effects plus the multiplicative term). The
// likelihood is not concave in the scores: it is maximised by block
// coordinate ascent (for each row, one Newton step in (alpha_i, a_i. sigma);
// then for each column, in (beta_j, b_j. sigma); each block's problem is a
// small concave Poisson regression) from several starts (the singular value
// decomposition of the double-centred log table, that of the standardised
// residuals, and seeded random ones), keeping the highest likelihood.
//
// Uncertainty (counts only): standard errors of sigma_k from the Fisher
// information of the Poisson model by the delta method, through the
// generalised inverse over the directions that change the fit (the margins
// r, c of the normalisation are held fixed). Model choice: deviance, df =
// allowed cells - (rows + columns - 1) - K (rows + columns - K - 2) (for a
// full table (rows-K-1)(columns-K-1), Goodman 1985), AIC and BIC for each K
// (model_table.hpp); `auto` takes the K of lowest BIC.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "allocsim/analysis/model_table.hpp"
#include "allocsim/analysis/observed_allocation.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct LatentAssociationOptions {
  long rank = -1;            // K >= 0; -1 = choose by BIC from 0 to max_rank
  long max_rank = 5;         // largest K tried by the choice; >= 1 (and below the
                             // saturated rank min(rows, columns) - 1)
  double tolerance = 1e-10;  // stop when every score equation holds to this, per unit; in (0, 1e-4]
  long max_sweeps = 20000;   // block coordinate sweeps per start; >= 1
  int random_starts = 2;     // seeded random starts besides the two deterministic ones; >= 0
  std::uint64_t seed = 1;    // of the random starts
  bool standard_errors = true;  // compute the standard errors of sigma (counts only)

  // Throws InputError naming the wrong field.
  void validate() const;
};

enum class LatentFitStatus { converged, not_converged };
// Words: "converged", "not_converged".
std::string to_string(LatentFitStatus status);
LatentFitStatus latent_fit_status_from_string(const std::string& text);

struct LatentAssociationResult {
  LatentFitStatus status = LatentFitStatus::not_converged;
  std::string message;
  long rank = 0;             // K fitted (chosen when options.rank = -1)
  bool rank_chosen = false;  // K chosen by BIC
  Vector strengths;          // sigma_k, decreasing (K)
  Vector strength_errors;    // their standard errors; NaN without counts
  Matrix row_scores;         // a: kept rows x K
  Matrix column_scores;      // b: kept columns x K
  Matrix coupling;           // fitted pi (kept rows and columns), sums to 1
  Matrix association;      // sum_k sigma_k a_k b_k^T: gains/epsilon up to row and column constants
  double score_error = 0;  // largest violation of a score equation reached, per unit
  long sweeps = 0;         // block coordinate sweeps of the kept start
  std::vector<ModelFitSummary> table;  // "independence", "latent rank 1", ... for each K tried

  bool converged() const { return status == LatentFitStatus::converged; }
  // One line, e.g. "latent rank 2 (chosen by BIC): sigma = (1.92 +- 0.05, 0.61 +- 0.04)".
  std::string brief() const;
};

// Throws InputError when the requested rank is not below min(rows, columns) - 1
// of the kept table (that rank is the saturated model) or negative, and for
// `auto` without counts (BIC needs N).
LatentAssociationResult fit_latent_association(const ObservedAllocation& observed,
                                               const LatentAssociationOptions& options = {});

// The name of RC(K) in model tables: "independence" for K = 0, else "latent rank K".
std::string latent_model_name(long rank);

}  // namespace allocsim
