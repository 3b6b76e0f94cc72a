#include "allocsim/core/csv.hpp"

#include <charconv>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <stdexcept>
#include <string_view>
#include <unordered_map>

#include "allocsim/core/error.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "csv_text.hpp"

namespace allocsim {
namespace {

using csv_text::Field;
using csv_text::FieldProblem;

// What a cell holds, for the label rules and the checks.
enum class Kind {
  finite,     // a finite number
  nonfinite,  // spells NaN or an infinity (or overflows a double)
  missing,    // empty, or "" quoted
  na,         // NA: missing in a data cell, a label (e.g. Namibia) in a label position
  text,       // anything else
};

using csv_text::parse_number;

// The cell's kind; `text_when_quoted`: a quoted cell is text even when it
// spells a number (label positions of a file that does not quote numbers).
Kind kind_of(const Field& field, bool text_when_quoted, double& value) {
  if (field.text.empty()) return Kind::missing;
  if (field.quoted && text_when_quoted) return Kind::text;
  if (field.text == "NA") return Kind::na;
  if (!parse_number(field.text, value)) return Kind::text;
  return std::isfinite(value) ? Kind::finite : Kind::nonfinite;
}

std::string column_name(std::size_t column) { return "column " + std::to_string(column + 1); }

// What a bad cell looks like in a message: its text, quoted and shortened.
std::string shown(const Field& field) {
  constexpr std::size_t kShown = 40;
  const std::string text = field.value();
  return "'" + (text.size() > kShown ? text.substr(0, kShown) + "..." : text) + "'";
}

class MatrixReader {
 public:
  MatrixReader(const std::string& text, const std::string& name, const CsvReadOptions& options,
               double fields)
      : name_(name), options_(options), p_(text.data()), end_(text.data() + text.size()) {
    values_.resize(static_cast<std::size_t>(fields));
  }

  LabeledMatrix read();

 private:
  struct FirstCell {  // the first cell of a data row: a label or a number
    Field field;
    long line;
    Kind kind;
    double value;
  };

  std::string where(long line) const { return location(name_, line); }
  [[noreturn]] void refuse_problem(FieldProblem problem, long line, std::size_t column) const;
  [[noreturn]] void refuse_text(const Field& field, long line, std::size_t column,
                                const std::string& why) const;
  [[noreturn]] void refuse_nonfinite(const Field& field, long line, std::size_t column) const;
  [[noreturn]] void refuse_missing(Kind kind, long line, std::size_t column) const;

  std::vector<Field> split_record(const char*& p, long line) const;
  void decide_quoting(const char* second, long line);
  enum class FirstRow { data, labels, numeric_labels };
  FirstRow first_row_kind(const std::vector<Field>& header, long line) const;
  [[noreturn]] void refuse_numeric_first_row() const;
  void read_data_rows();
  const char* read_data_row(const char* p, long line, std::size_t row);
  void store_slow(const Field& field, long line, std::size_t column, double& slot);
  bool first_column_holds_labels() const;
  void check_first_column_as_data();
  LabeledMatrix assemble();
  void take_column_labels(LabeledMatrix& result) const;

  const std::string& name_;
  const CsvReadOptions& options_;
  const char* p_;
  const char* end_;
  long line_ = 1;

  bool quotes_numbers_ = false;  // the file quotes its numbers: quotes carry no meaning
  bool label_row_ = false;
  bool numeric_label_row_ = false;  // empty corner and numbers: labels only above a label column
  std::vector<Field> header_;
  long header_line_ = 0;

