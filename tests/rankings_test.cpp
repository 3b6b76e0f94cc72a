#include "allocsim/analysis/rankings.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <fstream>
#include <iostream>
#include <numeric>
#include <random>
#include <string>
#include <vector>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"

using namespace allocsim;
using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

constexpr double kNumpyAbsolute = 1e-8;  // standardised indices against numpy.linalg.eig

BinaryMatrix staircase(int n) {
  BinaryMatrix m = BinaryMatrix::Zero(n, n);
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < n - i; ++j) m(i, j) = 1;
  return m;
}

// Rows and columns permuted by seeded shuffles.
BinaryMatrix shuffled(const BinaryMatrix& m, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::vector<Eigen::Index> rows(m.rows()), cols(m.cols());
  std::iota(rows.begin(), rows.end(), Eigen::Index{0});
  std::iota(cols.begin(), cols.end(), Eigen::Index{0});
  std::shuffle(rows.begin(), rows.end(), rng);
  std::shuffle(cols.begin(), cols.end(), rng);
  BinaryMatrix out(m.rows(), m.cols());
  for (Eigen::Index i = 0; i < m.rows(); ++i)
    for (Eigen::Index j = 0; j < m.cols(); ++j) out(i, j) = m(rows[i], cols[j]);
  return out;
}

BinaryMatrix read_links(const std::string& name) {
  const Matrix values = read_matrix_csv(std::string(ALLOCSIM_TEST_DATA) + "/" + name).values;
  return values.cast<std::uint8_t>();
}

struct NumpyIndices {
  double second_eigenvalue = 0;
  std::vector<double> eci, pci;
};

// tests/data/structure_reference.csv, written by
// tests/reference/structure_vs_numpy.py from numpy.linalg.eig.
NumpyIndices numpy_indices(const std::string& matrix) {
  std::ifstream in(std::string(ALLOCSIM_TEST_DATA) + "/structure_reference.csv");
  REQUIRE(in.good());
  NumpyIndices found;
  std::string line;
  std::getline(in, line);
  while (std::getline(in, line)) {
    const auto cells = split_csv_record(line);
    if (cells.size() != 4 || cells[0] != matrix) continue;
    const double value = std::stod(cells[3]);
    if (cells[1] == "second_eigenvalue") found.second_eigenvalue = value;
    if (cells[1] == "eci") found.eci.push_back(value);
    if (cells[1] == "pci") found.pci.push_back(value);
  }
  return found;
}

}  // namespace

TEST_CASE("degree orderings rank by decreasing degree, ties by index") {
  BinaryMatrix m(3, 4);
  m << 1, 0, 0, 0,  //
      1, 1, 1, 0,   //
      1, 1, 0, 0;
  CHECK(row_degree_order(m) == Ordering{1, 2, 0});
  CHECK(column_degree_order(m) == Ordering{0, 1, 2, 3});
  Vector scores(4);
  scores << 0.5, 2.0, 0.5, -1.0;
  CHECK(order_by_score(scores) == Ordering{1, 0, 2, 3});
}

TEST_CASE("Fitness-Complexity on a perfectly nested matrix orders as the degrees do") {
  // Tacchella et al. 2012: on a nested matrix the most diversified agents
  // and the least ubiquitous partners rank highest, i.e. the degree order.
  for (std::uint64_t seed : {11u, 12u}) {
    INFO("seed " << seed);
    const BinaryMatrix m = shuffled(staircase(9), seed);
    const FitnessComplexityResult result = fitness_complexity(m);
    CHECK(result.row_order == row_degree_order(m));
    // The least ubiquitous partner is the most complex: increasing degree.
    Ordering increasing = column_degree_order(m);
    std::reverse(increasing.begin(), increasing.end());
    CHECK(result.column_order == increasing);
    // Every row but the fullest decays (see the closed form below).
    CHECK(result.status == FitnessComplexityStatus::scores_decay);
    CHECK(result.decaying_rows.size() == 8);
  }
}

