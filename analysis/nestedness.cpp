#include "allocsim/analysis/nestedness.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <numeric>
#include <vector>

#include "allocsim/core/enum_words.hpp"
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

// ---- by-degree order: sums over members instead of over pairs ----
//
// With members scored in decreasing degree, a pair (a above b) counts only
// when k_a > k_b, and then it adds |a & b| / k_b. Summed over the lower
// members b: sum_b (links of b shared with members of strictly larger
// degree) / k_b. Members are visited in decreasing degree, a group of equal
// degree at a time, with a running count per column of the links of the
// members visited so far: O(n m) in all, and the shared counts are integers
// gathered per degree, so the sum sum_k C_k / k is exact up to its last
// rounding and the same for any order of the pairs.

// The groups of equal degree in decreasing order: members order[begin..end).
template <typename Visit>
void for_each_degree_group(const std::vector<int>& degree, Visit visit) {
  const std::vector<Index> order = decreasing_order(degree);
  for (std::size_t begin = 0; begin < order.size();) {
    const int k = degree[order[begin]];
    std::size_t end = begin;
    while (end < order.size() && degree[order[end]] == k) ++end;
    if (k == 0) break;  // the rest have no links
    visit(order, begin, end, k);
    begin = end;
  }
}

// sum_k shared[k] / k over k >= 1, in increasing k.
double per_degree_sum(const std::vector<std::int64_t>& shared) {
  double sum = 0;
  for (std::size_t k = 1; k < shared.size(); ++k)
    if (shared[k] != 0) sum += static_cast<double>(shared[k]) / static_cast<double>(k);
  return sum;
}

// sum_j links_j * above_j for one row; the products are at most `bound` in all.
std::int64_t shared_links(const std::uint8_t* links, const std::int32_t* above, Index m,
                          std::int64_t bound) {
  if (bound <= std::numeric_limits<std::int32_t>::max()) {
    std::int32_t s = 0;
    for (Index j = 0; j < m; ++j) s += above[j] & -static_cast<std::int32_t>(links[j] != 0);
    return s;
  }
  std::int64_t s = 0;
  for (Index j = 0; j < m; ++j) s += links[j] ? above[j] : 0;
  return s;
}

// The NODF pair sum over the rows of `links` in by-degree order.
double overlap_sum_by_degree(const BinaryMatrix& links) {
  const Index n = links.rows(), m = links.cols();
  std::vector<int> degree(static_cast<std::size_t>(n));
  for (Index i = 0; i < n; ++i) {
    int k = 0;
    const std::uint8_t* row = links.row(i).data();
    for (Index j = 0; j < m; ++j) k += row[j] != 0;
    degree[i] = k;
  }
  std::vector<std::int32_t> above(static_cast<std::size_t>(m),
                                  0);  // links of rows above, per column
  std::vector<std::int64_t> shared(static_cast<std::size_t>(m) + 1, 0);
  bool first = true;
  for_each_degree_group(
      degree, [&](const std::vector<Index>& order, std::size_t begin, std::size_t end, int k) {
        if (!first) {
          for (std::size_t p = begin; p < end; ++p)
            shared[k] += shared_links(links.row(order[p]).data(), above.data(), m,
                                      static_cast<std::int64_t>(k) * n);
        }
        first = false;
        for (std::size_t p = begin; p < end; ++p) {
          const std::uint8_t* row = links.row(order[p]).data();
          for (Index j = 0; j < m; ++j) above[j] += row[j] != 0;
        }
      });
  return per_degree_sum(shared);
}

// Counts of inserted ranks per column (Fenwick trees, one per column, packed
// into one array): how many cells above have a larger value.
class ColumnRankCounts {
 public:
  explicit ColumnRankCounts(const std::vector<int>& sizes) : offset_(sizes.size() + 1, 0) {
    for (std::size_t l = 0; l < sizes.size(); ++l) offset_[l + 1] = offset_[l] + sizes[l];
    tree_.assign(static_cast<std::size_t>(offset_.back()), 0);
    inserted_.assign(sizes.size(), 0);
  }
  // Ranks count from 1 within a column.
  void insert(std::size_t column, int rank) {
    std::int32_t* tree = tree_.data() + offset_[column];
    const int size = offset_[column + 1] - offset_[column];
    for (int r = rank; r <= size; r += r & -r) ++tree[r - 1];
    ++inserted_[column];
  }
  // Inserted cells of `column` with a rank above `rank`.
  int count_above(std::size_t column, int rank) const {
    const std::int32_t* tree = tree_.data() + offset_[column];
    int at_most = 0;
    for (int r = rank; r > 0; r -= r & -r) at_most += tree[r - 1];
    return inserted_[column] - at_most;
  }

 private:
  std::vector<int> offset_;
  std::vector<std::int32_t> tree_;
  std::vector<int> inserted_;
};

// Whether every entry is a whole number in [0, 2^16] (counts): then the
// values themselves serve as ranks, with no sorting.
bool small_whole_numbers(const Matrix& w) {
  constexpr double kLargest = 65536;
  const double* x = w.data();
  bool whole = true;
  for (Index k = 0; k < w.size(); ++k)
    whole &= x[k] >= 0 && x[k] <= kLargest && x[k] == std::floor(x[k]);
  return whole;
}

