// Matrices and vectors as CSV files.
//
// Numbers are separated by commas. A first row that holds any non-numeric
// cell is read as column labels; a first column that holds any non-numeric
// cell (below the label row) is read as row labels. Empty lines and lines
// starting with '#' are skipped. NaN, Inf, ragged rows and text in numeric
// cells are InputErrors that name the file, line and column.
#pragma once

#include <iosfwd>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"

namespace allocsim {

struct LabeledMatrix {
  Matrix values;
  std::vector<std::string> row_labels;     // empty when the file has none
  std::vector<std::string> column_labels;  // empty when the file has none
};

struct LabeledVector {
  Vector values;
  std::vector<std::string> labels;  // empty when the file has none
};

// Refuses up front (InputError naming the file, with the estimate) a file
// whose fields would not fit in the memory available (core/memory_limit.hpp).
LabeledMatrix read_matrix_csv(const std::string& path);

// The same, from CSV text held in memory; `name` stands for the file in
// messages. Used by the fuzzing targets.
LabeledMatrix parse_matrix_csv(const std::string& text, const std::string& name);

// One value per line, or one row of values (with optional labels).
LabeledVector read_vector_csv(const std::string& path);

// 0/1 matrix; any other value is an InputError.
AccessMask read_access_csv(const std::string& path);

// A table with a header row and cells kept as text (e.g. a benchmark's
// truth or an estimator's answers). Rows must have the header's width.
struct CsvTable {
  std::string path;
  std::vector<std::string> header;
  std::vector<std::vector<std::string>> rows;
  std::vector<long> lines;  // file line of each row, for messages

  // Index of a column; InputError naming the file and the columns it has when absent.
  std::size_t column(const std::string& name) const;
  bool has_column(const std::string& name) const;
  // The cell as a finite number; InputError naming file, line and column otherwise.
  double number(std::size_t row, std::size_t column) const;
};
CsvTable read_csv_table(const std::string& path);

// Writes atomically (temporary file, then rename): the file either appears
// complete or not at all. Labels are written when given. Numbers use the
// shortest representation that reads back exactly.
void write_matrix_csv(const std::string& path, const Matrix& values,
                      const std::vector<std::string>& row_labels = {},
                      const std::vector<std::string>& column_labels = {});

// The same layout, written to a stream (e.g. stdout).
void write_matrix_csv(std::ostream& out, const Matrix& values,
                      const std::vector<std::string>& row_labels = {},
                      const std::vector<std::string>& column_labels = {});

// Parses one CSV record (double quotes allowed around a field); exposed for tests.
std::vector<std::string> split_csv_record(const std::string& line);

// Formats a double so that it reads back to the same value.
std::string format_number(double value);

}  // namespace allocsim