TEST_CASE("Fitness-Complexity on [[1,1],[1,0]] decays as 1/(t+1)") {
  // Closed form (our derivation): with x_t = F_2/F_1 and y_t = Q_1/Q_2 the
  // map gives x_t = y_{t-1}/(1+y_{t-1}) and y_t = x_{t-1}/(1+x_{t-1}); from
  // x_0 = y_0 = 1, 1/x_t = 1/x_{t-1} + 1, so x_t = y_t = 1/(t+1). The
  // second row's fitness (and the shared column's complexity) tends to zero
  // but never settles: the case where Fitness-Complexity does not converge.
  BinaryMatrix m(2, 2);
  m << 1, 1, 1, 0;
  for (long t : {1L, 7L, 200L}) {
    FitnessComplexityOptions options;
    options.max_iterations = t;
    const FitnessComplexityResult result = fitness_complexity(m, options);
    INFO("t = " << t);
    CHECK(result.iterations == t);
    CHECK_THAT(result.fitness(1) / result.fitness(0), WithinRel(1.0 / (t + 1.0), 1e-12));
    CHECK_THAT(result.complexity(0) / result.complexity(1), WithinRel(1.0 / (t + 1.0), 1e-12));
  }
  const FitnessComplexityResult result = fitness_complexity(m);
  CHECK(result.status == FitnessComplexityStatus::scores_decay);
  CHECK(result.decaying_rows == std::vector<Eigen::Index>{1});
  CHECK(result.decaying_columns == std::vector<Eigen::Index>{0});
  CHECK(result.row_order == Ordering{0, 1});
  CHECK(result.column_order == Ordering{1, 0});
}

TEST_CASE("Fitness-Complexity converges where every score has a positive fixed point") {
  // A full matrix: every F~ and Q~ is equal, so the first iterate is the
  // fixed point F = Q = 1.
  const FitnessComplexityResult full = fitness_complexity(BinaryMatrix::Ones(3, 5));
  CHECK(full.status == FitnessComplexityStatus::converged);
  CHECK(full.fitness.isApprox(Vector::Ones(3)));
  CHECK(full.complexity.isApprox(Vector::Ones(5)));
  // A 2-regular ring: by symmetry F = Q = 1 again.
  BinaryMatrix ring(3, 3);
  ring << 1, 1, 0, 0, 1, 1, 1, 0, 1;
  CHECK(fitness_complexity(ring).status == FitnessComplexityStatus::converged);
}

TEST_CASE("Fitness-Complexity leaves rows and columns without links at 0") {
  BinaryMatrix m(3, 3);
  m << 1, 1, 0, 0, 0, 0, 1, 1, 0;
  const FitnessComplexityResult result = fitness_complexity(m);
  CHECK(result.fitness(1) == 0.0);
  CHECK(result.complexity(2) == 0.0);
  CHECK_THAT(result.fitness(0), WithinAbs(1.0, 1e-12));  // mean 1 over rows with links
  CHECK(result.message.find("without links") != std::string::npos);
  CHECK(fitness_complexity(BinaryMatrix::Zero(2, 2)).status == FitnessComplexityStatus::no_links);
  FitnessComplexityOptions bad;
  bad.tolerance = 0;
  CHECK_THROWS_WITH(fitness_complexity(m, bad), Catch::Contains("tolerance"));
}

TEST_CASE("ECI and PCI equal numpy's eigen-decomposition of the same matrices") {
  // Reference: numpy.linalg.eig of W = (M/k)(M/h)^T and of the column
  // matrix, via tests/reference/structure_vs_numpy.py. The 40 x 6 matrix
  // takes the column-side path of the solver, the others the row side.
  for (const std::string name :
       {"structure_random_30x40.csv", "structure_nested_25x20.csv", "structure_tall_40x6.csv"}) {
    INFO(name);
    const NumpyIndices expected = numpy_indices(name);
    const BinaryMatrix m = read_links(name);
    REQUIRE(expected.eci.size() == static_cast<std::size_t>(m.rows()));
    REQUIRE(expected.pci.size() == static_cast<std::size_t>(m.cols()));
    const ComplexityIndexResult result = economic_complexity_index(m);
    CHECK(result.status == ComplexityIndexStatus::computed);
    CHECK_THAT(result.second_eigenvalue, WithinAbs(expected.second_eigenvalue, 1e-12));
    for (Eigen::Index i = 0; i < m.rows(); ++i)
      CHECK_THAT(result.row_index(i), WithinAbs(expected.eci[i], kNumpyAbsolute));
    for (Eigen::Index j = 0; j < m.cols(); ++j)
      CHECK_THAT(result.column_index(j), WithinAbs(expected.pci[j], kNumpyAbsolute));
    CHECK(result.row_order == order_by_score(result.row_index));
  }
}

