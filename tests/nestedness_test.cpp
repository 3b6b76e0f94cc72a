#include "allocsim/analysis/nestedness.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <fstream>
#include <functional>
#include <iostream>
#include <numeric>
#include <random>
#include <sstream>
#include <string>
#include <tuple>
#include <vector>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"

using namespace allocsim;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

constexpr double kExact = 1e-9;           // parts are ratios of small integers
constexpr double kNumpyRelative = 1e-10;  // agreement with numpy's SVD

BinaryMatrix binary(std::initializer_list<std::initializer_list<int>> rows) {
  BinaryMatrix m(static_cast<Eigen::Index>(rows.size()),
                 static_cast<Eigen::Index>(rows.begin()->size()));
  Eigen::Index i = 0;
  for (const auto& row : rows) {
    Eigen::Index j = 0;
    for (int v : row) m(i, j++) = static_cast<std::uint8_t>(v);
    ++i;
  }
  return m;
}

// n x n staircase: row i links to columns 0 .. n-1-i (perfectly nested,
// strictly decreasing degrees in both directions).
BinaryMatrix staircase(int n) {
  BinaryMatrix m = BinaryMatrix::Zero(n, n);
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < n - i; ++j) m(i, j) = 1;
  return m;
}

// The paper's definition written out pair by pair, in the given order:
// an independent oracle for the packed implementation.
double naive_nodf_total(const BinaryMatrix& m) {
  double sum = 0;
  auto score = [&](auto degree_of, auto common, Eigen::Index count) {
    for (Eigen::Index a = 0; a < count; ++a)
      for (Eigen::Index b = a + 1; b < count; ++b) {
        const int ka = degree_of(a), kb = degree_of(b);
        if (ka > kb && kb > 0) sum += 100.0 * common(a, b) / kb;
      }
  };
  score([&](Eigen::Index i) { return static_cast<int>(m.row(i).cast<int>().sum()); },
        [&](Eigen::Index a, Eigen::Index b) {
          return (m.row(a).cast<int>().array() * m.row(b).cast<int>().array()).sum();
        },
        m.rows());
  score([&](Eigen::Index j) { return static_cast<int>(m.col(j).cast<int>().sum()); },
        [&](Eigen::Index a, Eigen::Index b) {
          return (m.col(a).cast<int>().array() * m.col(b).cast<int>().array()).sum();
        },
        m.cols());
  const double pairs = 0.5 * m.rows() * (m.rows() - 1) + 0.5 * m.cols() * (m.cols() - 1);
  return sum / pairs;
}

BinaryMatrix random_links(Eigen::Index n, Eigen::Index m, double density, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::bernoulli_distribution link(density);
  BinaryMatrix out(n, m);
  for (Eigen::Index i = 0; i < n; ++i)
    for (Eigen::Index j = 0; j < m; ++j) out(i, j) = link(rng) ? 1 : 0;
  return out;
}

struct ReferenceValue {
  std::string matrix, quantity;
  long index;
  double value;
};

// tests/data/structure_reference.csv, written by
// tests/reference/structure_vs_numpy.py from numpy.
std::vector<ReferenceValue> numpy_reference(const std::string& quantity) {
  std::ifstream in(std::string(ALLOCSIM_TEST_DATA) + "/structure_reference.csv");
  REQUIRE(in.good());
  std::vector<ReferenceValue> values;
  std::string line;
  std::getline(in, line);  // header
  while (std::getline(in, line)) {
    const auto cells = split_csv_record(line);
    REQUIRE(cells.size() == 4);
    if (cells[1] == quantity)
      values.push_back({cells[0], cells[1], std::stol(cells[2]), std::stod(cells[3])});
  }
  return values;
}

}  // namespace

