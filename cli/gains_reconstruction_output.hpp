// The gains-reconstruction part of `allocsim analyze`: its options, the fit
// from the files they name, and its text, JSON and CSV outputs.
//
//   --features F1.csv [F2.csv ...]     gains/epsilon = sum_k beta_k F_k
//   --row-traits R.csv --column-traits C.csv [--trait-form distance|product]
//                                      features of trait matching
//   --latent-rank K|auto [--max-latent-rank K]   the association model RC(K)
//
// Feature and trait files are matched to the allocation's rows and columns
// (by label when both carry labels, else by position).
#pragma once

#include <optional>
#include <ostream>
#include <string>
#include <vector>

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/analysis/gains_reconstruction.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/json.hpp"
#include "options.hpp"

namespace allocsim::cli {

void add_gains_reconstruction_options(po::options_description& options);
bool gains_reconstruction_requested(const po::variables_map& vm);

// Reads the files, fits; InputError naming the file or option for bad input.
GainsReconstructionReport reconstruct_from_options(const po::variables_map& vm,
                                                   const ObservedAllocation& observed,
                                                   const LabeledMatrix& allocation,
                                                   const std::string& allocation_source);

// The reconstruction asked for by the options of `allocsim analyze` on a CSV
// allocation (the labels are read back from --allocation), or nothing.
std::optional<GainsReconstructionReport> reconstruct_if_asked(const po::variables_map& vm,
                                                              const AllocationReport& report);

// Writes into `folder` (labelled CSV, analysed rows and columns in input order):
//   feature_weights.csv      with features: weight, standard_error, interval_low/high
//   coupling_features.csv    with features: the fitted coupling
//   model_table.csv          deviance, degrees_of_freedom, parameters, aic, bic per model
//   latent_row_scores.csv,   with a latent rank K > 0: the scores, one column
//   latent_column_scores.csv per dimension ("dimension_1", ...)
//   coupling_latent.csv      with a latent model: the fitted coupling
// Couplings are in the allocation's units (scaled to `allocation_total`).
// Returns the paths written.
std::vector<std::string> export_gains_reconstruction(const GainsReconstructionReport& report,
                                                     double allocation_total,
                                                     const std::string& folder);

}  // namespace allocsim::cli
