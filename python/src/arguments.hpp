// Arguments of the Python functions: numpy arrays in, keyword options
// checked against a table, results out as dicts of arrays and numbers.
//
// Arrays are accepted in any dtype and memory order numpy can convert to
// float64; unusable input (wrong dimension, not numeric) raises ValueError
// naming the argument. Returned matrices are moved into numpy arrays
// without a copy.
//
// Each function declares its options once (name, default, meaning); the
// table drives the check of keyword names (an unknown name is a ValueError
// naming it and the nearest valid one), the docstring and the signature
// that help() shows.
#pragma once

#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>  // std::vector and std::string to and from lists

#include <optional>
#include <string>
#include <vector>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim::python {

namespace py = pybind11;

// ---- arrays in ----

// A 2-D array as a float64 matrix (copied into row-major storage).
Matrix matrix_argument(const py::handle& value, const std::string& name);
// A 1-D array (or an n x 1 / 1 x n one) as a vector.
Vector vector_argument(const py::handle& value, const std::string& name);
// None -> nothing; otherwise a 2-D array of 0/1 (any numeric dtype or bool).
std::optional<AccessMask> access_argument(const py::handle& value, const std::string& name);

// ---- arrays out (no copy: the array owns the moved matrix) ----

py::array to_array(Matrix&& matrix);
py::array to_array(Vector&& vector);
py::array to_array(const std::vector<double>& values);
py::array to_array(const std::vector<Eigen::Index>& indices);  // int64
py::array to_array(BinaryMatrix&& links);                      // uint8
// Non-finite numbers stay numbers in Python (nan, inf), unlike in JSON.

// ---- keyword options ----

struct OptionSpec {
  std::string name;
  py::object default_value;  // shown in the signature and the docstring
  std::string meaning;       // unit, valid range
};

struct FunctionSpec {
  std::string name;
  std::string summary;                                      // first paragraph of the docstring
  std::vector<std::pair<std::string, std::string>> arrays;  // positional arguments: name, meaning
  std::vector<std::string> array_defaults;  // defaults of the trailing arrays ("None")
  std::vector<OptionSpec> options;
  std::string returns;  // the Returns paragraph
};

// Registers `spec` (for the docstring and the signature) and returns its docstring.
std::string register_function(py::module_& module, const FunctionSpec& spec);

// The keyword options given to one call, checked against the function's table.
class Options {
 public:
  // Throws ValueError for a name not in the table of `function`.
  Options(const std::string& function, const py::kwargs& kwargs);

  bool given(const char* name) const;
  // Each sets `target` when the option is given and not None; a value of the
  // wrong type raises TypeError naming the option.
  void read(const char* name, double& target) const;
  void read(const char* name, long& target) const;
  void read(const char* name, int& target) const;
  void read(const char* name, bool& target) const;
  void read(const char* name, std::string& target) const;
  void read(const char* name, std::optional<double>& target) const;
  // The raw value (None when not given).
  py::object value(const char* name) const;

 private:
  py::handle find(const char* name) const;
  std::string function_;
  py::kwargs kwargs_;
};

// "binarize" and "threshold" options as BinarizeOptions (validated).
BinarizeOptions binarize_options(const Options& options);

// Raises ValueError("<where>: <what>").
[[noreturn]] void value_error(const std::string& where, const std::string& what);

}  // namespace allocsim::python
