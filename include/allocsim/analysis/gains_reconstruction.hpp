// Gains reconstruction for one allocation whose gains are unknown: the
// features fit (gains_fit.hpp), the latent association model RC(K)
// (latent_association.hpp), and the table that compares them with
// independence and the saturated model (model_table.hpp).
//
// What is identified: with counts n_ij from a coupling
// pi_ij ~ exp((Phi_ij - u_i - v_j) / epsilon), only Phi / epsilon is
// identified, and only up to row and column constants; the margins are
// nuisance parameters, fitted exactly (profiled out). Every model here is a
// Poisson log-linear model with row and column effects fitted by maximum
// likelihood, the same estimator as a Poisson regression with two-way fixed
// effects. The features' weights are therefore theta_k / epsilon, and the
// latent strengths sigma_k are 1 / epsilon on the scale of scores whose
// weighted spread is 1.
//
// No HDF5 here; the command line and sweeps print and store the report.
#pragma once

#include <iosfwd>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "allocsim/analysis/gains_fit.hpp"
#include "allocsim/analysis/latent_association.hpp"
#include "allocsim/analysis/model_table.hpp"
#include "allocsim/analysis/observed_allocation.hpp"
#include "allocsim/core/json.hpp"

namespace allocsim {

struct GainsReconstructionInput {
  std::vector<Matrix> features;            // input shape (before rows and columns are dropped)
  std::vector<std::string> feature_names;  // one per feature
  std::vector<std::string> row_labels;     // input rows; "row i" when empty
  std::vector<std::string> column_labels;  // input columns; "column j" when empty
};

struct GainsReconstructionOptions {
  GainsFitOptions features;
  std::optional<LatentAssociationOptions> latent;  // absent: no latent model
};

// How well a reconstruction recovers known gains (a simulation, where the
// truth is Phi / T with T the choice temperature): for the latent
// association and for the features' sum_k beta_k F_k, the Pearson
// correlation of their residuals after row and column constants with that
// of the truth over the allowed cells (1 = the shape of Phi recovered), and
// the least-squares slope of the reconstructed residual on the true one
// (1 = the scale recovered too, i.e. epsilon = T). NaN when that model was
// not fitted or a residual is zero.
struct GainsRecovery {
  double latent_correlation = std::numeric_limits<double>::quiet_NaN();
  double latent_slope = std::numeric_limits<double>::quiet_NaN();
  double features_correlation = std::numeric_limits<double>::quiet_NaN();
  double features_slope = std::numeric_limits<double>::quiet_NaN();
};

struct GainsReconstructionReport {
  std::optional<GainsFitResult> features;         // when features were given
  std::optional<LatentAssociationResult> latent;  // when a latent rank was asked for
  std::vector<ModelFitSummary> models;            // independence, features, latent ranks, saturated
  std::vector<std::string> row_labels, column_labels;  // of the kept rows and columns
  std::optional<GainsRecovery> recovery;  // set by the caller when the true gains are known
};

// Throws InputError for unusable features (gains_fit.hpp) or latent rank.
GainsReconstructionReport reconstruct_gains(const ObservedAllocation& observed,
                                            const GainsReconstructionInput& input,
                                            const GainsReconstructionOptions& options);

// The plain-words reading of sigma_1 printed with the latent scores.
std::string strength_sentence(const LatentAssociationResult& latent);

JsonObject gains_reconstruction_json(const GainsReconstructionReport& report);
void print_gains_reconstruction(std::ostream& out, const GainsReconstructionReport& report);

// The residual of a gains-like matrix after removing row and column
// constants (uniform weights on the allowed cells), for comparing a
// reconstruction with the true Phi / epsilon: Pearson correlation of the two
// residuals over the allowed cells of `observed`. NaN when either is additive.
double correlation_after_row_column_effects(const ObservedAllocation& observed, const Matrix& a,
                                            const Matrix& b);

// The reconstructed gains / epsilon of the features fit, sum_k beta_k F_k,
// on the kept rows and columns (`input` as given to reconstruct_gains).
Matrix fitted_feature_gains(const ObservedAllocation& observed,
                            const GainsReconstructionInput& input, const GainsFitResult& fit);

// `truth` = Phi / T in the shape of the kept rows and columns of `observed`.
GainsRecovery gains_recovery(const ObservedAllocation& observed,
                             const GainsReconstructionInput& input,
                             const GainsReconstructionReport& report, const Matrix& truth);

}  // namespace allocsim
