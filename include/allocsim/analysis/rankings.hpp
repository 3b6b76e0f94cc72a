// Rankings of agents (rows) and partners (columns) of a binary matrix:
// Fitness-Complexity, ECI, and degree, with the orderings they induce.
//
// Fitness-Complexity (Tacchella et al. 2012, Scientific Reports 2:723). From
// F = Q = 1, each iteration computes, from the previous F and Q,
//     F~_i = sum_j M_ij Q_j,        Q~_j = 1 / sum_i (M_ij / F_i),
// and normalises both to mean 1. Rows and columns without links are left
// out and score 0. On many matrices some scores do not settle but decay
// towards zero (e.g. every row of a perfectly nested matrix but the fullest;
// Pugliese et al. 2016, Eur. Phys. J. Special Topics 225:1893, from memory):
// the decay is reported as a status, and the ordering is that of the last
// iterate. On M = [[1, 1], [1, 0]] the ratio F_2 / F_1 after t iterations is
// exactly 1 / (t + 1).
//
// ECI (Hidalgo & Hausmann 2009, PNAS 106:10570). With diversity k_i (row
// degree) and ubiquity h_j (column degree), the row-to-row matrix
//     W_ii' = sum_j M_ij M_i'j / (k_i h_j)
// is row-stochastic; ECI is its eigenvector of the second-largest
// eigenvalue, standardised to mean 0 and population standard deviation 1
// over rows with links, with the sign that makes it correlate positively
// with diversity. The partner index (PCI) is the same construction on
// columns; it is computed as the mean ECI eigenvector over each partner's
// agents (which is the eigenvector of the column-to-column matrix for the
// same eigenvalue), then standardised, so its sign agrees with ECI.
// The eigen-problem is solved in the symmetric form
// D^-1/2 M H^-1 M^T D^-1/2 on the smaller side of the matrix.
#pragma once

#include <string>
#include <vector>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

// ordering[k] = index of the row (or column) ranked k-th, highest first.
using Ordering = std::vector<Eigen::Index>;

// Decreasing score; equal scores keep increasing index order.
Ordering order_by_score(const Vector& scores);
// Decreasing degree; equal degrees keep increasing index order.
Ordering row_degree_order(const BinaryMatrix& links);
Ordering column_degree_order(const BinaryMatrix& links);

struct FitnessComplexityOptions {
  // Stop when no score above zero_threshold changes by more than this,
  // relative, in one iteration; in (0, 1).
  double tolerance = 1e-10;
  // Iterations at most; >= 1.
  long max_iterations = 2000;
  // A normalised score (mean 1) below this has decayed to zero; in (0, 1).
  double zero_threshold = 1e-12;

  // Throws InputError naming the wrong field.
  void validate() const;
};

enum class FitnessComplexityStatus {
  converged,      // every score settled to a positive value
  scores_decay,   // some scores fall towards zero (below zero_threshold, or falling
                  // monotonically over the last half of the iterations)
  not_converged,  // iteration limit reached without settling or monotone decay
  no_links        // the matrix has no link
};
// Words: "converged", "scores_decay", "not_converged", "no_links".
std::string to_string(FitnessComplexityStatus status);
FitnessComplexityStatus fitness_complexity_status_from_string(const std::string& text);

struct FitnessComplexityResult {
  FitnessComplexityStatus status = FitnessComplexityStatus::not_converged;
  std::string message;
  Vector fitness;         // n; mean 1 over rows with links, 0 for rows without
  Vector complexity;      // m; mean 1 over columns with links, 0 for columns without
  Ordering row_order;     // by decreasing fitness
  Ordering column_order;  // by decreasing complexity
  long iterations = 0;
  double last_change =
      0;  // largest relative change of a score above zero_threshold, last iteration
  std::vector<Eigen::Index> decaying_rows;     // rows whose fitness decays towards zero
  std::vector<Eigen::Index> decaying_columns;  // columns whose complexity decays towards zero

  // One line for the command line.
  std::string brief() const;
};

FitnessComplexityResult fitness_complexity(const BinaryMatrix& links,
                                           const FitnessComplexityOptions& options = {});

enum class ComplexityIndexStatus {
  computed,    // the second eigenvalue is simple and below the first
  degenerate,  // the second eigenvector is not unique (e.g. a disconnected graph,
               // or fewer than two rows or columns with links); indices are one choice
  no_links     // the matrix has no link
};
// Words: "computed", "degenerate", "no_links".
std::string to_string(ComplexityIndexStatus status);
ComplexityIndexStatus complexity_index_status_from_string(const std::string& text);

struct ComplexityIndexResult {
  ComplexityIndexStatus status = ComplexityIndexStatus::no_links;
  std::string message;
  Vector row_index;              // ECI, n; 0 for rows without links
  Vector column_index;           // PCI, m; 0 for columns without links
  Ordering row_order;            // by decreasing ECI
  Ordering column_order;         // by decreasing PCI
  double second_eigenvalue = 0;  // of W (the largest is 1)
  double eigen_gap = 0;          // min(1 - second, second - third) eigenvalue

  std::string brief() const;
};

ComplexityIndexResult economic_complexity_index(const BinaryMatrix& links);

// Correspondence-analysis order (reciprocal averaging; Hill 1974, Applied
// Statistics): rows and columns sorted by their scores on the first
// non-trivial singular vectors of D_r^{-1/2} W D_c^{-1/2}, where W holds
// non-negative weights with row sums r and column sums c. It lays a matrix
// out along its main gradient, so a band (matched traits) or a nested
// pattern shows along the diagonal; used to display allocations. Rows or
// columns without weight go last. The orientation keeps the heaviest row
// in the first half.
struct GradientOrder {
  Ordering rows, columns;
  Vector row_scores, column_scores;
};
GradientOrder correspondence_order(const Matrix& weights);

}  // namespace allocsim
