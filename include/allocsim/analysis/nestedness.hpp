// Nestedness and density of a bipartite matrix: connectance, NODF, WNODF and
// the spectral radius.
//
// NODF (Almeida-Neto et al. 2008, Oikos 117:1227-1239). For a pair of rows
// (or columns) a above b with degrees k_a > k_b > 0,
//     N_ab = 100 * |links(a) & links(b)| / k_b,
// and N_ab = 0 when k_a <= k_b ("decreasing fill" fails) or k_b = 0.
//   rows part    = mean of N_ab over all n(n-1)/2 row pairs,
//   columns part = mean over all m(m-1)/2 column pairs,
//   total        = mean over all n(n-1)/2 + m(m-1)/2 pairs.
// All lie in [0, 100]; 100 means perfectly nested with strictly decreasing
// degrees. A part with no pairs (one row, or one column) is 0.
//
// WNODF (Almeida-Neto & Ulrich 2011, Environmental Modelling & Software
// 26:173-178; definition from memory, consistent with the characterisation
// of perfect WNODF by Britton, Almeida-Neto & Corso 2016, Biomath) on a
// non-negative weighted matrix W. With F_a the number of
// non-zero cells of row a, a pair a above b with F_a > F_b > 0 scores
//     N_ab = 100 * k_ab / F_b,
// k_ab = number of cells l with 0 < W_bl < W_al (the lower row's weight is
// strictly smaller); N_ab = 0 when F_a <= F_b or F_b = 0. Parts are averaged
// as for NODF.
//
// Order: `by-degree` (the default) places rows and columns in decreasing
// order of degree (fill), common practice; pairs of equal degree
// score 0 in any order, so the result does not depend on how ties are
// broken. `as-given` scores the matrix in its own order.
//
// Cost: in by-degree order both sum over members instead of pairs (each
// lower member against the running per-column counts of the members of
// larger degree): NODF O(n m), WNODF O(n m + nnz log n); the shared counts
// are integers gathered per degree, so the result does not depend on how the
// work is ordered. as-given order goes pair by pair: NODF on 64-bit words,
// O((n^2 m + m^2 n) / 64), WNODF O(n^2 m + m^2 n) at worst.
#pragma once

#include <string>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

// Links / (n * m); 0 for an empty matrix.
double connectance(const BinaryMatrix& links);

enum class PairOrder { by_degree, as_given };
// Words: "by-degree", "as-given".
std::string to_string(PairOrder order);
PairOrder pair_order_from_string(const std::string& text);

struct NestednessParts {
  double rows = 0;     // mean paired nestedness over row pairs, in [0, 100]
  double columns = 0;  // over column pairs
  double total = 0;    // over all pairs
};

NestednessParts nodf(const BinaryMatrix& links, PairOrder order = PairOrder::by_degree);

// Throws InputError("weights", ...) on a negative or non-finite entry.
NestednessParts wnodf(const Matrix& weights, PairOrder order = PairOrder::by_degree);

// Largest singular value of the biadjacency matrix A (n x m): the square root
// of the largest eigenvalue of the smaller Gram matrix (A^T A or A A^T).
// For a non-negative A it is found by power iteration to a relative residual
// of 1e-12, with a dense symmetric eigen-solver as fallback when the
// iteration is slow; a matrix with negative entries goes to the dense solver
// directly. For a
// binary A this is the spectral radius of the bipartite graph's adjacency
// matrix [[0, A], [A^T, 0]]. 0 for an empty or all-zero matrix.
double spectral_radius(const Matrix& biadjacency);
double spectral_radius(const BinaryMatrix& links);

}  // namespace allocsim