TEST_CASE("NODF of the worked example of Almeida-Neto et al. 2008 is 58.33") {
  // Almeida-Neto et al. 2008, Oikos 117:1227-1239, the worked NODF example
  // figure (Fig. 2; figure number from memory). The first four rows were
  // checked against a public write-up of that example; row 5 and the
  // published values (rows 53.3, columns 63.3, NODF 58.3) are from memory,
  // and the hand computation below reproduces them.
  const BinaryMatrix m =
      binary({{1, 0, 1, 1, 1}, {1, 1, 1, 0, 0}, {0, 1, 1, 1, 0}, {1, 1, 0, 0, 0}, {1, 1, 0, 0, 0}});
  // Rows (degrees 4,3,3,2,2): r1r2 2/3, r1r3 2/3, r1r4 1/2, r1r5 1/2, r2r3 tie,
  // r2r4 2/2, r2r5 2/2, r3r4 1/2, r3r5 1/2, r4r5 tie -> 533.3/10 = 53.33.
  // Columns (degrees 4,4,3,2,1): c1c2 tie, c1c3 2/3, c1c4 1/2, c1c5 1/1,
  // c2c3 2/3, c2c4 1/2, c2c5 0/1, c3c4 2/2, c3c5 1/1, c4c5 1/1 -> 633.3/10 = 63.33.
  // Total: (533.3 + 633.3) / 20 = 58.33.
  for (PairOrder order : {PairOrder::by_degree, PairOrder::as_given}) {
    const NestednessParts parts = nodf(m, order);
    CHECK_THAT(parts.rows, WithinAbs(160.0 / 3.0, kExact));
    CHECK_THAT(parts.columns, WithinAbs(190.0 / 3.0, kExact));
    CHECK_THAT(parts.total, WithinAbs(175.0 / 3.0, kExact));
  }
  CHECK_THAT(connectance(m), WithinAbs(14.0 / 25.0, kExact));  // 4+3+3+2+2 links
}

TEST_CASE("a perfectly nested staircase has NODF 100 in every part") {
  for (int n : {2, 5, 8, 70}) {
    const NestednessParts parts = nodf(staircase(n));
    CHECK_THAT(parts.rows, WithinAbs(100.0, kExact));
    CHECK_THAT(parts.columns, WithinAbs(100.0, kExact));
    CHECK_THAT(parts.total, WithinAbs(100.0, kExact));
  }
}

TEST_CASE("by-degree order undoes a shuffle; as-given order scores the shuffled matrix") {
  const BinaryMatrix nested = staircase(6);
  // Reverse the rows: every row pair now has its smaller row on top.
  const BinaryMatrix reversed = nested.colwise().reverse();
  CHECK_THAT(nodf(reversed, PairOrder::by_degree).total, WithinAbs(100.0, kExact));
  CHECK_THAT(nodf(reversed, PairOrder::as_given).rows, WithinAbs(0.0, kExact));
  CHECK_THAT(nodf(reversed, PairOrder::as_given).columns, WithinAbs(100.0, kExact));
}

TEST_CASE("pairs of equal degree score 0") {
  // Two identical rows: the row pair is a tie; columns {r1,r2},{r1,r2},{}
  // give a tie and two pairs with an empty column.
  const NestednessParts identical = nodf(binary({{1, 1, 0}, {1, 1, 0}}));
  CHECK(identical.rows == 0.0);
  CHECK(identical.columns == 0.0);
  CHECK(identical.total == 0.0);
  // Every row and column of the same degree (a 2-regular 3x3 ring).
  CHECK(nodf(binary({{1, 1, 0}, {0, 1, 1}, {1, 0, 1}})).total == 0.0);
  // An empty row below a full one: decreasing fill holds but there is
  // nothing to overlap; the pair scores 0 (our convention for 0/0).
  CHECK(nodf(binary({{1, 1}, {0, 0}})).rows == 0.0);
}

