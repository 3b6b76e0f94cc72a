#include "csv_text.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <charconv>
#include <cstdlib>
#include <cstring>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/core/output_file.hpp"

namespace allocsim::csv_text {
namespace {

constexpr std::size_t kChunkBytes = std::size_t{1} << 20;

class FileDescriptor {
 public:
  explicit FileDescriptor(int fd) : fd_(fd) {}
  ~FileDescriptor() {
    if (fd_ >= 0) ::close(fd_);
  }
  FileDescriptor(const FileDescriptor&) = delete;
  FileDescriptor& operator=(const FileDescriptor&) = delete;
  int get() const { return fd_; }

 private:
  int fd_;
};

[[noreturn]] void fail_reading(const std::string& path) {
  throw InputError(path, std::string("cannot be read (") + std::strerror(errno) + ")");
}

// Reads up to `count` bytes at `into`; returns how many (0 at the end).
std::size_t read_some(int fd, char* into, std::size_t count, const std::string& path) {
  for (;;) {
    const ssize_t got = ::read(fd, into, count);
    if (got >= 0) return static_cast<std::size_t>(got);
    if (errno != EINTR) fail_reading(path);
  }
}

long line_of_offset(const std::string& text, std::size_t offset) {
  long line = 1;
  for (std::size_t k = 0; k < offset; ++k) line += text[k] == '\n';
  return line;
}

void refuse_nul(const std::string& text, std::size_t from, const std::string& name) {
  const void* nul = std::memchr(text.data() + from, '\0', text.size() - from);
  if (!nul) return;
  const auto offset = static_cast<std::size_t>(static_cast<const char*>(nul) - text.data());
  throw InputError(location(name, line_of_offset(text, offset)),
                   "holds a NUL byte; a CSV file is text (is this a binary file or a device?)");
}

void refuse_utf16(const std::string& text, const std::string& name) {
  if (text.size() >= 2 &&
      ((text[0] == '\xFF' && text[1] == '\xFE') || (text[0] == '\xFE' && text[1] == '\xFF'))) {
    throw InputError(name, "is UTF-16 text; save it as CSV in UTF-8 (or plain ASCII)");
  }
}

// A byte-order mark anywhere but at the start (two files pasted together,
// a BOM after a blank line) would become part of a label or a number.
void refuse_inner_bom(const std::string& text, const std::string& name) {
  const std::size_t at = text.find("\xEF\xBB\xBF");
  if (at == std::string::npos) return;
  throw InputError(location(name, line_of_offset(text, at)),
                   "holds a byte-order mark (U+FEFF) inside the file; only its very start may "
                   "carry one (were two files pasted together?)");
}

void require_buffer_memory(double bytes, const std::string& path) {
  require_memory(bytes, "reading a file of " + format_bytes(bytes), path,
                 "split the file or use a machine with more memory");
}

// A regular file: its size is known, one allocation.
std::string read_regular(int fd, double size, const std::string& path) {
  require_buffer_memory(size, path);
  std::string text(static_cast<std::size_t>(size) + 1, '\0');
  std::size_t used = 0;
  for (;;) {
    if (used == text.size()) text.resize(text.size() * 2);  // the file grew meanwhile
    const std::size_t got = read_some(fd, &text[used], text.size() - used, path);
    if (got == 0) break;
    used += got;
  }
  text.resize(used);
  return text;
}

// A pipe or device: read as it comes, refused at the first NUL byte (so
// /dev/zero stops at once) or beyond kCsvStreamLimitBytes.
std::string read_stream(int fd, const std::string& path) {
  std::string text;
  std::string chunk(kChunkBytes, '\0');
  for (;;) {
    const std::size_t got = read_some(fd, &chunk[0], chunk.size(), path);
    if (got == 0) break;
    if (std::memchr(chunk.data(), '\0', got)) {
      refuse_nul(text + chunk.substr(0, got), text.size(), path);
    }
    const double total = static_cast<double>(text.size() + got);
    if (total > kCsvStreamLimitBytes) {
      throw InputError(path, "is not a regular file and holds more than " +
                                 format_bytes(kCsvStreamLimitBytes) +
                                 ", the most read from a pipe or device; give a regular file");
    }
    if (text.size() + got > text.capacity()) require_buffer_memory(2 * total, path);
    text.append(chunk, 0, got);
  }
  return text;
}

}  // namespace

std::string read_file(const std::string& path) {
  const FileDescriptor fd(::open(path.c_str(), O_RDONLY | O_CLOEXEC));
  if (fd.get() < 0) {
    throw InputError(path, std::string("cannot be opened (") + std::strerror(errno) + ")");
  }
  struct stat info {};
  if (::fstat(fd.get(), &info) != 0) fail_reading(path);
  if (S_ISDIR(info.st_mode)) throw InputError(path, "is a directory; give the path of a CSV file");
  remember_input(path);  // no writer of this process may replace it
  std::string text = S_ISREG(info.st_mode)
                         ? read_regular(fd.get(), static_cast<double>(info.st_size), path)
                         : read_stream(fd.get(), path);
  return prepare(std::move(text), path);
}

std::string prepare(std::string text, const std::string& name) {
  refuse_utf16(text, name);
  refuse_nul(text, 0, name);
  if (text.compare(0, 3, "\xEF\xBB\xBF") == 0) text.erase(0, 3);  // written by spreadsheet programs
  refuse_inner_bom(text, name);
  if (text.empty() || text.back() != '\n') text.push_back('\n');
  return text;
}

double count_fields(std::string_view text) {
  std::size_t separators = 0;
  for (const char ch : text) separators += static_cast<std::size_t>((ch == ',') | (ch == '\n'));
  return 1.0 + static_cast<double>(separators);
}

bool parse_number(std::string_view text, double& value) {
  if (text.empty()) return false;
  const char* begin = text.data();
  const char* end = begin + text.size();
  if (*begin == '+' && text.size() > 1 && begin[1] != '-' && begin[1] != '+') ++begin;
  const auto result = std::from_chars(begin, end, value);
  if (result.ptr != end) return false;
  if (result.ec == std::errc::result_out_of_range) {  // strtod says which way: 0 or +-inf
    value = std::strtod(std::string(begin, end).c_str(), nullptr);
    return true;
  }
  return result.ec == std::errc();
}

bool label_needs_quotes(std::string_view label) {
  double value;
  return label.empty() || label == "NA" || label.front() == '#' || label.front() == ' ' ||
         label.front() == '\t' || label.back() == ' ' || label.back() == '\t' ||
         label.find_first_of(",\";\n\r\t") != std::string_view::npos || parse_number(label, value);
}

std::string Field::value() const {
  if (!escaped) return std::string(text);
  std::string out;
  out.reserve(text.size());
  for (std::size_t k = 0; k < text.size(); ++k) {
    out += text[k];
    if (text[k] == '"' && k + 1 < text.size() && text[k + 1] == '"') ++k;
  }
  return out;
}

namespace {
inline bool is_blank(char ch) { return ch == ' ' || ch == '\t' || ch == '\r'; }
}  // namespace

const char* scan_field(const char* p, Field& field, bool& last, FieldProblem& problem) {
  problem = FieldProblem::none;
  while (*p == ' ' || *p == '\t') ++p;
  if (*p == '"') {
    const char* begin = ++p;
    bool escaped = false;
    while (*p != '"' || p[1] == '"') {
      if (*p == '\n') {  // the quote is not closed on its line
        problem = FieldProblem::unclosed_quote;
        field = {std::string_view(begin, static_cast<std::size_t>(p - begin)), true, escaped};
        last = true;
        return p + 1;
      }
      if (*p == '"') {
        escaped = true;
        ++p;
      }
      ++p;
    }
    field = {std::string_view(begin, static_cast<std::size_t>(p - begin)), true, escaped};
    ++p;
    while (is_blank(*p)) ++p;
    if (*p != ',' && *p != '\n') {
      problem = FieldProblem::text_after_quote;
      while (*p != ',' && *p != '\n') ++p;
    }
    last = *p == '\n';
    return p + 1;
  }
  const char* begin = p;
  while (*p != ',' && *p != '\n') ++p;
  const char* end = p;
  while (end > begin && is_blank(end[-1])) --end;
  field = {std::string_view(begin, static_cast<std::size_t>(end - begin)), false, false};
  last = *p == '\n';
  return p + 1;
}

bool skip_to_record(const char*& p, const char* end, long& line) {
  while (p < end) {
    const char* q = p;
    while (is_blank(*q)) ++q;
    if (*q != '\n' && *q != '#') return true;
    p = next_line(q);
    ++line;
  }
  return false;
}

const char* next_line(const char* p) {
  while (*p != '\n') ++p;
  return p + 1;
}

}  // namespace allocsim::csv_text
