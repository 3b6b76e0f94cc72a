#include "allocsim/analysis/nestedness.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <numeric>
#include <vector>

#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

using Index = Eigen::Index;

// The rows of a 0/1 matrix as bit sets, 64 columns per word.
struct PackedRows {
  Index count = 0;
  Index words = 0;
  std::vector<std::uint64_t> bits;  // count x words
  std::vector<int> degree;

  const std::uint64_t* row(Index i) const { return bits.data() + i * words; }
};

PackedRows pack_rows(const BinaryMatrix& links) {
  PackedRows packed;
  packed.count = links.rows();
  packed.words = (links.cols() + 63) / 64;
  packed.bits.assign(static_cast<std::size_t>(packed.count * packed.words), 0);
  packed.degree.assign(static_cast<std::size_t>(packed.count), 0);
  for (Index i = 0; i < links.rows(); ++i) {
    std::uint64_t* row = packed.bits.data() + i * packed.words;
    for (Index j = 0; j < links.cols(); ++j) {
      if (links(i, j) == 0) continue;
      row[j / 64] |= std::uint64_t{1} << (j % 64);
      ++packed.degree[static_cast<std::size_t>(i)];
    }
  }
  return packed;
}

int common_links(const std::uint64_t* a, const std::uint64_t* b, Index words) {
  int count = 0;
  for (Index w = 0; w < words; ++w) count += __builtin_popcountll(a[w] & b[w]);
  return count;
}

// Indices in decreasing order of `degree` (ties by index).
std::vector<Index> decreasing_order(const std::vector<int>& degree) {
  std::vector<Index> order(degree.size());
  std::iota(order.begin(), order.end(), Index{0});
  std::stable_sort(order.begin(), order.end(),
                   [&](Index a, Index b) { return degree[a] > degree[b]; });
  return order;
}

// The order in which pairs are scored: upper member first.
std::vector<Index> scoring_order(const std::vector<int>& degree, PairOrder order) {
  if (order == PairOrder::by_degree) return decreasing_order(degree);
  std::vector<Index> given(degree.size());
  std::iota(given.begin(), given.end(), Index{0});
  return given;
}

// Sum over pairs (upper a, lower b) of |a & b| / k_b where k_a > k_b > 0.
double paired_overlap_sum(const PackedRows& packed, PairOrder order) {
  const std::vector<Index> sequence = scoring_order(packed.degree, order);
  double sum = 0;
  for (std::size_t p = 0; p < sequence.size(); ++p) {
    const Index a = sequence[p];
    const int ka = packed.degree[a];
    for (std::size_t q = p + 1; q < sequence.size(); ++q) {
      const Index b = sequence[q];
      const int kb = packed.degree[b];
      if (kb >= ka || kb == 0) continue;
      sum += static_cast<double>(common_links(packed.row(a), packed.row(b), packed.words)) / kb;
    }
  }
  return sum;
}

double pair_count(Index n) { return 0.5 * static_cast<double>(n) * static_cast<double>(n - 1); }

NestednessParts combine(double row_sum, Index n, double column_sum, Index m) {
  NestednessParts parts;
  const double row_pairs = pair_count(n);
  const double column_pairs = pair_count(m);
  if (row_pairs > 0) parts.rows = 100.0 * row_sum / row_pairs;
  if (column_pairs > 0) parts.columns = 100.0 * column_sum / column_pairs;
  if (row_pairs + column_pairs > 0)
    parts.total = 100.0 * (row_sum + column_sum) / (row_pairs + column_pairs);
  return parts;
}

// WNODF pair sum over the rows of `w`: for upper a and lower b with
// F_a > F_b > 0, the share of b's non-zero cells that are strictly below a's.
double weighted_overlap_sum(const Matrix& w, PairOrder order) {
  const Index n = w.rows();
  std::vector<std::vector<Index>> nonzero(static_cast<std::size_t>(n));
  std::vector<int> fill(static_cast<std::size_t>(n), 0);
  for (Index i = 0; i < n; ++i) {
    for (Index j = 0; j < w.cols(); ++j)
      if (w(i, j) > 0) nonzero[i].push_back(j);
    fill[i] = static_cast<int>(nonzero[i].size());
  }
  const std::vector<Index> sequence = scoring_order(fill, order);
  double sum = 0;
  for (std::size_t p = 0; p < sequence.size(); ++p) {
    const Index a = sequence[p];
    for (std::size_t q = p + 1; q < sequence.size(); ++q) {
      const Index b = sequence[q];
      if (fill[b] >= fill[a] || fill[b] == 0) continue;
      int lower = 0;
      for (Index l : nonzero[b]) lower += w(b, l) < w(a, l) ? 1 : 0;
      sum += static_cast<double>(lower) / fill[b];
    }
  }
  return sum;
}