TEST_CASE("row, column and total parts match hand computations") {
  SECTION("overlaps of 2/3, 1 and 0") {
    // r1 = {c1,c2,c3,c5} (4), r2 = {c2,c3,c4} (3), r3 = {c1} (1).
    // Rows: r1r2 2/3, r1r3 1/1, r2r3 0/1 -> 166.67 / 3 = 55.56.
    // Columns: c1={r1,r3}, c2={r1,r2}, c3={r1,r2} (2 each), c4={r2}, c5={r1} (1 each).
    // Ties: c1c2, c1c3, c2c3, c4c5 -> 0. Degree 2 over 1: c1c4 0/1, c1c5 1/1,
    // c2c4 1/1, c2c5 1/1, c3c4 1/1, c3c5 1/1 -> 500 / 10 = 50.
    // Total: (166.67 + 500) / 13 = 51.28.
    const NestednessParts parts = nodf(binary({{1, 1, 1, 0, 1}, {0, 1, 1, 1, 0}, {1, 0, 0, 0, 0}}));
    CHECK_THAT(parts.rows, WithinAbs(500.0 / 9.0, kExact));
    CHECK_THAT(parts.columns, WithinAbs(50.0, kExact));
    CHECK_THAT(parts.total, WithinAbs((500.0 / 3.0 + 500.0) / 13.0, kExact));
  }
  SECTION("order matters only for pairs out of degree order") {
    // r1 = all 4, r2 = {c1,c2}, r3 = {c2,c3}. Rows: r1r2 1, r1r3 1, r2r3 tie
    // -> 200/3. Columns c1 (2), c2 (3), c3 (2), c4 (1).
    // by-degree: c2c1 1, c2c3 1, c2c4 1, c1c3 tie, c1c4 1, c3c4 1 -> 500/6.
    // as-given: c1c2 fails (2 < 3), c1c3 tie, c1c4 1, c2c3 1, c2c4 1, c3c4 1 -> 400/6.
    const BinaryMatrix m = binary({{1, 1, 1, 1}, {1, 1, 0, 0}, {0, 1, 1, 0}});
    const NestednessParts sorted = nodf(m, PairOrder::by_degree);
    CHECK_THAT(sorted.rows, WithinAbs(200.0 / 3.0, kExact));
    CHECK_THAT(sorted.columns, WithinAbs(500.0 / 6.0, kExact));
    CHECK_THAT(sorted.total, WithinAbs(700.0 / 9.0, kExact));
    const NestednessParts given = nodf(m, PairOrder::as_given);
    CHECK_THAT(given.columns, WithinAbs(400.0 / 6.0, kExact));
    CHECK_THAT(given.total, WithinAbs(600.0 / 9.0, kExact));
  }
}

TEST_CASE("packed NODF equals the pair-by-pair definition across word boundaries") {
  for (std::uint64_t seed : {1u, 2u, 3u}) {
    INFO("seed " << seed);
    const BinaryMatrix m = random_links(37, 130, 0.3, seed);
    CHECK_THAT(nodf(m, PairOrder::as_given).total, WithinAbs(naive_nodf_total(m), 1e-9));
  }
}

TEST_CASE("WNODF matches hand computations from the definition of Almeida-Neto & Ulrich 2011") {
  // Almeida-Neto & Ulrich 2011, Environmental Modelling & Software 26:173,
  // definition of WNODF (from memory): for fills F_a > F_b,
  // N_ab = 100 * (cells where 0 < W_b < W_a) / F_b; otherwise 0.
  SECTION("strictly decreasing weights") {
    // r1 = 5 4 3 2 (F 4), r2 = 3 2 1 0 (F 3), r3 = 4 0 0 0 (F 1).
    // Rows: r1r2 3/3, r1r3 (4 < 5) 1/1, r2r3 (4 < 3 fails) 0/1 -> 200/3.
    // Columns: c1 = (5,3,4) F 3, c2 = (4,2,0) F 2, c3 = (3,1,0) F 2, c4 = (2,0,0) F 1.
    // c1c2 2/2, c1c3 2/2, c1c4 1/1, c2c3 tie, c2c4 1/1, c3c4 1/1 -> 500/6.
    Matrix w(3, 4);
    w << 5, 4, 3, 2, 3, 2, 1, 0, 4, 0, 0, 0;
    const NestednessParts parts = wnodf(w);
    CHECK_THAT(parts.rows, WithinAbs(200.0 / 3.0, kExact));
    CHECK_THAT(parts.columns, WithinAbs(500.0 / 6.0, kExact));
    CHECK_THAT(parts.total, WithinAbs(700.0 / 9.0, kExact));
  }
  SECTION("equal weights do not count") {
    // r1 = 2 2 2 (F 3), r2 = 2 1 0 (F 2): only c2 (1 < 2) counts -> 50.
    // Columns (2,2), (2,1) F 2 and (2,0) F 1: c1c2 tie, c1c3 (2 < 2 fails),
    // c2c3 (2 < 2 fails) -> 0. Total 50 / 4 = 12.5.
    Matrix w(2, 3);
    w << 2, 2, 2, 2, 1, 0;
    const NestednessParts parts = wnodf(w);
    CHECK_THAT(parts.rows, WithinAbs(50.0, kExact));
    CHECK_THAT(parts.columns, WithinAbs(0.0, kExact));
    CHECK_THAT(parts.total, WithinAbs(12.5, kExact));
  }
  SECTION("as-given order scores pairs out of fill order as 0") {
    Matrix w(2, 3);
    w << 2, 1, 0, 2, 2, 2;  // the fuller row below
    CHECK(wnodf(w, PairOrder::as_given).rows == 0.0);
    CHECK_THAT(wnodf(w, PairOrder::by_degree).rows, WithinAbs(50.0, kExact));
  }
  Matrix negative(1, 2);
  negative << 1, -1;
  CHECK_THROWS_AS(wnodf(negative), InputError);
}

