#include "allocsim/core/csv.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <random>

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

// ---- Labels only where no number is (DESIGN.md section 8, "CSV") ----

namespace {
std::string error_of(const std::string& path, const CsvReadOptions& options = {}) {
  try {
    read_matrix_csv(path, options);
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}
using Labels = std::vector<std::string>;
}  // namespace

TEST_CASE("a table written by R's write.csv reads as the intended labelled table") {
  // write.csv(m) of a 2x2 matrix with row names 1, 2 (the defaults) and
  // column names a, b: an empty quoted corner, quoted names, bare numbers
  // (R documentation of write.table, common practice).
  const auto m = read_matrix_csv(write_temp("r_style", "\"\",\"a\",\"b\"\n\"1\",3,4\n\"2\",5,6\n"));
  REQUIRE(m.values.rows() == 2);
  REQUIRE(m.values.cols() == 2);
  CHECK(m.row_labels == Labels{"1", "2"});
  CHECK(m.column_labels == Labels{"a", "b"});
  CHECK(m.values(1, 1) == 6);
  // Numeric column names (years) are quoted by R and stay labels.
  const auto years =
      read_matrix_csv(write_temp("r_years", "\"\",\"1990\",\"1991\"\n\"AGO\",1.5,2\n\"NA\",0,7\n"));
  CHECK(years.column_labels == Labels{"1990", "1991"});
  CHECK(years.row_labels == Labels{"AGO", "NA"});  // NA is Namibia here, a label
}

TEST_CASE("a table written by pandas (unnamed index, numbered columns) reads as labelled") {
  // DataFrame(P).to_csv(): an empty corner, columns 0, 1, ..., rows 0, 1, ...
  const auto m = read_matrix_csv(write_temp("pandas", ",0,1,2\n0,0.5,1,2\n1,3,4,5\n"));
  REQUIRE(m.values.rows() == 2);
  REQUIRE(m.values.cols() == 3);
  CHECK(m.column_labels == Labels{"0", "1", "2"});
  CHECK(m.row_labels == Labels{"0", "1"});
  CHECK(m.values(0, 0) == 0.5);
  const auto series = read_vector_csv(write_temp("pandas_series", ",0\n0,0.25\n1,0.75\n"));
  CHECK(series.values.size() == 2);
  CHECK(series.labels == Labels{"0", "1"});
}

TEST_CASE("an empty first cell before numbers: labels above a label column, refused otherwise") {
  // DataFrame(P, index=names, columns=years).to_csv(): the years are bare numbers.
  const auto m = read_matrix_csv(write_temp("pandas_years", ",2019,2020\nx,1,2\ny,3,4\n"));
  CHECK(m.column_labels == Labels{"2019", "2020"});
  CHECK(m.row_labels == Labels{"x", "y"});
  // With numbers below, a missing value and numeric labels cannot be told apart: refused,
  // even when missing cells read as 0.
  CsvReadOptions zero;
  zero.missing_as_zero = true;
  for (const auto& options : {CsvReadOptions{}, zero}) {
    CHECK_THAT(
        error_of(write_temp("empty_corner_numbers", ",2019,2020\n1,5,6\n"), options),
        Catch::StartsWith("csv_test_empty_corner_numbers.csv:1: column 1 is empty while the rest"));
  }
}

TEST_CASE("a header one field shorter than the rows labels the first column") {
  const auto m = read_matrix_csv(write_temp("short_header", "a,b\nx,1,2\ny,3,4\n"));
  CHECK(m.column_labels == Labels{"a", "b"});
  CHECK(m.row_labels == Labels{"x", "y"});
}

TEST_CASE("a typo in the first row is an error naming the cell, not a label row") {
  const std::string message = error_of(write_temp("typo_row", "1,2,3x\n4,5,6\n"));
  INFO(message);
  CHECK(message.rfind("csv_test_typo_row.csv:1: column 3 holds '3x'", 0) == 0);
  CHECK_THAT(message, Catch::Contains("first row"));
  // A number among labels is named too.
  CHECK_THAT(error_of(write_temp("number_in_labels", "x,a,b,2\n1,2,3,4\n")),
             Catch::StartsWith("csv_test_number_in_labels.csv:1: column 4 holds '2', a number"));
}

TEST_CASE("a typo in the first column is an error naming the cell, not a label column") {
  const std::string message = error_of(write_temp("typo_column", "1,2\n1O,3\n5,6\n"));
  INFO(message);
  CHECK(message.rfind("csv_test_typo_column.csv:2: column 1 holds '1O', which is not a number",
                      0) == 0);
  // With a label row whose corner is named, the same.
  CHECK_THAT(error_of(write_temp("typo_column_header", "id,a\n1,2\n1O,3\n5,6\n")),
             Catch::StartsWith("csv_test_typo_column_header.csv:3: column 1 holds '1O'"));
  // A bare number among row labels is named (quoting it makes it a label).
  CHECK_THAT(
      error_of(write_temp("number_in_row_labels", "x,1\ny,2\n3,4\nz,5\n")),
      Catch::StartsWith("csv_test_number_in_row_labels.csv:3: column 1 holds '3', a number"));
  const auto quoted =
      read_matrix_csv(write_temp("quoted_row_label", "\"x\",1\n\"y\",2\n\"3\",4\n"));
  CHECK(quoted.row_labels == Labels{"x", "y", "3"});
  // Quotes make labels only when every label is quoted (as R writes them).
  CHECK_THAT(error_of(write_temp("some_quoted", "x,1\ny,2\n\"3\",4\n")),
             Catch::StartsWith("csv_test_some_quoted.csv:3: column 1 holds '3', a number"));
}

TEST_CASE("quotes carry no meaning in a file that quotes its numbers") {
  const auto all = read_matrix_csv(write_temp("quote_all", "\"1\",\"2\"\n\"3\",\"4\"\n"));
  CHECK(all.values.rows() == 2);
  CHECK(all.row_labels.empty());
  CHECK(all.column_labels.empty());
  const auto header = read_matrix_csv(write_temp("quote_all_header", "\"a\",\"b\"\n\"1\",\"2\"\n"));
  CHECK(header.column_labels == Labels{"a", "b"});
  CHECK(header.values(0, 0) == 1);
  CHECK(read_matrix_csv(write_temp("quoted_cell", "1,\"2\"\n3,4\n")).values(0, 1) == 2);
}

TEST_CASE("words spelling NaN are labels among labels and refused among numbers") {
  const auto m = read_matrix_csv(write_temp("nan_label", "Nan,1\nInf,2\nBo,3\n"));
  CHECK(m.row_labels == Labels{"Nan", "Inf", "Bo"});
  CHECK_THAT(error_of(write_temp("nan_first_column", "1,2\nnan,4\n")),
             Catch::StartsWith("csv_test_nan_first_column.csv:2: column 1 holds 'nan'") &&
                 Catch::Contains("finite"));
  CHECK_THAT(error_of(write_temp("overflow", "1,1e400\n")), Catch::Contains("finite"));
  CHECK(read_matrix_csv(write_temp("underflow", "1,1e-400\n")).values(0, 1) == 0);
  CHECK(read_matrix_csv(write_temp("plus", "+1,-2\n")).values(0, 0) == 1);
  CHECK_THAT(error_of(write_temp("hex", "1,2\n3,0x10\n")),
             Catch::Contains("'0x10', which is not a number"));
}

TEST_CASE("empty and NA cells are errors naming the cell unless read as 0") {
  CHECK_THAT(error_of(write_temp("na", "1,2,3\n4,NA,6\n")),
             Catch::StartsWith("csv_test_na.csv:2: column 2 holds NA") &&
                 Catch::Contains("missing = zero"));
  CHECK_THAT(error_of(write_temp("empty_cell", "1,2,3\n4,,6\n")),
             Catch::StartsWith("csv_test_empty_cell.csv:2: column 2 is empty"));
  CHECK_THAT(error_of(write_temp("na_first", "a,b\nNA,1\n2,3\n")),
             Catch::StartsWith("csv_test_na_first.csv:2: column 1 holds NA"));
  CsvReadOptions zero;
  zero.missing_as_zero = true;
  const auto m = read_matrix_csv(write_temp("na_zero", "1,2,3\n4,NA,6\n,\"\",9\n"), zero);
  Matrix expected(3, 3);
  expected << 1, 2, 3, 4, 0, 6, 0, 0, 9;
  CHECK(m.values == expected);
  // A column missing in every row (trailing commas) is refused even then.
  CHECK_THAT(error_of(write_temp("trailing_comma", "1,2,\n3,4,\n"), zero),
             Catch::StartsWith("csv_test_trailing_comma.csv: column 3 is empty in every row"));
}

TEST_CASE("a file separated by semicolons or tabs is refused, naming the separator") {
  CHECK_THAT(error_of(write_temp("semicolons", "1;2;3\n4;5;6\n")),
             Catch::StartsWith("csv_test_semicolons.csv:1") && Catch::Contains("semicolons (';')"));
  CHECK_THAT(
      error_of(write_temp("semicolons_labels", "name;a;b\nx;1;2\n")),
      Catch::StartsWith("csv_test_semicolons_labels.csv:1") && Catch::Contains("semicolons"));
  CHECK_THAT(error_of(write_temp("decimal_commas", "1,5;2,5\n3,5;4,5\n")),
             Catch::StartsWith("csv_test_decimal_commas.csv:1: column 2 holds '5;2'") &&
                 Catch::Contains("semicolons"));
  CHECK_THAT(error_of(write_temp("tabs", "1\t2\t3\n4\t5\t6\n")),
             Catch::StartsWith("csv_test_tabs.csv:1") && Catch::Contains("separated by tabs"));
  CHECK(read_matrix_csv(write_temp("blanks", "1,\t2 \r\n 3 ,4\n")).values(1, 0) ==
        3);  // padding only
}

TEST_CASE("labels duplicated within a file are errors naming the label") {
  CHECK_THAT(
      error_of(write_temp("dup_rows", ",a,b\nx,1,2\ny,3,4\nx,5,6\n")),
      Catch::StartsWith("csv_test_dup_rows.csv:4: row label 'x' appears again (first on line 2)"));
  CHECK_THAT(
      error_of(write_temp("dup_columns", ",a,b,a\nx,1,2,3\n")),
      Catch::StartsWith(
          "csv_test_dup_columns.csv:1: column label 'a' appears twice (column 2 and column 4)"));
  CHECK_THAT(error_of(write_temp("empty_label", ",a,,b\nx,1,2,3\n")),
             Catch::StartsWith("csv_test_empty_label.csv:1: column 3 of the label row is empty"));
}

TEST_CASE("a directory, a NUL byte (/dev/zero) and UTF-16 text are refused with a clear message") {
  std::filesystem::create_directories("csv_test_folder.csv");
  CHECK(error_of("csv_test_folder.csv") ==
        "csv_test_folder.csv: is a directory; give the path of a CSV file");
  // /dev/zero never ends: it is refused at its first byte, not read to the memory limit.
  if (std::filesystem::exists("/dev/zero")) {
    CHECK_THAT(error_of("/dev/zero"), Catch::StartsWith("/dev/zero:1: holds a NUL byte"));
  }
  CHECK_THAT(error_of(write_temp("binary", std::string("1,2\n3,\0\n", 8))),
             Catch::StartsWith("csv_test_binary.csv:2: holds a NUL byte"));
  CHECK_THAT(error_of(write_temp("utf16", std::string("\xFF\xFE"
                                                      "1\0,\0"
                                                      "2\0",
                                                      8))),
             Catch::Contains("UTF-16"));
  CHECK_THAT(error_of(write_temp("inner_bom",
                                 "1,2\n\xEF\xBB\xBF"
                                 "3,4\n")),
             Catch::StartsWith("csv_test_inner_bom.csv:2: holds a byte-order mark"));
  CHECK(read_matrix_csv(write_temp("bom",
                                   "\xEF\xBB\xBF"
                                   "a,b\n1,2\n"))
            .column_labels == Labels{"a", "b"});
}

TEST_CASE("a quote left open or text after a closing quote is an error naming the cell") {
  CHECK_THAT(error_of(write_temp("open_quote", "a,b\n\"x,1\n")),
             Catch::StartsWith("csv_test_open_quote.csv:2: column 1 opens a quote"));
  CHECK_THAT(
      error_of(write_temp("after_quote", "a,b\n\"x\"y,1\n")),
      Catch::StartsWith("csv_test_after_quote.csv:2: column 1 has text after its closing quote"));
  CHECK(split_csv_record("a,\"b,\"\"c\"\"\", d") == Labels{"a", "b,\"c\"", "d"});
  CHECK_THROWS_AS(split_csv_record("a,\"b"), InputError);
}

TEST_CASE("a row with too many fields is ragged") {
  CHECK_THAT(
      error_of(write_temp("too_many", "1,2\n3,4,5\n")),
      Catch::StartsWith("csv_test_too_many.csv:2: has 3 fields but the first data row has 2"));
}

TEST_CASE("labels that spell numbers, NA or hold commas are quoted on writing and read back") {
  Matrix values(2, 2);
  values << 1, 2, 3, 4;
  const Labels rows{"1", "NA"}, columns{"1990", "#x"};
  write_matrix_csv("csv_test_numeric_labels.csv", values, rows, columns);
  const auto m = read_matrix_csv("csv_test_numeric_labels.csv");
  CHECK(m.row_labels == rows);
  CHECK(m.column_labels == columns);
  CHECK(m.values == values);
  write_matrix_csv("csv_test_row_labels_only.csv", values, {"7", "8"});
  CHECK(read_matrix_csv("csv_test_row_labels_only.csv").row_labels == Labels{"7", "8"});
}

TEST_CASE("random doubles of every magnitude survive a write and read back bit for bit") {
  const std::uint64_t seed = 20261202;
  INFO("seed " << seed);
  std::mt19937_64 bits(seed);
  Matrix values(60, 50);
  for (Eigen::Index k = 0; k < values.size(); ++k) {
    double v;
    do {
      const std::uint64_t word = bits();
      std::memcpy(&v, &word, sizeof v);  // every exponent, subnormals and signed zeros included
    } while (!std::isfinite(v));
    values.data()[k] = v;
  }
  write_matrix_csv("csv_test_random.csv", values);
  const auto m = read_matrix_csv("csv_test_random.csv");
  REQUIRE(m.values.rows() == values.rows());
  REQUIRE(m.values.cols() == values.cols());
  CHECK(std::memcmp(m.values.data(), values.data(), sizeof(double) * values.size()) == 0);
}

TEST_CASE("a table's semicolon header is refused naming the separator") {
  CHECK_THROWS_WITH(read_csv_table(write_temp("table_semicolons", "case;epsilon\nc1;0.5\n")),
                    Catch::Contains("semicolons"));
  const CsvTable t = read_csv_table(write_temp("table", "case,epsilon\nc1,0.5\n"));
  CHECK(t.number(0, t.column("epsilon")) == 0.5);
}
