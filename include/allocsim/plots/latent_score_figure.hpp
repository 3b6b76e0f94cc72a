// The reconstructed traits of a latent association fit (RC(K),
// analysis/latent_association.hpp) as a figure: where each row and each
// column sits on the first latent dimensions. Drawn by `allocsim plot` for a
// run that holds a reconstruction (`analyze --latent-rank K --save obs.h5`).
//
// Reading: the fitted gains / epsilon are sum_k sigma_k a_ik b_jk (up to row
// and column constants), so a row and a column attract when their scores
// share a sign on a dimension, the more the farther both are from 0.
//
// Same guarantees as figures.hpp (text escaped and drawn literally, complete
// file or none, deterministic script).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "allocsim/analysis/gains_reconstruction.hpp"
#include "allocsim/core/matrix.hpp"
#include "allocsim/plots/figures.hpp"

namespace allocsim::plots {

struct LatentScoreMap {
  std::string title;
  std::string row_name = "rows (agents)";  // plain text, in the key and panel titles
  std::string column_name = "columns (partners)";
  std::vector<std::string> row_labels, column_labels;  // one per row of the scores
  Matrix row_scores, column_scores;                    // rows x K, columns x K; K >= 1
  Vector strengths;                                    // sigma_k, K values
  std::string note;      // plain text under the plot (e.g. how K was chosen); may be empty
  long max_labels = 60;  // K >= 2: at most this many labels (the points farthest from 0)
};

// K >= 2: one scatter of dimension 1 against dimension 2, rows and columns
// in two styles, each point labelled beside it; labels are placed so they
// overlap neither each other nor the points where the room allows (a thin
// line joins a label set further out to its point). With more points than
// max_labels, the farthest from the origin are labelled and a note says so.
// K = 1: two panels, rows and columns, each sorted by score, the score on x
// and the label on y. InputError when the scores and labels disagree in
// size or K = 0.
std::string draw_latent_scores(const LatentScoreMap& figure, const std::string& stem,
                               const FigureOptions& options = {});

// The figure data of a reconstruction with a latent fit of rank >= 1, or
// nothing. `source` names the data in the title (e.g. the CSV file name).
std::optional<LatentScoreMap> latent_score_map(const GainsReconstructionReport& report,
                                               const std::string& source);

}  // namespace allocsim::plots