TEST_CASE("spectral radius equals numpy's largest singular value") {
  // Reference: numpy.linalg.svd, via tests/reference/structure_vs_numpy.py.
  const auto reference = numpy_reference("spectral_radius");
  REQUIRE(reference.size() == 4);
  for (const auto& ref : reference) {
    INFO(ref.matrix);
    const Matrix m = read_matrix_csv(std::string(ALLOCSIM_TEST_DATA) + "/" + ref.matrix).values;
    CHECK_THAT(spectral_radius(m), WithinRel(ref.value, kNumpyRelative));
  }
}

TEST_CASE("spectral radius closed forms") {
  // A full n x m matrix of ones has one singular value sqrt(n m).
  CHECK_THAT(spectral_radius(Matrix(Matrix::Ones(4, 9))), WithinRel(6.0, 1e-12));
  // Two equal disjoint blocks: a repeated top singular value (zero gap).
  Matrix blocks = Matrix::Zero(4, 4);
  blocks.topLeftCorner(2, 2).setOnes();
  blocks.bottomRightCorner(2, 2).setOnes();
  CHECK_THAT(spectral_radius(blocks), WithinRel(2.0, 1e-12));
  // Signed entries go to the dense solver: diag(3, -5) has singular values 5, 3.
  Matrix signed_matrix = Matrix::Zero(2, 2);
  signed_matrix(0, 0) = 3;
  signed_matrix(1, 1) = -5;
  CHECK_THAT(spectral_radius(signed_matrix), WithinRel(5.0, 1e-12));
  CHECK(spectral_radius(Matrix(Matrix::Zero(3, 3))) == 0.0);
}

TEST_CASE("order words read back") {
  for (PairOrder order : {PairOrder::by_degree, PairOrder::as_given})
    CHECK(pair_order_from_string(to_string(order)) == order);
  CHECK_THROWS_AS(pair_order_from_string("sorted"), InputError);
}

TEST_CASE("NODF, WNODF and spectral radius timings on 1000 x 1000", "[.][timing]") {
  const BinaryMatrix m = random_links(1000, 1000, 0.3, 7);
  auto time_ms = [](auto&& f) {
    const auto start = std::chrono::steady_clock::now();
    const double value = f();
    const double ms =
        std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - start).count();
    return std::make_pair(value, ms);
  };
  const auto [n, n_ms] = time_ms([&] { return nodf(m).total; });
  const auto [w, w_ms] = time_ms([&] { return wnodf(to_matrix(m)).total; });
  const auto [s, s_ms] = time_ms([&] { return spectral_radius(m); });
  std::cout << "1000x1000 density 0.3: NODF " << n << " in " << n_ms << " ms; WNODF " << w << " in "
            << w_ms << " ms; spectral radius " << s << " in " << s_ms << " ms\n";
  CHECK(n > 0);
}