  std::size_t width_ = 0;  // fields per data row, the first column included
  std::size_t rows_ = 0;
  std::vector<double> values_;  // row-major, width_ per row; the first column filled last
  std::vector<FirstCell> first_cells_;
  std::vector<long> missing_per_column_;
};

void MatrixReader::refuse_problem(FieldProblem problem, long line, std::size_t column) const {
  throw InputError(where(line),
                   column_name(column) + (problem == FieldProblem::unclosed_quote
                                              ? " opens a quote that is not closed on its line"
                                              : " has text after its closing quote"));
}

void MatrixReader::refuse_text(const Field& field, long line, std::size_t column,
                               const std::string& why) const {
  if (!field.quoted) {
    for (const char separator : {';', '\t'}) {
      if (field.text.find(separator) == std::string_view::npos) continue;
      throw InputError(where(line),
                       column_name(column) + " holds " + shown(field) +
                           ": the file seems separated by " +
                           (separator == ';' ? "semicolons (';')" : "tabs") +
                           "; allocsim reads values separated by commas, with '.' as the decimal "
                           "point (save or export the file as comma-separated CSV)");
    }
  }
  throw InputError(where(line), column_name(column) + " holds " + shown(field) + why);
}

void MatrixReader::refuse_nonfinite(const Field& field, long line, std::size_t column) const {
  throw InputError(where(line), column_name(column) + " holds " + shown(field) +
                                    "; only finite numbers are allowed");
}

void MatrixReader::refuse_missing(Kind kind, long line, std::size_t column) const {
  throw InputError(where(line),
                   column_name(column) + (kind == Kind::na ? " holds NA" : " is empty") +
                       "; missing values are refused unless read as 0 (missing = zero)");
}

std::vector<Field> MatrixReader::split_record(const char*& p, long line) const {
  std::vector<Field> fields;
  bool last = false;
  while (!last) {
    Field field;
    FieldProblem problem;
    p = csv_text::scan_field(p, field, last, problem);
    if (problem != FieldProblem::none) refuse_problem(problem, line, fields.size());
    fields.push_back(field);
  }
  return fields;
}

// The second record tells whether the file quotes its numbers (some
// programs quote every field); when it does not, a quoted cell in the
// first row or column is a label even when it spells a number (R's
// write.csv quotes its row and column names and nothing else).
void MatrixReader::decide_quoting(const char* second, long line) {
  if (!csv_text::skip_to_record(second, end_, line)) return;
  const std::vector<Field> fields = split_record(second, line);
  for (std::size_t k = fields.size() > 1 ? 1 : 0; k < fields.size(); ++k) {
    double value;
    if (fields[k].quoted && kind_of(fields[k], false, value) == Kind::finite)
      quotes_numbers_ = true;
  }
}

// Column labels 0, 1, 2, ... (or from 1) after an empty first cell: what
// pandas writes for a table whose columns were never named.
bool numbered_columns(const std::vector<Field>& header) {
  double first = 0;
  for (std::size_t k = 1; k < header.size(); ++k) {
    double value;
    if (header[k].quoted || !parse_number(header[k].text, value)) return false;
    if (k == 1) first = value;
    if ((first != 0 && first != 1) || value != first + static_cast<double>(k - 1)) return false;
  }
  return true;
}

// Whether every non-empty field is quoted (as R quotes its row and column names).
template <class Fields, class Get>
bool all_quoted(const Fields& fields, Get get) {
  for (const auto& f : fields) {
    if (!get(f).text.empty() && !get(f).quoted) return false;
  }
  return true;
}

// The first row: labels, data, or (an empty first cell before numbers)
// labels only when the first column turns out to hold labels.
MatrixReader::FirstRow MatrixReader::first_row_kind(const std::vector<Field>& header,
                                                    long line) const {
  const bool text_when_quoted =
      !quotes_numbers_ && all_quoted(header, [](const Field& f) -> const Field& { return f; });
  double value;
  if (header.size() == 1) {
    const Kind kind = kind_of(header[0], text_when_quoted, value);
    const bool separated =
        !header[0].quoted && header[0].text.find_first_of(";\t") != std::string_view::npos;
    if (kind == Kind::text && separated) refuse_text(header[0], line, 0, "");
    return kind == Kind::text ? FirstRow::labels : FirstRow::data;
  }
  std::size_t numbers = 0, texts = 0, first_number = 0, first_text = 0;
  for (std::size_t k = 1; k < header.size(); ++k) {
    const Kind kind = kind_of(header[k], text_when_quoted, value);
    if (kind == Kind::finite && numbers++ == 0) first_number = k;
    if (kind == Kind::text && texts++ == 0) first_text = k;
  }
  if (numbers == 0) return texts > 0 ? FirstRow::labels : FirstRow::data;
  if (texts == 0) {
    if (kind_of(header[0], text_when_quoted, value) != Kind::missing ||
        numbers + 1 != header.size())
      return FirstRow::data;
    return numbered_columns(header) ? FirstRow::labels : FirstRow::numeric_labels;
  }
  if (numbers >= texts) {
    refuse_text(header[first_text], line, first_text,
                ", which is not a number, while other cells of the first row are numbers: a row of "
                "labels holds no numbers and a row of data no text");
  }
  throw InputError(where(line),
                   column_name(first_number) + " holds " + shown(header[first_number]) +
                       ", a number, while the other cells of the first row are labels: a row of "
                       "labels holds no numbers (quote a label that spells a number)");
}

void MatrixReader::refuse_numeric_first_row() const {
  throw InputError(where(header_line_),
                   "column 1 is empty while the rest of the first row are numbers, and the first "
                   "column below holds no labels: a missing value, or column labels that spell "
                   "numbers? Fill the cell, or quote the labels (\"2019\")");
}

void MatrixReader::store_slow(const Field& field, long line, std::size_t column, double& slot) {
  double value = 0;
  const Kind kind = kind_of(field, false, value);
  switch (kind) {
    case Kind::finite:
      slot = value;
      return;
    case Kind::nonfinite:
      refuse_nonfinite(field, line, column);
    case Kind::text:
      refuse_text(field, line, column, ", which is not a number");
    case Kind::missing:
    case Kind::na:
      if (!options_.missing_as_zero) refuse_missing(kind, line, column);
      if (missing_per_column_.size() <= column) missing_per_column_.resize(column + 1, 0);
      ++missing_per_column_[column];
      slot = 0;
      return;
  }
}

// One data row: the first cell kept aside (label or number, decided once
// every row is read), the others parsed in place. Returns the next line.
const char* MatrixReader::read_data_row(const char* p, long line, std::size_t row) {
  Field field;
  bool last = false;
  FieldProblem problem;
  p = csv_text::scan_field(p, field, last, problem);
  if (problem != FieldProblem::none) refuse_problem(problem, line, 0);
  FirstCell first{field, line, Kind::missing, 0.0};
  first.kind = kind_of(field, false, first.value);  // by content; quotes weighed once all are read
  first_cells_.push_back(first);

  const std::size_t width = width_ ? width_ : values_.size();  // unknown on the first row
  double* const out = values_.data() + row * width_;
  std::size_t column = 1;
  while (!last) {
    if (column == width) {  // more fields than the first data row: count them for the message
      std::size_t count = column;
      for (; !last; ++count) p = csv_text::scan_field(p, field, last, problem);
      throw InputError(where(line), "has " + std::to_string(count) +
                                        " fields but the first data row has " +
                                        std::to_string(width_) + " (ragged rows)");
    }
    const char* q = p;
    while (*q == ' ' || *q == '\t') ++q;
    double value;
    const auto parsed = std::from_chars(q, end_, value);
    if (parsed.ec == std::errc()) {
      q = parsed.ptr;
      while (*q == ' ' || *q == '\t' || *q == '\r') ++q;
      if ((*q == ',' || *q == '\n') && std::isfinite(value)) {
        out[column++] = value;
        last = *q == '\n';
        p = q + 1;
        continue;
      }
    }
    p = csv_text::scan_field(p, field, last, problem);
    if (problem != FieldProblem::none) refuse_problem(problem, line, column);
    store_slow(field, line, column, out[column]);
    ++column;
  }
  if (width_ == 0) {
    width_ = column;
  } else if (column != width_) {
    throw InputError(where(line), "has " + std::to_string(column) +
                                      " fields but the first data row has " +
                                      std::to_string(width_) + " (ragged rows)");
  }
  return p;
}

void MatrixReader::read_data_rows() {
  while (csv_text::skip_to_record(p_, end_, line_)) {
    // Every cell ends at its own comma or line end, so the cells stored so
    // far never outnumber count_fields' bound (a row's start included).
    if (rows_ * width_ > values_.size())
      throw std::logic_error("CSV reader: more cells than separators");
    p_ = read_data_row(p_, line_, rows_);
    ++rows_;
    ++line_;
  }
}

bool MatrixReader::first_column_holds_labels() const {
  if (width_ == 1) {
    if (numeric_label_row_) refuse_numeric_first_row();
    return false;
  }
  if (label_row_ && !numeric_label_row_) {
    double value;
    if (header_.size() + 1 == width_)
      return true;  // no corner cell: the header names the data columns
    if (kind_of(header_[0], !quotes_numbers_, value) == Kind::missing) return true;  // empty corner
  }
  const bool text_when_quoted =
      !quotes_numbers_ &&
      all_quoted(first_cells_, [](const FirstCell& c) -> const Field& { return c.field; });
  std::size_t numbers = 0, texts = 0;
  const FirstCell* first_number = nullptr;
  const FirstCell* first_text = nullptr;
  for (const FirstCell& cell : first_cells_) {
    const Kind kind =
        text_when_quoted && cell.field.quoted && !cell.field.text.empty() ? Kind::text : cell.kind;
    if (kind == Kind::finite && numbers++ == 0) first_number = &cell;
    if (kind == Kind::text && texts++ == 0) first_text = &cell;
  }
  if (numeric_label_row_ && (numbers > 0 || texts == 0)) refuse_numeric_first_row();
  if (numbers == 0) return texts > 0;
  if (texts == 0) return false;
  if (numbers >= texts) {
    refuse_text(first_text->field, first_text->line, 0,
                ", which is not a number, while " + std::to_string(numbers) +
                    " other cells of column 1 are numbers: a column of labels holds no numbers "
                    "and a column of data no text");
  }
  throw InputError(where(first_number->line),
                   "column 1 holds " + shown(first_number->field) + ", a number, while " +
                       std::to_string(texts) +
                       " other cells of column 1 are labels: a column of labels holds no numbers "
                       "(quote a label that spells a number)");
}

void MatrixReader::check_first_column_as_data() {
  for (std::size_t r = 0; r < rows_; ++r) {
    const FirstCell& cell = first_cells_[r];
    double& slot = values_[r * width_];
    if (cell.kind == Kind::finite) {
      slot = cell.value;
    } else {  // as any data cell: a quoted number is a number here
      store_slow(cell.field, cell.line, 0, slot);
    }
  }
}

void MatrixReader::take_column_labels(LabeledMatrix& result) const {
  const std::size_t cols = static_cast<std::size_t>(result.values.cols());
  const std::size_t skip = header_.size() - cols;
  std::unordered_map<std::string, std::size_t> seen;
  for (std::size_t k = skip; k < header_.size(); ++k) {
    if (header_[k].text.empty()) {
      throw InputError(where(header_line_),
                       column_name(k) + " of the label row is empty; every column needs a label");
    }
    std::string label = header_[k].value();
    const auto [at, fresh] = seen.emplace(label, k);
    if (!fresh) {
      throw InputError(where(header_line_), "column label '" + label + "' appears twice (" +
                                                column_name(at->second) + " and " + column_name(k) +
                                                "); labels must be unique");
    }
    result.column_labels.push_back(std::move(label));
  }
}

std::vector<std::string> unique_row_labels(const std::vector<Field>& fields,
                                           const std::vector<long>& lines,
                                           const std::string& name) {
  std::vector<std::string> labels;
  std::unordered_map<std::string, long> seen;
  for (std::size_t r = 0; r < fields.size(); ++r) {
    if (fields[r].text.empty()) {
      throw InputError(location(name, lines[r]),
                       "column 1 holds an empty row label; every row needs a label");
    }
    std::string label = fields[r].value();
    const auto [at, fresh] = seen.emplace(label, lines[r]);
    if (!fresh) {
      throw InputError(location(name, lines[r]),
                       "row label '" + label + "' appears again (first on line " +
                           std::to_string(at->second) + "); labels must be unique");
    }
    labels.push_back(std::move(label));
  }
  return labels;
}

LabeledMatrix MatrixReader::assemble() {
  LabeledMatrix result;
  const bool labels = first_column_holds_labels();
  const std::size_t skip = labels ? 1 : 0;
  if (width_ <= skip) throw InputError(where(first_cells_[0].line), "holds no numbers");
  const std::size_t cols = width_ - skip;
  if (label_row_ && header_.size() != width_ && header_.size() != cols) {
    throw InputError(where(header_line_), "label row has " + std::to_string(header_.size()) +
                                              " fields but the data rows have " +
                                              std::to_string(width_));
  }
  if (labels) {
    std::vector<Field> fields;
    std::vector<long> lines;
    for (const FirstCell& cell : first_cells_) {
      fields.push_back(cell.field);
      lines.push_back(cell.line);
    }
    result.row_labels = unique_row_labels(fields, lines, name_);
  } else {
    check_first_column_as_data();
  }
  if (options_.missing_as_zero) {
    for (std::size_t c = skip; c < missing_per_column_.size(); ++c) {
      if (missing_per_column_[c] == static_cast<long>(rows_)) {
        throw InputError(name_, column_name(c) +
                                    " is empty in every row (a trailing comma?); a column of "
                                    "missing values is refused even when missing cells read as 0");
      }
    }
  }
  result.values.resize(static_cast<Eigen::Index>(rows_), static_cast<Eigen::Index>(cols));
  for (std::size_t r = 0; r < rows_; ++r) {
    std::memcpy(result.values.row(static_cast<Eigen::Index>(r)).data(),
                values_.data() + r * width_ + skip, cols * sizeof(double));
  }
  if (label_row_) take_column_labels(result);
  return result;
}

LabeledMatrix MatrixReader::read() {
  if (!csv_text::skip_to_record(p_, end_, line_)) throw InputError(name_, "holds no data rows");
  const char* first = p_;
  const long first_line = line_;
  const char* after_first = first;
  header_ = split_record(after_first, first_line);
  decide_quoting(after_first, first_line + 1);
  const FirstRow kind = first_row_kind(header_, first_line);
  label_row_ = kind != FirstRow::data;
  numeric_label_row_ = kind == FirstRow::numeric_labels;
  if (label_row_) {
    header_line_ = first_line;
    p_ = after_first;
    line_ = first_line + 1;
    if (!csv_text::skip_to_record(p_, end_, line_)) {
      if (numeric_label_row_) refuse_numeric_first_row();
      throw InputError(name_, "holds a label row but no data rows");
    }
  } else {
    header_.clear();
  }
  read_data_rows();
  return assemble();
}

LabeledMatrix read_prepared_matrix(const std::string& text, const std::string& name,
                                   const CsvReadOptions& options, bool check_memory) {
  const double fields = csv_text::count_fields(text);
  if (check_memory) {
    const double bytes = static_cast<double>(text.size());
    require_memory(bytes + fields * 2 * sizeof(double),
                   "reading " + format_number(fields) + " fields (" + format_bytes(bytes) + ")",
                   name, "split the file or use a machine with more memory");
  }
  return MatrixReader(text, name, options, fields).read();
}

}  // namespace

std::vector<std::string> split_csv_record(const std::string& line) {
  const std::string text = csv_text::prepare(line.substr(0, line.find('\n')), "CSV record");
  std::vector<std::string> fields;
  const char* p = text.data();
  bool last = false;
  while (!last) {
    Field field;
    FieldProblem problem;
    p = csv_text::scan_field(p, field, last, problem);
    if (problem != FieldProblem::none) {
      throw InputError("CSV record",
                       column_name(fields.size()) + (problem == FieldProblem::unclosed_quote
                                                         ? " opens a quote that is not closed"
                                                         : " has text after its closing quote"));
    }
    fields.push_back(field.value());
  }
  return fields;
}

LabeledMatrix read_matrix_csv(const std::string& path, const CsvReadOptions& options) {
  return read_prepared_matrix(csv_text::read_file(path), path, options, true);
}

LabeledMatrix parse_matrix_csv(const std::string& text, const std::string& name,
                               const CsvReadOptions& options) {
  return read_prepared_matrix(csv_text::prepare(text, name), name, options, false);
}

LabeledVector read_vector_csv(const std::string& path, const CsvReadOptions& options) {
  LabeledMatrix m = read_matrix_csv(path, options);
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
        throw InputError(path, "row " + std::to_string(i + 1) + ", column " +
                                   std::to_string(j + 1) + " holds " + format_number(v) +
                                   "; an access matrix holds only 0 (never) and 1 (allowed)");
      }
      mask(i, j) = static_cast<std::uint8_t>(v);
    }
  }
  return mask;
}

