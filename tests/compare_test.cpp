#include "allocsim/analysis/compare.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "test_problems.hpp"

using namespace allocsim;
using namespace allocsim::testing;

namespace {
constexpr double kTight = 1e-12;
}  // namespace

TEST_CASE("an allocation compared with itself is at distance zero") {
  const Matrix p = matrix_of({{3, 1, 0}, {0, 2, 4}});
  const Comparison c = compare_allocation(p, p / 10.0);  // scale does not matter
  CHECK(c.kl_divergence == Approx(0).margin(kTight));
  CHECK(c.total_variation == Approx(0).margin(kTight));
  CHECK(c.hellinger == Approx(0).margin(kTight));
  CHECK(c.row_marginal_error == Approx(0).margin(kTight));
  CHECK(c.support_jaccard == 1.0);
  CHECK(c.weight_on_coupling_support == Approx(1.0));
  CHECK(c.allocation_support_size == 4);
}

TEST_CASE("diagonal against uniform gives the closed-form distances") {
  // Closed forms: TV = 1/2 * (4 * 1/4) = 0.5; KL = log 2; Hellinger^2 = 1 - sum sqrt(p q)
  // = 1 - 2 sqrt(1/8).
  const Matrix p = matrix_of({{1, 0}, {0, 1}});
  const Matrix q = matrix_of({{1, 1}, {1, 1}});
  const Comparison c = compare_allocation(p, q);
  CHECK(c.total_variation == Approx(0.5));
  CHECK(c.kl_divergence == Approx(std::log(2.0)));
  CHECK(c.hellinger == Approx(std::sqrt(1 - 2 * std::sqrt(0.125))));
  CHECK(c.support_jaccard == Approx(0.5));
  CHECK(c.allocation_support_is_forest);
  CHECK_FALSE(c.coupling_support_is_forest);  // the full 2 x 2 support is a 4-cycle
  CHECK(c.weight_on_top_links == Approx(1.0));
  CHECK(c.row_marginal_error == Approx(0).margin(kTight));
}

TEST_CASE("weight outside a sparse coupling makes the KL divergence infinite") {
  const Matrix p = matrix_of({{1, 1}, {1, 1}});
  const Matrix q = matrix_of({{1, 0}, {0, 1}});
  const Comparison c = compare_allocation(p, q);
  CHECK(std::isinf(c.kl_divergence));
  CHECK(c.weight_on_coupling_support == Approx(0.5));
  CHECK(c.column_marginal_error == Approx(0).margin(kTight));
}

TEST_CASE("weight on the top n+m-1 cells counts the largest cells") {
  // 2 x 3: n + m - 1 = 4 largest of {6, 5, 4, 3, 2, 1} = 18 of 21.
  const Matrix p = matrix_of({{6, 5, 4}, {3, 2, 1}});
  CHECK(compare_allocation(p, p).weight_on_top_links == Approx(18.0 / 21.0));
  CHECK(weight_on_largest_cells(p, 1) == Approx(6.0 / 21.0));
}

TEST_CASE("marginal errors are the L1 distances of the share marginals") {
  const Matrix p = matrix_of({{1, 0}, {0, 1}});
  const Matrix q = matrix_of({{3, 0}, {0, 1}});  // rows 3/4, 1/4 against 1/2, 1/2
  const Comparison c = compare_allocation(p, q);
  CHECK(c.row_marginal_error == Approx(0.5));
  CHECK(c.column_marginal_error == Approx(0.5));
  CHECK(named_values(c).size() == 12);
}
