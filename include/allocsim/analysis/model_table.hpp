// Goodness of fit of log-linear models of one table, side by side.
//
// Every model of gains reconstruction (gains_fit.hpp, latent_association.hpp)
// is a Poisson log-linear model of the counts n_ij = N p_ij with row and
// column effects, mu_ij = N pi_ij. With counts (N units) each fit is
// summarised by
//   log-likelihood  l  = sum_ij (n_ij log mu_ij - mu_ij - log n_ij!)   (Poisson)
//   deviance        G2 = 2 sum_ij n_ij log(n_ij / mu_ij)   (0 log 0 = 0)
//   parameters      p  = (rows + columns - 1) + the model's own
//   degrees of freedom  df = allowed cells - p
//   AIC = -2 l + 2 p,   BIC = -2 l + p log N   (Raftery 1986: N, the units)
// The independence model (pi = the coupling of largest entropy with the
// observed marginals) and the saturated model (pi = p, df = 0) bracket every
// other. Without counts (shares, N = 0) only the parameter counts are known
// and the likelihood figures are NaN. Rows and columns are those of
// `ObservedAllocation` (all-zero ones left out); a mask that splits the table
// into disconnected blocks makes the row-and-column count an upper bound.
#pragma once

#include <iosfwd>
#include <string>
#include <vector>

#include "allocsim/analysis/observed_allocation.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct ModelFitSummary {
  std::string model;            // e.g. "independence", "features", "latent rank 2", "saturated"
  double log_likelihood = 0;    // NaN without counts
  double deviance = 0;          // NaN without counts
  long parameters = 0;          // p above
  long degrees_of_freedom = 0;  // df above
  double aic = 0, bic = 0;      // NaN without counts
};

// 1 on the allowed cells of the observed problem, 0 elsewhere.
Matrix allowed_cells_of(const ObservedAllocation& observed);

// Summary of a fitted coupling `fitted` (kept rows and columns, sums to 1)
// with `own_parameters` beyond the row and column effects.
ModelFitSummary summarize_model_fit(const std::string& model, const ObservedAllocation& observed,
                                    const Matrix& fitted, long own_parameters);

// The independence coupling (rows and columns only) and its summary.
Matrix independence_coupling(const ObservedAllocation& observed);
ModelFitSummary independence_summary(const ObservedAllocation& observed);
ModelFitSummary saturated_summary(const ObservedAllocation& observed);

// The table as text, one model a line (deviance, df, AIC, BIC, and the
// lowest BIC marked), and as a JSON list under one key per model.
void print_model_table(std::ostream& out, const std::vector<ModelFitSummary>& table);
JsonObject model_table_json(const std::vector<ModelFitSummary>& table);

}  // namespace allocsim
