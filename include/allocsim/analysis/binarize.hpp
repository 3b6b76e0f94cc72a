// Binary (0/1) matrices from an allocation, by a stated rule.
//
// Structure metrics (NODF, connectance, spectral radius, Fitness-Complexity,
// ECI) and the binary null models work on which links exist, not on their
// weights, so every report says which rule turned the allocation P (n x m,
// non-negative) into links:
//
//   positive            link when P_ij > t                      (default t = 0)
//   row-share           link when P_ij / sum_k P_ik >= t        (t in (0, 1]; default 0.05)
//   min-count           link when P_ij >= t                     (t > 0; default 1)
//   revealed-advantage  link when P_ij * sum(P) / (row_i * col_j) >= t   (t > 0; default 1)
//
// revealed-advantage is Balassa's revealed comparative advantage (Balassa
// 1965, The Manchester School 33:99-123): the agent's share of a partner
// relative to that partner's share of everything. Rows (or columns) with a
// zero total have no links under row-share and revealed-advantage.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

// 1 = link, 0 = no link; row-major like Matrix.
using BinaryMatrix = Eigen::Matrix<std::uint8_t, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;

enum class BinarizeRule { positive, row_share, min_count, revealed_advantage };

// Words: "positive", "row-share", "min-count", "revealed-advantage".
std::string to_string(BinarizeRule rule);
// Throws InputError("binarize", ...) listing the valid words.
BinarizeRule binarize_rule_from_string(const std::string& text);
std::vector<std::string> binarize_rule_words();

// The threshold a rule uses when none is given (see the table above).
double default_threshold(BinarizeRule rule);

struct BinarizeOptions {
  BinarizeRule rule = BinarizeRule::positive;  // how a cell becomes a link
  std::optional<double> threshold;             // t of the rule; empty = default_threshold(rule)

  double threshold_value() const { return threshold ? *threshold : default_threshold(rule); }
  // Throws InputError("threshold", ...) when t is outside the rule's range.
  void validate() const;
};

// Applies the rule. Throws InputError("allocation", ...) on a negative or
// non-finite entry, naming its row and column (counted from 1).
BinaryMatrix binarize(const Matrix& allocation, const BinarizeOptions& options = {});

// One line for reports, e.g. "link when cell > 0" or
// "link when P_ij*sum(P)/(row_i*col_j) >= 1 (revealed-advantage)".
std::string describe(const BinarizeOptions& options);

// 0/1 as doubles, for metric functions that take a Matrix.
Matrix to_matrix(const BinaryMatrix& links);

// Number of links in each row (n) and column (m).
Eigen::VectorXi row_degrees(const BinaryMatrix& links);
Eigen::VectorXi column_degrees(const BinaryMatrix& links);

}  // namespace allocsim
