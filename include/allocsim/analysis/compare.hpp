// How far an allocation P is from a coupling pi (the exact optimum, or the
// entropic coupling at some epsilon).
//
// Both matrices are first normalised to shares (P / sum P, pi / sum pi), so
// counts and couplings of any total compare directly. With p = P / sum P and
// q = pi / sum pi, cell by cell:
//
//   kl_divergence          KL(p || q) = sum_{p_ij > 0} p_ij log(p_ij / q_ij);
//                          +infinity when q_ij = 0 on a cell with p_ij > 0
//                          (always so against a sparse exact coupling when P is
//                          dense); the JSON output writes it as null.
//   total_variation        (1/2) sum |p_ij - q_ij|, in [0, 1].
//   hellinger              sqrt((1/2) sum (sqrt p_ij - sqrt q_ij)^2), in [0, 1].
//   row_marginal_error     sum_i |sum_j p_ij - sum_j q_ij|      (L1 of the row shares)
//   column_marginal_error  sum_j |sum_i p_ij - sum_i q_ij|
//   support_jaccard        |S(p) & S(q)| / |S(p) | S(q)|; S(x) = cells with x_ij > threshold
//   weight_on_coupling_support   sum of p over S(q)
//   weight_on_top_links    sum of p over its own n+m-1 largest cells (the
//                          most a basic, forest-supported coupling could
//                          hold); 1 for a forest-sized allocation
//   *_support_size, *_support_is_forest   of S(p) and S(q) as bipartite graphs
//
// threshold = support_threshold (a share of the total), so rounding dust in a
// solver's output is not counted as a link.
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct ComparisonOptions {
  double support_threshold =
      1e-12;  // a cell is in a support when its share exceeds this; in [0, 1)

  // Throws InputError naming the wrong field.
  void validate() const;
};

struct Comparison {
  double kl_divergence = 0;
  double total_variation = 0;
  double hellinger = 0;
  double row_marginal_error = 0;
  double column_marginal_error = 0;
  double support_jaccard = 0;
  double weight_on_coupling_support = 0;
  double weight_on_top_links = 0;
  long allocation_support_size = 0;
  long coupling_support_size = 0;
  bool allocation_support_is_forest = false;
  bool coupling_support_is_forest = false;

  // One line, e.g. "TV 0.12, Hellinger 0.09, KL 0.03, 91% of the weight on its support".
  std::string brief() const;
};

// P and pi must have the same shape and positive totals (asserted); entries
// are taken as non-negative.
Comparison compare_allocation(const Matrix& allocation, const Matrix& coupling,
                              const ComparisonOptions& options = {});

// Every field as (name, value), booleans as 0/1, in declaration order; the
// names are the JSON keys and the HDF5 attribute names.
std::vector<std::pair<std::string, double>> named_values(const Comparison& comparison);

// Share of the total on the k largest cells of `allocation` (non-negative).
double weight_on_largest_cells(const Matrix& allocation, long k);

}  // namespace allocsim