TEST_CASE("ECI reports a disconnected matrix as degenerate") {
  // Two disjoint blocks: the eigenvalue 1 is double, so the "second"
  // eigenvector is any mix of the block indicators.
  BinaryMatrix blocks = BinaryMatrix::Zero(4, 4);
  blocks.topLeftCorner(2, 2) << 1, 1, 1, 0;
  blocks.bottomRightCorner(2, 2) << 1, 1, 0, 1;
  const ComplexityIndexResult result = economic_complexity_index(blocks);
  CHECK(result.status == ComplexityIndexStatus::degenerate);
  CHECK_THAT(result.second_eigenvalue, WithinAbs(1.0, 1e-12));
  CHECK(economic_complexity_index(BinaryMatrix::Zero(2, 3)).status ==
        ComplexityIndexStatus::no_links);
  CHECK(economic_complexity_index(BinaryMatrix::Ones(1, 3)).status ==
        ComplexityIndexStatus::degenerate);
}

TEST_CASE("ranking status words read back") {
  for (auto s : {FitnessComplexityStatus::converged, FitnessComplexityStatus::scores_decay,
                 FitnessComplexityStatus::not_converged, FitnessComplexityStatus::no_links})
    CHECK(fitness_complexity_status_from_string(to_string(s)) == s);
  for (auto s : {ComplexityIndexStatus::computed, ComplexityIndexStatus::degenerate,
                 ComplexityIndexStatus::no_links})
    CHECK(complexity_index_status_from_string(to_string(s)) == s);
  CHECK_THROWS_AS(fitness_complexity_status_from_string("done"), InputError);
}

TEST_CASE("Fitness-Complexity and ECI timings on 1000 x 1000", "[.][timing]") {
  std::mt19937_64 rng(7);
  std::bernoulli_distribution link(0.3);
  BinaryMatrix m(1000, 1000);
  for (Eigen::Index i = 0; i < m.rows(); ++i)
    for (Eigen::Index j = 0; j < m.cols(); ++j) m(i, j) = link(rng) ? 1 : 0;
  auto start = std::chrono::steady_clock::now();
  const FitnessComplexityResult fc = fitness_complexity(m);
  const double fc_seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  start = std::chrono::steady_clock::now();
  const ComplexityIndexResult eci = economic_complexity_index(m);
  const double eci_seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  std::cout << "1000x1000 density 0.3: " << fc.brief() << " in " << fc_seconds << " s; "
            << eci.brief() << " in " << eci_seconds << " s\n";
  CHECK(fc.iterations > 0);
}

TEST_CASE("the correspondence order recovers the hidden order of a shuffled band matrix") {
  // A Gaussian band W_ij = exp(-(x_i - y_j)^2 / 0.02) on shuffled traits: the
  // first non-trivial correspondence-analysis axis is monotone in the trait
  // (reciprocal averaging seriates a band; Hill 1974, from memory).
  const int n = 25, m = 18;
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  Vector x(n), y(m);
  for (int i = 0; i < n; ++i) x[i] = u(rng);
  for (int j = 0; j < m; ++j) y[j] = u(rng);
  Matrix w(n, m);
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < m; ++j) w(i, j) = std::exp(-(x[i] - y[j]) * (x[i] - y[j]) / 0.02);
  const GradientOrder order = correspondence_order(w);
  const auto monotone = [](const Ordering& o, const Vector& trait) {
    bool up = true, down = true;
    for (std::size_t k = 1; k < o.size(); ++k) {
      up = up && trait[o[k]] >= trait[o[k - 1]];
      down = down && trait[o[k]] <= trait[o[k - 1]];
    }
    return up || down;
  };
  CHECK(monotone(order.rows, x));
  CHECK(monotone(order.columns, y));
}
