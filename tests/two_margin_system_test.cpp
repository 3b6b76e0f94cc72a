#include "allocsim/analysis/two_margin_system.hpp"

#include <catch2/catch.hpp>
#include <random>

using namespace allocsim;

namespace {

Matrix random_weights(Eigen::Index n, Eigen::Index m, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  Matrix w(n, m);
  for (Eigen::Index k = 0; k < w.size(); ++k) w.data()[k] = u(rng) < 0.3 ? 0.0 : u(rng);
  return w;
}

Vector random_vector(Eigen::Index size, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> z;
  Vector v(size);
  for (Eigen::Index k = 0; k < size; ++k) v(k) = z(rng);
  return v;
}

// The whole (n + m) system, solved by Eigen's complete orthogonal
// decomposition as the reference.
Vector full_solution(const Matrix& w, const Vector& p, const Vector& q) {
  const Eigen::Index n = w.rows(), m = w.cols();
  Eigen::MatrixXd h = Eigen::MatrixXd::Zero(n + m, n + m);
  h.topLeftCorner(n, n).diagonal() = w.rowwise().sum();
  h.bottomRightCorner(m, m).diagonal() = w.colwise().sum().transpose();
  h.topRightCorner(n, m) = w;
  h.bottomLeftCorner(m, n) = w.transpose();
  Vector rhs(n + m);
  rhs << p, q;
  return h.completeOrthogonalDecomposition().solve(rhs);
}

// a_i + b_j on the cells of positive weight does not depend on which
// solution is taken: compare those.
void check_same_cells(const Matrix& w, const TwoMarginSolution& s, const Vector& full) {
  const Eigen::Index n = w.rows();
  for (Eigen::Index i = 0; i < w.rows(); ++i)
    for (Eigen::Index j = 0; j < w.cols(); ++j)
      if (w(i, j) > 0) {
        INFO("cell " << i << ", " << j);
        CHECK(s.a(i) + s.b(j) == Approx(full(i) + full(n + j)).margin(1e-9));
      }
}

}  // namespace

TEST_CASE("two-margin system: the whole system's solution on every weighted cell") {
  for (const auto& [n, m] : {std::pair<long, long>{30, 12}, {12, 12}, {8, 25}}) {
    INFO(n << " x " << m);
    const Matrix w = random_weights(n, m, 3 + n);
    const Vector r = w.rowwise().sum(), c = w.colwise().sum().transpose();
    Vector p = random_vector(n, 5), q = random_vector(m, 7);
    q.array() += (p.sum() - q.sum()) / static_cast<double>(m);  // consistent: equal sums
    const TwoMarginSolution s = solve_two_margin_system(w, r, c, p, q);
    check_same_cells(w, s, full_solution(w, p, q));
    CHECK(std::abs(s.b.sum()) < 1e-9);  // minimum norm: orthogonal to the ones
  }
}

TEST_CASE("two-margin system: weights in two blocks, and an empty row and column") {
  // Two disconnected blocks: the Schur complement has a second null
  // direction, so the orthogonal decomposition takes over.
  Matrix w = Matrix::Zero(10, 8);
  w.topLeftCorner(5, 4) = random_weights(5, 4, 11).array() + 0.1;
  w.bottomRightCorner(4, 3) = random_weights(4, 3, 13).array() + 0.1;  // row 5 and column 4 empty
  const Vector r = w.rowwise().sum(), c = w.colwise().sum().transpose();
  Vector p = random_vector(10, 17), q = random_vector(8, 19);
  p(5) = 0;
  q(4) = 0;
  // Consistent block by block.
  q.head(4).array() += (p.head(5).sum() - q.head(4).sum()) / 4.0;
  q.tail(3).array() += (p.tail(4).sum() - q.tail(3).sum()) / 3.0;
  const TwoMarginSolution s = solve_two_margin_system(w, r, c, p, q);
  check_same_cells(w, s, full_solution(w, p, q));
  CHECK(s.a(5) == 0);
  CHECK(s.b(4) == 0);
}

TEST_CASE("two-margin system: equal weights give the double-centred means") {
  // Unit weights: least squares with row and column constants is the
  // two-way layout, whose fitted values are row mean + column mean - grand
  // mean (common practice, e.g. any text on two-way ANOVA without interaction).
  const Matrix x = random_weights(9, 6, 23);
  const Matrix w = Matrix::Ones(9, 6);
  const Vector r = w.rowwise().sum(), c = w.colwise().sum().transpose();
  const TwoMarginSolution s =
      solve_two_margin_system(w, r, c, x.rowwise().sum(), x.colwise().sum().transpose());
  const Vector row_mean = x.rowwise().mean();
  const Vector column_mean = x.colwise().mean().transpose();
  for (Eigen::Index i = 0; i < 9; ++i)
    for (Eigen::Index j = 0; j < 6; ++j)
      CHECK(s.a(i) + s.b(j) == Approx(row_mean(i) + column_mean(j) - x.mean()).margin(1e-12));
}
