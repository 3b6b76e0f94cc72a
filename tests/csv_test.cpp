#include "allocsim/core/csv.hpp"

#include <catch2/catch.hpp>
#include <cstdio>
#include <fstream>

#include "allocsim/core/error.hpp"
#include "test_files.hpp"

using namespace allocsim;

namespace {

std::string write_temp(const std::string& name, const std::string& text) {
  return testing::write_test_file("csv_test_" + name + ".csv", text);
}

}  // namespace

TEST_CASE("a plain numeric matrix reads without labels") {
  const auto m = read_matrix_csv(write_temp("plain", "1,2,3\n4,5,6\n"));
  REQUIRE(m.values.rows() == 2);
  REQUIRE(m.values.cols() == 3);
  CHECK(m.values(1, 2) == 6);
  CHECK(m.row_labels.empty());
  CHECK(m.column_labels.empty());
}

TEST_CASE("a label row and a label column are recognised") {
  const auto m = read_matrix_csv(write_temp("labels", ",p1,p2\na1,1,2\na2,3,4\n"));
  REQUIRE(m.values.rows() == 2);
  REQUIRE(m.values.cols() == 2);
  CHECK(m.row_labels == std::vector<std::string>{"a1", "a2"});
  CHECK(m.column_labels == std::vector<std::string>{"p1", "p2"});
  CHECK(m.values(1, 0) == 3);
}

TEST_CASE("quoted labels may hold commas") {
  const auto m = read_matrix_csv(write_temp("quoted", "name,x\n\"Smith, J\",1\n"));
  CHECK(m.row_labels == std::vector<std::string>{"Smith, J"});
}

TEST_CASE("ragged rows, text and NaN name the line") {
  CHECK_THROWS_WITH(read_matrix_csv(write_temp("ragged", "1,2\n3\n")),
                    Catch::Contains("csv_test_ragged.csv:2") && Catch::Contains("ragged"));
  CHECK_THROWS_WITH(read_matrix_csv(write_temp("text", "1,2\n3,x\n")),
                    Catch::Contains(":2") && Catch::Contains("'x'"));
  CHECK_THROWS_WITH(read_matrix_csv(write_temp("nan", "1,2\n3,nan\n")),
                    Catch::Contains(":2") && Catch::Contains("finite"));
  CHECK_THROWS_WITH(read_matrix_csv(write_temp("inf", "1,inf\n")), Catch::Contains("finite"));
  CHECK_THROWS_AS(read_matrix_csv(write_temp("empty", "")), InputError);
  CHECK_THROWS_AS(read_matrix_csv("no/such/file.csv"), InputError);
}

TEST_CASE("a vector reads as a column or a row") {
  CHECK(read_vector_csv(write_temp("column", "budget\n1\n2\n3\n")).values.size() == 3);
  CHECK(read_vector_csv(write_temp("row", "1,2,3,4\n")).values.size() == 4);
  CHECK_THROWS_AS(read_vector_csv(write_temp("table", "1,2\n3,4\n")), InputError);
}

TEST_CASE("an access matrix holds only zeros and ones") {
  CHECK(read_access_csv(write_temp("access", "1,0\n0,1\n"))(0, 1) == 0);
  CHECK_THROWS_WITH(read_access_csv(write_temp("access_bad", "1,0.5\n")), Catch::Contains("0.5"));
}

TEST_CASE("written matrices read back exactly, with labels") {
  Matrix values(2, 2);
  values << 0.1, 1.0 / 3.0, -2e-300, 12345678.9;
  write_matrix_csv("csv_test_roundtrip.csv", values, {"a", "b,c"}, {"x", "y"});
  const auto m = read_matrix_csv("csv_test_roundtrip.csv");
  CHECK(m.values == values);
  CHECK(m.row_labels == std::vector<std::string>{"a", "b,c"});
}

TEST_CASE("a write into a missing folder fails and leaves nothing") {
  CHECK_THROWS_AS(write_matrix_csv("no-such-dir/out.csv", Matrix::Zero(1, 1)), InputError);
}
