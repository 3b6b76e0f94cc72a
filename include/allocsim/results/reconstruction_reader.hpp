// Reading back the gains reconstruction of a run (layout.hpp,
// <run>/analysis/reconstruction), written by RunWriter::write_gains_reconstruction.
#pragma once

#include <optional>
#include <string>

#include "allocsim/analysis/gains_reconstruction.hpp"
#include "allocsim/results/results_reader.hpp"

namespace allocsim {

// Nothing when the run holds no reconstruction. Filled: row_labels,
// column_labels, models; latent (status, rank, rank_chosen, strengths,
// strength_errors, row_scores, column_scores); features (status, names,
// theta_over_epsilon, standard_errors, ci_low, ci_high, confidence). The
// couplings stay in the file (input shape). Throws InputError naming the
// file when the parts disagree in size (a damaged file).
std::optional<GainsReconstructionReport> read_gains_reconstruction(const ResultsReader& reader,
                                                                   const std::string& run);

}  // namespace allocsim
