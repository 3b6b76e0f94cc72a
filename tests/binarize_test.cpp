#include "allocsim/analysis/binarize.hpp"

#include <catch2/catch.hpp>

#include "allocsim/core/error.hpp"

using namespace allocsim;

namespace {
// P = [[6, 2, 0],
//      [1, 1, 0],
//      [0, 0, 2]]; rows 8, 2, 2; columns 7, 3, 2; total 12.
Matrix example() {
  Matrix p(3, 3);
  p << 6, 2, 0, 1, 1, 0, 0, 0, 2;
  return p;
}
}  // namespace

TEST_CASE("positive links every cell above zero") {
  const BinaryMatrix b = binarize(example());
  BinaryMatrix expected(3, 3);
  expected << 1, 1, 0, 1, 1, 0, 0, 0, 1;
  CHECK(b == expected);
  CHECK(row_degrees(b) == Eigen::Vector3i(2, 2, 1));
  CHECK(column_degrees(b) == Eigen::Vector3i(2, 2, 1));
}

TEST_CASE("row-share links cells holding at least a share of their row") {
  // Shares: row 1 = 0.75, 0.25, 0; row 2 = 0.5, 0.5, 0; row 3 = 0, 0, 1.
  const BinaryMatrix b = binarize(example(), {BinarizeRule::row_share, 0.5});
  BinaryMatrix expected(3, 3);
  expected << 1, 0, 0, 1, 1, 0, 0, 0, 1;
  CHECK(b == expected);
}

TEST_CASE("min-count links cells of at least k units") {
  const BinaryMatrix b = binarize(example(), {BinarizeRule::min_count, 2.0});
  BinaryMatrix expected(3, 3);
  expected << 1, 1, 0, 0, 0, 0, 0, 0, 1;
  CHECK(b == expected);
}

TEST_CASE("revealed advantage compares a cell with the product of its shares") {
  // RCA_ij = P_ij * 12 / (row_i * col_j), common practice (Balassa 1965):
  // (1,1) 6*12/(8*7) = 1.29; (1,2) 2*12/(8*3) = 1.00; (2,1) 12/14 = 0.86;
  // (2,2) 12/6 = 2; (3,3) 2*12/(2*2) = 6.
  const BinaryMatrix b = binarize(example(), {BinarizeRule::revealed_advantage, std::nullopt});
  BinaryMatrix expected(3, 3);
  expected << 1, 1, 0, 0, 1, 0, 0, 0, 1;
  CHECK(b == expected);
}

TEST_CASE("rule words read back and bad input names its place") {
  for (BinarizeRule rule : {BinarizeRule::positive, BinarizeRule::row_share,
                            BinarizeRule::min_count, BinarizeRule::revealed_advantage})
    CHECK(binarize_rule_from_string(to_string(rule)) == rule);
  CHECK_THROWS_WITH(binarize_rule_from_string("rca"), Catch::Contains("revealed-advantage"));
  CHECK_THROWS_AS(binarize(example(), {BinarizeRule::row_share, 1.5}), InputError);
  Matrix negative = example();
  negative(2, 1) = -1;
  CHECK_THROWS_WITH(binarize(negative), Catch::Contains("row 3, column 2"));
}

TEST_CASE("the description states the rule and its threshold") {
  CHECK(describe({}) == "link when cell > 0 (positive)");
  CHECK(describe({BinarizeRule::revealed_advantage, 1.0}) ==
        "link when P_ij*sum(P)/(row_i*col_j) >= 1 (revealed-advantage)");
  CHECK(describe({BinarizeRule::row_share, std::nullopt}) ==
        "link when cell / row total >= 0.05 (row-share)");
}
