#include "allocsim/core/csv.hpp"

#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <optional>
#include <sstream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/memory_limit.hpp"

namespace allocsim {
namespace {

struct Record {
  long line;  // 1-based line number in the file
  std::vector<std::string> fields;
};

std::string trim(const std::string& s) {
  const auto first = s.find_first_not_of(" \t\r");
  if (first == std::string::npos) return "";
  const auto last = s.find_last_not_of(" \t\r");
  return s.substr(first, last - first + 1);
}

// A number as strtod reads it (including nan and inf), or nothing.
std::optional<double> parse_number(const std::string& field) {
  if (field.empty()) return std::nullopt;
  errno = 0;
  char* end = nullptr;
  const double value = std::strtod(field.c_str(), &end);
  if (end != field.c_str() + field.size()) return std::nullopt;
  return value;
}

// Refuses a file whose table would not fit in memory, before reading it:
// each field costs a std::string while the records are held, and a double in
// the matrix; fields are counted by one pass over the separators.
void require_memory_for_file(std::ifstream& in, const std::string& path) {
  std::error_code error;
  if (!std::filesystem::is_regular_file(path, error)) return;  // a pipe: read as it comes
  double fields = 1, bytes = 0;
  char chunk[1 << 16];
  while (in.read(chunk, sizeof chunk) || in.gcount() > 0) {
    const std::streamsize count = in.gcount();
    bytes += static_cast<double>(count);
    for (std::streamsize k = 0; k < count; ++k) fields += (chunk[k] == ',' || chunk[k] == '\n');
  }
  in.clear();
  in.seekg(0);
  require_memory(bytes + fields * static_cast<double>(sizeof(std::string) + sizeof(double)),
                 "reading " + format_number(fields) + " fields (" + format_bytes(bytes) + ")",
                 path, "split the file or use a machine with more memory");
}

std::vector<Record> read_records(std::istream& in, const std::string& path) {
  std::vector<Record> records;
  std::string line;
  long number = 0;
  while (std::getline(in, line)) {
    ++number;
    if (number == 1 && line.size() >= 3 && line.compare(0, 3, "\xEF\xBB\xBF") == 0) {
      line.erase(0, 3);  // UTF-8 byte-order mark written by spreadsheet programs
    }
    const std::string content = trim(line);
    if (content.empty() || content[0] == '#') continue;
    records.push_back({number, split_csv_record(line)});
  }
  if (records.empty()) throw InputError(path, "holds no data rows");
  return records;
}

bool any_non_numeric(const std::vector<std::string>& fields, std::size_t from) {
  for (std::size_t k = from; k < fields.size(); ++k) {
    if (!parse_number(fields[k])) return true;
  }
  return false;
}

std::string column_name(std::size_t column) { return "column " + std::to_string(column + 1); }

}  // namespace

std::vector<std::string> split_csv_record(const std::string& line) {
  std::vector<std::string> fields;
  std::string current;
  bool quoted = false;
  for (std::size_t k = 0; k < line.size(); ++k) {
    const char ch = line[k];
    if (quoted) {
      if (ch == '"' && k + 1 < line.size() && line[k + 1] == '"') {
        current += '"';
        ++k;
      } else if (ch == '"') {
        quoted = false;
      } else {
        current += ch;
      }
    } else if (ch == '"') {
      quoted = true;
    } else if (ch == ',') {
      fields.push_back(trim(current));
      current.clear();
    } else {
      current += ch;
    }
  }
  fields.push_back(trim(current));
  return fields;
}

static LabeledMatrix matrix_from_records(const std::vector<Record>& records, const std::string& path) {
  LabeledMatrix result;

  // Label row: any non-numeric cell in the first record.
  std::size_t first_data = 0;
  if (any_non_numeric(records[0].fields, 0)) first_data = 1;
  if (first_data >= records.size()) throw InputError(path, "holds a label row but no data rows");

  // Label column: any non-numeric first cell among the data rows.
  bool label_column = false;
  for (std::size_t r = first_data; r < records.size() && !label_column; ++r) {
    label_column = !parse_number(records[r].fields[0]);
  }
  const std::size_t skip = label_column ? 1 : 0;
  const std::size_t width = records[first_data].fields.size();
  if (width <= skip) throw InputError(location(path, records[first_data].line), "holds no numbers");
  const std::size_t rows = records.size() - first_data;
  const std::size_t cols = width - skip;

  if (first_data == 1) {
    const auto& header = records[0].fields;
    if (header.size() != width && header.size() != cols) {
      throw InputError(location(path, records[0].line),
                       "label row has " + std::to_string(header.size()) +
                           " fields but the data rows have " + std::to_string(width));
    }
    result.column_labels.assign(header.end() - static_cast<long>(cols), header.end());
  }

  result.values.resize(static_cast<Eigen::Index>(rows), static_cast<Eigen::Index>(cols));
  for (std::size_t r = 0; r < rows; ++r) {
    const Record& rec = records[first_data + r];
    if (rec.fields.size() != width) {
      throw InputError(location(path, rec.line),
                       "has " + std::to_string(rec.fields.size()) + " fields but the first data row has " +
                           std::to_string(width) + " (ragged rows)");
    }
    if (label_column) result.row_labels.push_back(rec.fields[0]);
    for (std::size_t c = 0; c < cols; ++c) {
      const std::string& field = rec.fields[c + skip];
      const auto value = parse_number(field);
      if (!value) {
        throw InputError(location(path, rec.line),
                         column_name(c + skip) + " holds '" + field + "', which is not a number");
      }
      if (!std::isfinite(*value)) {
        throw InputError(location(path, rec.line),
                         column_name(c + skip) + " holds '" + field + "'; only finite numbers are allowed");
      }
      result.values(static_cast<Eigen::Index>(r), static_cast<Eigen::Index>(c)) = *value;
    }
  }
  return result;
}

LabeledMatrix read_matrix_csv(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError(path, std::string("cannot be opened (") + std::strerror(errno) + ")");
  }
  require_memory_for_file(in, path);
  return matrix_from_records(read_records(in, path), path);
}

