// Errors about user input (files, options, config keys).
//
// Problem outcomes (infeasible, not converged, boundary estimate) are values
// in result structs, not exceptions. InputError is for input the tool cannot
// use; its message always starts with where the problem is ("gains.csv:4",
// "--epsilon", "exp.ini:12: dynamics.rule") so the command line can print it
// as one line.
#pragma once

#include <stdexcept>
#include <string>

namespace allocsim {

class InputError : public std::runtime_error {
 public:
  // `where` names the file (and line), option or key; `what` says what is
  // wrong and, where possible, what to do.
  InputError(const std::string& where, const std::string& what)
      : std::runtime_error(where.empty() ? what : where + ": " + what),
        where_(where),
        reason_(what) {}

  const std::string& where() const { return where_; }
  // The message without its place.
  const std::string& reason() const { return reason_; }
  // The same error at another place: a layer that owns the name of a setting
  // ("--threshold", "dynamics.temperature") renames the field a lower layer
  // named ("threshold", "temperature").
  InputError at(const std::string& where) const { return InputError(where, reason_); }

 private:
  std::string where_, reason_;
};

// Calls check(); an InputError it throws is re-thrown at name_of(its where()).
// For a layer that validates a lower layer's options under its own names.
template <class Check, class NameOf>
void check_under_names(Check&& check, NameOf&& name_of) {
  try {
    check();
  } catch (const InputError& e) {
    throw e.at(name_of(e.where()));
  }
}

// A file could not be written (disk full, I/O error, permission lost
// midway): the command line prints it as one line and exits 1. The message
// names the file and the cause ("out.h5: could not be written: No space left
// on device").
class WriteError : public std::runtime_error {
 public:
  WriteError(const std::string& file, const std::string& cause)
      : std::runtime_error(file + ": could not be written: " + cause) {}
};

// "file:line" (line counted from 1), or just "file" when line is 0.
inline std::string location(const std::string& file, long line = 0) {
  return line > 0 ? file + ":" + std::to_string(line) : file;
}

}  // namespace allocsim