double dense_largest_eigenvalue(const Eigen::MatrixXd& symmetric) {
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> solver(symmetric, Eigen::EigenvaluesOnly);
  return std::max(0.0, solver.eigenvalues().maxCoeff());
}

// Largest eigenvalue of a non-negative symmetric positive semi-definite
// matrix. The power iteration starts from a positive vector, which cannot be
// orthogonal to the (non-negative) Perron vector; when it is slow (a small
// eigen-gap) the dense solver takes over.
double largest_eigenvalue_nonnegative_psd(const Eigen::MatrixXd& gram) {
  constexpr double kResidualTolerance = 1e-12;
  constexpr int kMaxPowerSteps = 2000;
  const Index k = gram.rows();
  if (k == 0) return 0.0;
  Vector v = Vector::Constant(k, 1.0 / std::sqrt(static_cast<double>(k)));
  Vector gv(k);
  for (int step = 0; step < kMaxPowerSteps; ++step) {
    gv.noalias() = gram * v;
    const double lambda = v.dot(gv);
    if (!(lambda > 0)) break;
    const double residual = (gv - lambda * v).norm();
    if (residual <= kResidualTolerance * lambda) return lambda;
    v = gv / gv.norm();
  }
  return dense_largest_eigenvalue(gram);
}

void check_weights(const Matrix& weights) {
  for (Index i = 0; i < weights.rows(); ++i)
    for (Index j = 0; j < weights.cols(); ++j)
      if (!std::isfinite(weights(i, j)) || weights(i, j) < 0)
        throw InputError("weights", "entry at row " + std::to_string(i + 1) + ", column " +
                                        std::to_string(j + 1) + " must be finite and non-negative");
}

}  // namespace

double connectance(const BinaryMatrix& links) {
  if (links.size() == 0) return 0.0;
  return links.cast<double>().sum() / static_cast<double>(links.size());
}

std::string to_string(PairOrder order) {
  switch (order) {
    case PairOrder::by_degree:
      return "by-degree";
    case PairOrder::as_given:
      return "as-given";
  }
  return "unknown";
}

PairOrder pair_order_from_string(const std::string& text) {
  for (PairOrder order : {PairOrder::by_degree, PairOrder::as_given})
    if (to_string(order) == text) return order;
  throw InputError("order", "'" + text + "' is not one of by-degree, as-given");
}

NestednessParts nodf(const BinaryMatrix& links, PairOrder order) {
  const BinaryMatrix transposed = links.transpose();
  const double row_sum = paired_overlap_sum(pack_rows(links), order);
  const double column_sum = paired_overlap_sum(pack_rows(transposed), order);
  return combine(row_sum, links.rows(), column_sum, links.cols());
}

NestednessParts wnodf(const Matrix& weights, PairOrder order) {
  check_weights(weights);
  const Matrix transposed = weights.transpose();
  const double row_sum = weighted_overlap_sum(weights, order);
  const double column_sum = weighted_overlap_sum(transposed, order);
  return combine(row_sum, weights.rows(), column_sum, weights.cols());
}

double spectral_radius(const Matrix& biadjacency) {
  if (biadjacency.size() == 0) return 0.0;
  const Eigen::MatrixXd a = biadjacency;
  const Eigen::MatrixXd gram = a.rows() >= a.cols() ? Eigen::MatrixXd(a.transpose() * a)
                                                    : Eigen::MatrixXd(a * a.transpose());
  const bool nonnegative = (a.array() >= 0).all();
  return std::sqrt(nonnegative ? largest_eigenvalue_nonnegative_psd(gram)
                               : dense_largest_eigenvalue(gram));
}

double spectral_radius(const BinaryMatrix& links) { return spectral_radius(to_matrix(links)); }

}  // namespace allocsim