CsvTable read_csv_table(const std::string& path) {
  const std::string text = csv_text::read_file(path);
  const char* p = text.data();
  const char* end = p + text.size();
  long line = 1;
  CsvTable table;
  table.path = path;
  for (bool header = true; csv_text::skip_to_record(p, end, line); ++line, header = false) {
    std::vector<std::string> fields;
    bool last = false;
    while (!last) {
      Field field;
      FieldProblem problem;
      p = csv_text::scan_field(p, field, last, problem);
      if (problem != FieldProblem::none) {
        throw InputError(location(path, line),
                         column_name(fields.size()) + " has a quote that is not closed properly");
      }
      fields.push_back(field.value());
    }
    if (header) {
      if (fields.size() == 1 && fields[0].find_first_of(";\t") != std::string::npos) {
        throw InputError(location(path, line),
                         "the header '" + fields[0] +
                             "' seems separated by semicolons or tabs; allocsim reads "
                             "comma-separated files");
      }
      table.header = std::move(fields);
    } else if (fields.size() != table.header.size()) {
      throw InputError(location(path, line), "has " + std::to_string(fields.size()) +
                                                 " fields but the header has " +
                                                 std::to_string(table.header.size()));
    } else {
      table.rows.push_back(std::move(fields));
      table.lines.push_back(line);
    }
  }
  if (table.header.empty()) throw InputError(path, "holds no data rows");
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
  double value;
  if (!parse_number(cell, value) || !std::isfinite(value)) {
    throw InputError(location(path, lines[row]),
                     header[column] + " holds '" + cell + "', which is not a finite number");
  }
  return value;
}

}  // namespace allocsim