// Ranks of whole-number weights: the values themselves (larger value, larger
// rank; ties share); `distinct` gets the largest value of each column.
std::vector<int> whole_number_ranks(const Matrix& w, std::vector<int>& distinct) {
  const Index n = w.rows(), m = w.cols();
  std::vector<int> rank(static_cast<std::size_t>(n * m));
  distinct.assign(static_cast<std::size_t>(m), 0);
  for (Index i = 0; i < n; ++i) {
    const double* row = w.row(i).data();
    int* out = rank.data() + i * m;
    for (Index l = 0; l < m; ++l) {
      out[l] = static_cast<int>(row[l]);
      distinct[l] = std::max(distinct[l], out[l]);
    }
  }
  return rank;
}

// Rank (from 1, equal values share one) of each positive cell among the
// positive cells of its column; 0 for the other cells. Also the number of
// distinct positive values per column.
std::vector<int> column_ranks(const Matrix& w, std::vector<int>& distinct) {
  const Index n = w.rows(), m = w.cols();
  if (small_whole_numbers(w)) return whole_number_ranks(w, distinct);
  std::vector<std::vector<double>> values(static_cast<std::size_t>(m));
  for (Index i = 0; i < n; ++i)
    for (Index l = 0; l < m; ++l)
      if (w(i, l) > 0) values[l].push_back(w(i, l));
  distinct.assign(static_cast<std::size_t>(m), 0);
  for (Index l = 0; l < m; ++l) {
    auto& v = values[l];
    std::sort(v.begin(), v.end());
    v.erase(std::unique(v.begin(), v.end()), v.end());
    distinct[l] = static_cast<int>(v.size());
  }
  std::vector<int> rank(static_cast<std::size_t>(n * m), 0);
  for (Index i = 0; i < n; ++i)
    for (Index l = 0; l < m; ++l) {
      if (!(w(i, l) > 0)) continue;
      const auto& v = values[l];
      rank[i * m + l] =
          static_cast<int>(std::lower_bound(v.begin(), v.end(), w(i, l)) - v.begin()) + 1;
    }
  return rank;
}

// The WNODF pair sum over the rows of `w` in by-degree (fill) order: for
// each lower row b and each of its non-zero cells l, the rows of strictly
// larger fill whose cell l is strictly larger; integers per fill, as above.
double weighted_overlap_sum_by_fill(const Matrix& w) {
  const Index n = w.rows(), m = w.cols();
  std::vector<int> fill(static_cast<std::size_t>(n), 0);
  for (Index i = 0; i < n; ++i) fill[i] = static_cast<int>((w.row(i).array() > 0).count());
  std::vector<int> distinct;
  const std::vector<int> rank = column_ranks(w, distinct);
  ColumnRankCounts above(distinct);
  std::vector<std::int64_t> shared(static_cast<std::size_t>(m) + 1, 0);
  for_each_degree_group(
      fill, [&](const std::vector<Index>& order, std::size_t begin, std::size_t end, int f) {
        for (std::size_t p = begin; p < end; ++p) {
          const int* row = rank.data() + order[p] * m;
          std::int64_t count = 0;
          for (Index l = 0; l < m; ++l)
            if (row[l] > 0) count += above.count_above(static_cast<std::size_t>(l), row[l]);
          shared[f] += count;
        }
        for (std::size_t p = begin; p < end; ++p) {
          const int* row = rank.data() + order[p] * m;
          for (Index l = 0; l < m; ++l)
            if (row[l] > 0) above.insert(static_cast<std::size_t>(l), row[l]);
        }
      });
  return per_degree_sum(shared);
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

constexpr EnumWord<PairOrder> kPairOrderWords[] = {{PairOrder::by_degree, "by-degree"},
                                                   {PairOrder::as_given, "as-given"}};

std::string to_string(PairOrder value) { return word_of(value, kPairOrderWords); }

PairOrder pair_order_from_string(const std::string& text) {
  return value_of(text, kPairOrderWords, "order");
}

NestednessParts nodf(const BinaryMatrix& links, PairOrder order) {
  const BinaryMatrix transposed = links.transpose();
  if (order == PairOrder::by_degree) {
    return combine(overlap_sum_by_degree(links), links.rows(), overlap_sum_by_degree(transposed),
                   links.cols());
  }
  const double row_sum = paired_overlap_sum(pack_rows(links), order);
  const double column_sum = paired_overlap_sum(pack_rows(transposed), order);
  return combine(row_sum, links.rows(), column_sum, links.cols());
}

NestednessParts wnodf(const Matrix& weights, PairOrder order) {
  check_weights(weights);
  const Matrix transposed = weights.transpose();
  if (order == PairOrder::by_degree) {
    return combine(weighted_overlap_sum_by_fill(weights), weights.rows(),
                   weighted_overlap_sum_by_fill(transposed), weights.cols());
  }
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