namespace {

// NODF by degree pair by pair, straight from the definition: every pair of
// unequal degrees counts, with the fuller member above. Parts as fractions.
NestednessParts naive_nodf_by_degree(const BinaryMatrix& m) {
  const auto part = [](const Eigen::MatrixXi& a) {
    double sum = 0;
    const Eigen::VectorXi degree = a.rowwise().sum();
    for (Eigen::Index x = 0; x < a.rows(); ++x)
      for (Eigen::Index y = x + 1; y < a.rows(); ++y) {
        const int lower = std::min(degree[x], degree[y]);
        if (degree[x] == degree[y] || lower == 0) continue;
        sum += 100.0 * (a.row(x).array() * a.row(y).array()).sum() / lower;
      }
    return sum;
  };
  const Eigen::MatrixXi a = m.cast<int>();
  const double rows = part(a), columns = part(a.transpose());
  const double row_pairs = 0.5 * m.rows() * (m.rows() - 1);
  const double column_pairs = 0.5 * m.cols() * (m.cols() - 1);
  return {row_pairs > 0 ? rows / row_pairs : 0, column_pairs > 0 ? columns / column_pairs : 0,
          (rows + columns) / (row_pairs + column_pairs)};
}

// WNODF by fill pair by pair: for fills F_a > F_b > 0, the share of b's
// non-zero cells strictly below a's.
NestednessParts naive_wnodf_by_fill(const Matrix& w) {
  const auto part = [](const Eigen::MatrixXd& a) {
    double sum = 0;
    const Eigen::VectorXi fill = (a.array() > 0).cast<int>().rowwise().sum();
    for (Eigen::Index x = 0; x < a.rows(); ++x)
      for (Eigen::Index y = x + 1; y < a.rows(); ++y) {
        if (fill[x] == fill[y] || std::min(fill[x], fill[y]) == 0) continue;
        const Eigen::Index upper = fill[x] > fill[y] ? x : y, lower = upper == x ? y : x;
        int below = 0;
        for (Eigen::Index l = 0; l < a.cols(); ++l)
          below += a(lower, l) > 0 && a(lower, l) < a(upper, l);
        sum += 100.0 * below / fill[lower];
      }
    return sum;
  };
  const Eigen::MatrixXd a = w;
  const double rows = part(a), columns = part(a.transpose());
  const double row_pairs = 0.5 * w.rows() * (w.rows() - 1);
  const double column_pairs = 0.5 * w.cols() * (w.cols() - 1);
  return {row_pairs > 0 ? rows / row_pairs : 0, column_pairs > 0 ? columns / column_pairs : 0,
          (rows + columns) / (row_pairs + column_pairs)};
}

// Random matrices with many equal degrees and a few empty rows and columns.
void empty_some(Eigen::Index n, Eigen::Index m, std::mt19937_64& rng,
                const std::function<void(Eigen::Index, Eigen::Index)>& clear) {
  std::uniform_int_distribution<Eigen::Index> row(0, n - 1), column(0, m - 1);
  for (int k = 0; k < 3; ++k) {
    const Eigen::Index i = row(rng), j = column(rng);
    for (Eigen::Index l = 0; l < m; ++l) clear(i, l);
    for (Eigen::Index l = 0; l < n; ++l) clear(l, j);
  }
}

constexpr double kSameSum = 1e-10;  // the fast sums regroup the same terms

}  // namespace

TEST_CASE("by-degree NODF equals the pair-by-pair definition with ties and empty rows") {
  for (std::uint64_t seed : {11u, 12u, 13u, 14u}) {
    for (const auto& [n, m, density] :
         {std::tuple<int, int, double>{9, 7, 0.5}, {37, 130, 0.3}, {64, 65, 0.05}, {70, 20, 0.9}}) {
      INFO("seed " << seed << ", " << n << " x " << m << ", density " << density);
      BinaryMatrix links = random_links(n, m, density, seed);
      std::mt19937_64 rng(seed);
      empty_some(n, m, rng, [&](Eigen::Index i, Eigen::Index j) { links(i, j) = 0; });
      const NestednessParts fast = nodf(links), naive = naive_nodf_by_degree(links);
      CHECK_THAT(fast.rows, WithinAbs(naive.rows, kSameSum));
      CHECK_THAT(fast.columns, WithinAbs(naive.columns, kSameSum));
      CHECK_THAT(fast.total, WithinAbs(naive.total, kSameSum));
    }
  }
}

TEST_CASE("by-degree WNODF equals the pair-by-pair definition with ties and empty rows") {
  for (std::uint64_t seed : {21u, 22u, 23u}) {
    for (const auto& [n, m, levels] :
         {std::tuple<int, int, int>{8, 6, 2}, {40, 90, 3}, {65, 30, 0}, {20, 200, 5}}) {
      INFO("seed " << seed << ", " << n << " x " << m << ", levels " << levels);
      std::mt19937_64 rng(seed);
      // levels > 0: whole numbers 0..levels (many equal weights); 0: continuous.
      std::uniform_int_distribution<int> count(0, std::max(levels, 1));
      std::uniform_real_distribution<double> share(0.0, 1.0);
      Matrix w(n, m);
      for (Eigen::Index i = 0; i < n; ++i)
        for (Eigen::Index j = 0; j < m; ++j) {
          const double u = share(rng);
          w(i, j) = levels > 0 ? count(rng) : (u < 0.4 ? 0.0 : u);
        }
      empty_some(n, m, rng, [&](Eigen::Index i, Eigen::Index j) { w(i, j) = 0; });
      const NestednessParts fast = wnodf(w), naive = naive_wnodf_by_fill(w);
      CHECK_THAT(fast.rows, WithinAbs(naive.rows, kSameSum));
      CHECK_THAT(fast.columns, WithinAbs(naive.columns, kSameSum));
      CHECK_THAT(fast.total, WithinAbs(naive.total, kSameSum));
    }
  }
}