CsvTable read_csv_table(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError(path, std::string("cannot be opened (") + std::strerror(errno) + ")");
  }
  require_memory_for_file(in, path);
  std::vector<Record> records = read_records(in, path);
  CsvTable table;
  table.path = path;
  table.header = std::move(records.front().fields);
  for (std::size_t r = 1; r < records.size(); ++r) {
    if (records[r].fields.size() != table.header.size()) {
      throw InputError(location(path, records[r].line),
                       "has " + std::to_string(records[r].fields.size()) +
                           " fields but the header has " + std::to_string(table.header.size()));
    }
    table.rows.push_back(std::move(records[r].fields));
    table.lines.push_back(records[r].line);
  }
  return table;
}

bool CsvTable::has_column(const std::string& name) const {
  for (const auto& h : header)
    if (h == name) return true;
  return false;
}

std::size_t CsvTable::column(const std::string& name) const {
  for (std::size_t k = 0; k < header.size(); ++k)
    if (header[k] == name) return k;
  std::string names;
  for (const auto& h : header) names += (names.empty() ? "" : ", ") + h;
  throw InputError(path, "has no column '" + name + "' (its header: " + names + ")");
}

double CsvTable::number(std::size_t row, std::size_t column) const {
  const std::string& cell = rows[row][column];
  const auto value = parse_number(cell);
  if (!value || !std::isfinite(*value)) {
    throw InputError(location(path, lines[row]),
                     header[column] + " holds '" + cell + "', which is not a finite number");
  }
  return *value;
}

LabeledMatrix parse_matrix_csv(const std::string& text, const std::string& name) {
  std::istringstream in(text);
  return matrix_from_records(read_records(in, name), name);
}

LabeledVector read_vector_csv(const std::string& path) {
  LabeledMatrix m = read_matrix_csv(path);
  LabeledVector v;
  if (m.values.cols() == 1) {
    v.values = m.values.col(0);
    v.labels = std::move(m.row_labels);
  } else if (m.values.rows() == 1) {
    v.values = m.values.row(0).transpose();
    v.labels = std::move(m.column_labels);
  } else {
    throw InputError(path, "holds a " + std::to_string(m.values.rows()) + "x" +
                               std::to_string(m.values.cols()) +
                               " table; a vector is one value per line or one row of values");
  }
  return v;
}

AccessMask read_access_csv(const std::string& path) {
  const LabeledMatrix m = read_matrix_csv(path);
  AccessMask mask(m.values.rows(), m.values.cols());
  for (Eigen::Index i = 0; i < m.values.rows(); ++i) {
    for (Eigen::Index j = 0; j < m.values.cols(); ++j) {
      const double v = m.values(i, j);
      if (v != 0.0 && v != 1.0) {
        throw InputError(path, "row " + std::to_string(i + 1) + ", column " + std::to_string(j + 1) +
                                   " holds " + format_number(v) +
                                   "; an access matrix holds only 0 (never) and 1 (allowed)");
      }
      mask(i, j) = static_cast<std::uint8_t>(v);
    }
  }
  return mask;
}

std::string format_number(double value) {
  char buffer[32];
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, value);
  return std::string(buffer, result.ptr);
}

namespace {
std::string csv_field(const std::string& text) {
  if (text.find_first_of(",\"\n") == std::string::npos) return text;
  std::string out = "\"";
  for (const char ch : text) out += (ch == '"') ? std::string("\"\"") : std::string(1, ch);
  return out + "\"";
}
}  // namespace

void write_matrix_csv(std::ostream& out, const Matrix& values,
                      const std::vector<std::string>& row_labels,
                      const std::vector<std::string>& column_labels) {
  const bool with_rows = !row_labels.empty();
  if (!column_labels.empty()) {
    if (with_rows) out << ',';
    for (std::size_t j = 0; j < column_labels.size(); ++j) {
      out << (j ? "," : "") << csv_field(column_labels[j]);
    }
    out << '\n';
  }
  for (Eigen::Index i = 0; i < values.rows(); ++i) {
    if (with_rows) out << csv_field(row_labels[static_cast<std::size_t>(i)]) << ',';
    for (Eigen::Index j = 0; j < values.cols(); ++j) {
      out << (j ? "," : "") << format_number(values(i, j));
    }
    out << '\n';
  }
}

void write_matrix_csv(const std::string& path, const Matrix& values,
                      const std::vector<std::string>& row_labels,
                      const std::vector<std::string>& column_labels) {
  AtomicFile file(path);
  write_matrix_csv(file.stream(), values, row_labels, column_labels);
  file.commit();
}

}  // namespace allocsim
