// Private to the CSV reader: the text of a file in one buffer, and the
// fields of its records (see include/allocsim/core/csv.hpp for the rules).
//
// A prepared text ends with '\n', so every scan below stops at a line end
// without comparing against the end of the buffer.
#pragma once

#include <string>
#include <string_view>

namespace allocsim::csv_text {

// The whole content of `path`, prepared (see prepare). InputError naming
// the file when it cannot be opened or read, is a directory, holds a NUL
// byte or UTF-16 text, or exceeds kCsvStreamLimitBytes or the memory
// available.
std::string read_file(const std::string& path);

// Checks text held in memory as read_file does (NUL bytes, UTF-16), removes
// a UTF-8 byte-order mark and appends '\n' when the text does not end with
// one. `name` stands for the file in messages.
std::string prepare(std::string text, const std::string& name);

// An upper bound on the number of fields of a prepared text (1 + commas +
// line ends), used for the memory estimate and to size the value buffer.
double count_fields(std::string_view text);

// A number as the reader accepts it (see csv.hpp): from_chars' decimal and
// scientific forms, an optional '+', nan and inf; the whole text. A number
// beyond a double's range gives +-inf, one below it 0 (as strtod).
bool parse_number(std::string_view text, double& value);

// Whether a label must be quoted to read back as the same label.
bool label_needs_quotes(std::string_view label);

// One field of a record. `text` is trimmed of blanks (space, tab, CR); for
// a quoted field it is the part between the quotes, with escaped quotes
// ("") still doubled when `escaped`.
struct Field {
  std::string_view text;
  bool quoted = false;
  bool escaped = false;
  std::string value() const;  // the field's text with escaped quotes undone
};

enum class FieldProblem { none, unclosed_quote, text_after_quote };

// Scans the field starting at `p` (inside a record of a prepared text).
// Returns the position just past the field's separator; `last` tells
// whether that separator was the line end.
const char* scan_field(const char* p, Field& field, bool& last, FieldProblem& problem);

// Moves `p` (at the start of a line, `line` its 1-based number) past blank
// lines and lines starting with '#'; false when the text ends first.
bool skip_to_record(const char*& p, const char* end, long& line);

// Moves `p` past the rest of the current line.
const char* next_line(const char* p);

}  // namespace allocsim::csv_text
