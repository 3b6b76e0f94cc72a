#include <charconv>
#include <ostream>
#include <string_view>
#include <vector>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "csv_text.hpp"

namespace allocsim {
namespace {

// Text gathered in a block and handed to the stream a block at a time.
class BlockWriter {
 public:
  explicit BlockWriter(std::ostream& out) : out_(out), block_(kBlockBytes) {}
  ~BlockWriter() { flush(); }
  BlockWriter(const BlockWriter&) = delete;
  BlockWriter& operator=(const BlockWriter&) = delete;

  void put(char ch) {
    room(1);
    block_[used_++] = ch;
  }
  void put_number(double value) {
    room(kNumberBytes);
    char* const at = block_.data() + used_;
    used_ += static_cast<std::size_t>(std::to_chars(at, at + kNumberBytes, value).ptr - at);
  }
  void put_text(std::string_view text) {
    if (text.size() > kBlockBytes / 2) {
      flush();
      out_.write(text.data(), static_cast<std::streamsize>(text.size()));
      return;
    }
    room(text.size());
    text.copy(block_.data() + used_, text.size());
    used_ += text.size();
  }
  void put_label(const std::string& label, bool quoted) {
    if (!quoted) return put_text(label);
    put('"');
    for (const char ch : label) {
      if (ch == '"') put('"');
      put(ch);
    }
    put('"');
  }
  void flush() {
    out_.write(block_.data(), static_cast<std::streamsize>(used_));
    used_ = 0;
  }

 private:
  static constexpr std::size_t kBlockBytes = std::size_t{1} << 20;
  static constexpr std::size_t kNumberBytes = 32;  // the longest double is 24 characters

  void room(std::size_t bytes) {
    if (used_ + bytes > block_.size()) flush();
  }

  std::ostream& out_;
  std::vector<char> block_;
  std::size_t used_ = 0;
};

// Labels are quoted all together or not at all: the reader takes quoted
// cells as labels only when every label of the row or column is quoted.
bool quote_labels(const std::vector<std::string>& labels) {
  for (const std::string& label : labels) {
    if (label.find('\n') != std::string::npos) {
      throw InputError("label '" + label + "'", "holds a line end, which a CSV cell cannot hold");
    }
  }
  for (const std::string& label : labels) {
    if (csv_text::label_needs_quotes(label)) return true;
  }
  return false;
}

}  // namespace

std::string format_number(double value) {
  char buffer[32];
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, value);
  return std::string(buffer, result.ptr);
}

void write_matrix_csv(std::ostream& out, const Matrix& values,
                      const std::vector<std::string>& row_labels,
                      const std::vector<std::string>& column_labels) {
  const bool quote_rows = quote_labels(row_labels);
  const bool quote_columns = quote_labels(column_labels);
  BlockWriter writer(out);
  const bool with_rows = !row_labels.empty();
  if (!column_labels.empty()) {
    if (with_rows) writer.put(',');
    for (std::size_t j = 0; j < column_labels.size(); ++j) {
      if (j) writer.put(',');
      writer.put_label(column_labels[j], quote_columns);
    }
    writer.put('\n');
  }
  for (Eigen::Index i = 0; i < values.rows(); ++i) {
    if (with_rows) {
      writer.put_label(row_labels[static_cast<std::size_t>(i)], quote_rows);
      writer.put(',');
    }
    const double* row = values.row(i).data();
    for (Eigen::Index j = 0; j < values.cols(); ++j) {
      if (j) writer.put(',');
      writer.put_number(row[j]);
    }
    writer.put('\n');
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
