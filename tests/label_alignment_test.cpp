// Matching rows and columns across files by label (core/label_alignment.hpp).
#include "allocsim/core/label_alignment.hpp"

#include <catch2/catch.hpp>

#include "allocsim/core/error.hpp"

using namespace allocsim;
using Labels = std::vector<std::string>;

TEST_CASE("equal label sets in another order are matched by label and reordered") {
  const Labels reference{"a", "b", "c"}, other{"c", "a", "b"};
  const LabelAlignment a = align_labels({reference, 3, "P.csv"}, {other, 3, "G.csv"}, "row");
  CHECK(a.matching == LabelMatching::by_label);
  CHECK(a.reordered);
  CHECK(a.order == std::vector<Eigen::Index>{1, 2, 0});
  Matrix g(3, 1);
  g << 30, 10, 20;  // rows c, a, b
  CHECK(reorder_rows(g, a.order) == (Matrix(3, 1) << 10, 20, 30).finished());
}

TEST_CASE("label sets that differ are refused naming the labels found in one file only") {
  const Labels reference{"a", "b", "c"}, other{"a", "b", "d"};
  CHECK_THROWS_WITH(align_labels({reference, 3, "P.csv"}, {other, 3, "G.csv"}, "column"),
                    Catch::Contains("G.csv") && Catch::Contains("only in G.csv: 'd'") &&
                        Catch::Contains("only in P.csv: 'c'"));
}

TEST_CASE("one labelled file is matched by position when the counts agree") {
  const Labels reference{"a", "b"}, none;
  const LabelAlignment a = align_labels({reference, 2, "P.csv"}, {none, 2, "G.csv"}, "row");
  CHECK(a.matching == LabelMatching::by_position);
  CHECK(a.description == "matched by position (only P.csv has labels)");
  CHECK_THROWS_WITH(align_labels({reference, 2, "P.csv"}, {none, 3, "G.csv"}, "row"),
                    Catch::Contains("G.csv: holds 3 rows but P.csv has 2 rows"));
}

TEST_CASE("a label that occurs twice in one file is refused with both positions") {
  const Labels twice{"a", "b", "a"};
  CHECK_THROWS_WITH(require_unique_labels(twice, "P.csv", "row"),
                    Catch::Contains("'a' occurs twice (rows 1 and 3)"));
}

TEST_CASE("a labelled matrix is put in the reference's row and column order") {
  LabeledMatrix reference{Matrix::Zero(2, 3), {"x", "y"}, {"a", "b", "c"}};
  LabeledMatrix other{(Matrix(2, 3) << 1, 2, 3, 4, 5, 6).finished(), {"y", "x"}, {"c", "a", "b"}};
  const std::string said = align_matrix(reference, "P.csv", other, "G.csv");
  CHECK(other.values == (Matrix(2, 3) << 5, 6, 4, 2, 3, 1).finished());
  CHECK(other.row_labels == Labels{"x", "y"});
  CHECK(said == "G.csv: rows matched by label (reordered); columns matched by label (reordered)");
  LabeledMatrix unlabelled{Matrix::Zero(3, 3), {}, {}};
  CHECK_THROWS_WITH(align_matrix(reference, "P.csv", unlabelled, "A.csv"),
                    Catch::Contains("A.csv: is 3 x 3 but P.csv is 2 x 3"));
}
