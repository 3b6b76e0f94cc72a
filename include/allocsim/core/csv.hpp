// Matrices and vectors as CSV files: the one reader and writer every command uses.
//
// Reading a matrix (read_matrix_csv; vectors and access masks go through it):
//   * Values are separated by commas; '.' is the decimal point. Fields may
//     be quoted ("a, b"; "" inside quotes is a quote) and padded with blanks.
//     Blank lines and lines starting with '#' are skipped; CRLF line ends and
//     a UTF-8 byte-order mark are accepted.
//   * Numbers: decimal or scientific notation with an optional sign, as
//     std::from_chars reads them (no hexadecimal). Words spelling NaN or an
//     infinity, and numbers beyond a double's range, are refused ("only
//     finite numbers are allowed"); numbers below its range read as 0.
//   * Missing cells: empty, "" or NA. An InputError naming the cell, unless
//     CsvReadOptions::missing_as_zero; even then a column that is missing in
//     every row is refused (a trailing comma, most likely).
//   * Label row: the first row holds column labels when none of its cells
//     past the first is a number and at least one is text; or when its first
//     cell is empty and the others are 0, 1, 2, ... or 1, 2, 3, ... (what
//     pandas writes for unnamed columns). A first row that mixes numbers and
//     text is an InputError naming the odd cell (file:line, column). In a
//     one-column file the first row is labels when its cell is text.
//   * Label column: the first column holds row labels when there is a label
//     row whose first cell is empty or "" (what R's write.csv and pandas
//     write) or that is one field shorter than the data rows; otherwise when
//     none of its cells below the label row is a number and at least one is
//     text. A first column that mixes numbers and text is an InputError
//     naming the odd cell.
//   * Quotes: in a file that does not quote its numbers (judged on the
//     second record's cells past the first column), a quoted cell in the
//     first row or first column is text even when it spells a number, so
//     R's quoted numeric row names ("1","2",...) are labels. In a file that
//     quotes numbers too, quotes mean nothing and cells go by content.
//     In data cells a quoted number is a number.
//   * Words spelling NaN or infinity count as text in a row or column of
//     labels (a label may be "Nan"), and as numbers beside numbers (then
//     refused as not finite). NA in a label position is a label (Namibia).
//   * Labels are unique and non-empty within a row or column of labels; a
//     duplicate or empty label is an InputError naming it and where it is.
//   * Every data row has the first data row's number of fields ("ragged
//     rows" otherwise); a label row has that many, or one fewer.
//   * A file separated by semicolons or tabs is refused with a message that
//     names the separator (decimal commas would be misread); so is a file
//     holding a NUL byte (a binary file, /dev/zero), UTF-16 text, a
//     directory, a quote left open on its line.
//   * The file is read into one buffer. Regular files are refused up front
//     when the buffer and the values would not fit in memory
//     (core/memory_limit.hpp); pipes and devices are read up to 4 GB
//     (kCsvStreamLimitBytes) and the memory available.
// Every InputError starts with the file (and line where there is one) and
// names the column counted from 1, the label column included.
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

// The most bytes read from a pipe or device (a regular file: what fits in memory).
constexpr double kCsvStreamLimitBytes = 4e9;

// How missing cells are read (see above).
struct CsvReadOptions {
  bool missing_as_zero = false;  // empty, "" and NA cells read as 0 instead of an InputError
};

struct LabeledVector {
  Vector values;
  std::vector<std::string> labels;  // empty when the file has none
};

// Refuses up front (InputError naming the file, with the estimate) a file
// whose fields would not fit in the memory available (core/memory_limit.hpp).
LabeledMatrix read_matrix_csv(const std::string& path, const CsvReadOptions& options = {});

// The same, from CSV text held in memory; `name` stands for the file in
// messages. Used by the fuzzing targets.
LabeledMatrix parse_matrix_csv(const std::string& text, const std::string& name,
                               const CsvReadOptions& options = {});

// One value per line, or one row of values (with optional labels).
LabeledVector read_vector_csv(const std::string& path, const CsvReadOptions& options = {});

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
// complete or not at all. Labels are written when given (row labels under an
// empty corner cell). The labels of a row or column are all quoted when one
// of them would not read back as the same label otherwise (it spells a
// number or NA, is empty, starts with '#', has blanks at its ends or holds a
// comma, quote, semicolon or tab); a label holding a line end is an
// InputError. Numbers use the shortest text that reads back to the same
// double (std::to_chars).
void write_matrix_csv(const std::string& path, const Matrix& values,
                      const std::vector<std::string>& row_labels = {},
                      const std::vector<std::string>& column_labels = {});

// The same layout, written to a stream (e.g. stdout).
void write_matrix_csv(std::ostream& out, const Matrix& values,
                      const std::vector<std::string>& row_labels = {},
                      const std::vector<std::string>& column_labels = {});

// The fields of one CSV record (up to the first line end) as the reader
// splits them; a quote left open or text after a closing quote is an
// InputError. Exposed for tests.
std::vector<std::string> split_csv_record(const std::string& line);

// Formats a double so that it reads back to the same value.
std::string format_number(double value);

}  // namespace allocsim
