#include "arguments.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>

#include "allocsim/core/edit_distance.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim::python {
namespace {

using DoubleArray = py::array_t<double, py::array::c_style | py::array::forcecast>;

std::map<std::string, std::vector<std::string>>& option_names() {
  static auto* names = new std::map<std::string, std::vector<std::string>>();
  return *names;
}

DoubleArray numeric_array(const py::handle& value, const std::string& name) {
  if (value.is_none()) value_error(name, "is required, got None");
  DoubleArray array = DoubleArray::ensure(value);
  if (!array) value_error(name, "is not an array of numbers");
  return array;
}

std::string shape_text(const py::array& array) {
  std::ostringstream out;
  out << "(";
  for (py::ssize_t d = 0; d < array.ndim(); ++d) out << (d ? ", " : "") << array.shape(d);
  out << (array.ndim() == 1 ? ",)" : ")");
  return out.str();
}

std::string python_repr(const py::object& value) { return py::repr(value).cast<std::string>(); }

}  // namespace

void value_error(const std::string& where, const std::string& what) {
  throw py::value_error(where.empty() ? what : where + ": " + what);
}

Matrix matrix_argument(const py::handle& value, const std::string& name) {
  const DoubleArray array = numeric_array(value, name);
  if (array.ndim() != 2)
    value_error(name, "must be a 2-D array (agents x partners), got shape " + shape_text(array));
  if (array.size() == 0) value_error(name, "is empty, shape " + shape_text(array));
  return Eigen::Map<const Matrix>(array.data(), array.shape(0), array.shape(1));
}

Vector vector_argument(const py::handle& value, const std::string& name) {
  const DoubleArray array = numeric_array(value, name);
  const bool column_or_row = array.ndim() == 2 && (array.shape(0) == 1 || array.shape(1) == 1);
  if (array.ndim() != 1 && !column_or_row)
    value_error(name, "must be a 1-D array, got shape " + shape_text(array));
  if (array.size() == 0) value_error(name, "is empty");
  return Eigen::Map<const Vector>(array.data(), array.size());
}

std::optional<AccessMask> access_argument(const py::handle& value, const std::string& name) {
  if (value.is_none()) return std::nullopt;
  const Matrix values = matrix_argument(value, name);
  AccessMask mask(values.rows(), values.cols());
  for (Eigen::Index i = 0; i < values.rows(); ++i) {
    for (Eigen::Index j = 0; j < values.cols(); ++j) {
      const double v = values(i, j);
      if (v != 0 && v != 1) {
        std::ostringstream what;
        what << "row " << i + 1 << ", column " << j + 1 << " is " << v
             << "; entries must be 0 (never) or 1 (allowed)";
        value_error(name, what.str());
      }
      mask(i, j) = static_cast<std::uint8_t>(v);
    }
  }
  return mask;
}

py::array to_array(Matrix&& matrix) {
  const py::ssize_t rows = matrix.rows(), columns = matrix.cols();
  if (matrix.size() == 0) return py::array_t<double>({rows, columns});
  auto* owned = new Matrix(std::move(matrix));
  py::capsule owner(owned, [](void* p) { delete static_cast<Matrix*>(p); });
  return py::array_t<double>({rows, columns},
                             {columns * static_cast<py::ssize_t>(sizeof(double)),
                              static_cast<py::ssize_t>(sizeof(double))},
                             owned->data(), owner);
}

py::array to_array(Vector&& vector) {
  const py::ssize_t size = vector.size();
  if (size == 0) return py::array_t<double>(0);
  auto* owned = new Vector(std::move(vector));
  py::capsule owner(owned, [](void* p) { delete static_cast<Vector*>(p); });
  return py::array_t<double>({size}, {static_cast<py::ssize_t>(sizeof(double))}, owned->data(),
                             owner);
}

py::array to_array(const std::vector<double>& values) {
  py::array_t<double> array(static_cast<py::ssize_t>(values.size()));
  std::copy(values.begin(), values.end(), array.mutable_data());
  return array;
}

py::array to_array(const std::vector<Eigen::Index>& indices) {
  py::array_t<std::int64_t> array(static_cast<py::ssize_t>(indices.size()));
  std::copy(indices.begin(), indices.end(), array.mutable_data());
  return array;
}

py::array to_array(BinaryMatrix&& links) {
  const py::ssize_t rows = links.rows(), columns = links.cols();
  if (links.size() == 0) return py::array_t<std::uint8_t>({rows, columns});
  auto* owned = new BinaryMatrix(std::move(links));
  py::capsule owner(owned, [](void* p) { delete static_cast<BinaryMatrix*>(p); });
  return py::array_t<std::uint8_t>({rows, columns}, {columns, py::ssize_t{1}}, owned->data(),
                                   owner);
}

std::string register_function(py::module_& module, const FunctionSpec& spec) {
  std::vector<std::string>& names = option_names()[spec.name];
  names.clear();
  py::list options;
  for (const OptionSpec& option : spec.options) {
    names.push_back(option.name);
    options.append(py::make_tuple(option.name, option.default_value));
  }
  py::list arrays, array_defaults;
  for (const auto& array : spec.arrays) arrays.append(array.first);
  for (const auto& value : spec.array_defaults) array_defaults.append(value);
  if (!py::hasattr(module, "_signatures")) module.attr("_signatures") = py::dict();
  module.attr("_signatures")[py::str(spec.name)] = py::make_tuple(arrays, array_defaults, options);

  std::ostringstream doc;
  doc << spec.summary << "\n\nParameters\n----------\n";
  for (const auto& [name, meaning] : spec.arrays)
    doc << name << " : array_like\n    " << meaning << "\n";
  for (const OptionSpec& option : spec.options)
    doc << option.name << " : default " << python_repr(option.default_value) << "\n    "
        << option.meaning << "\n";
  doc << "\nReturns\n-------\n" << spec.returns << "\n";
  return doc.str();
}

Options::Options(const std::string& function, const py::kwargs& kwargs)
    : function_(function), kwargs_(kwargs) {
  const std::vector<std::string>& valid = option_names().at(function);
  for (const auto& item : kwargs_) {
    const std::string name = py::str(item.first);
    if (std::find(valid.begin(), valid.end(), name) != valid.end()) continue;
    std::string nearest;
    std::size_t best = 3;  // suggest only close names
    for (const std::string& candidate : valid) {
      const std::size_t distance = edit_distance(name, candidate);
      if (distance < best) best = distance, nearest = candidate;
    }
    std::string list;
    for (const std::string& candidate : valid) list += (list.empty() ? "" : ", ") + candidate;
    value_error(name, "is not an option of " + function +
                          (nearest.empty() ? "" : "; did you mean " + nearest + "?") +
                          " (options: " + (list.empty() ? "none" : list) + ")");
  }
}

py::handle Options::find(const char* name) const {
  if (!kwargs_.contains(name)) return py::handle();
  py::handle value = kwargs_[name];
  return value.is_none() ? py::handle() : value;
}

bool Options::given(const char* name) const { return static_cast<bool>(find(name)); }

py::object Options::value(const char* name) const {
  const py::handle value = find(name);
  return value ? py::reinterpret_borrow<py::object>(value) : py::none();
}

namespace {
template <typename T>
void read_as(const py::handle& value, const char* name, const char* kind, T& target) {
  if (!value) return;
  try {
    target = value.cast<T>();
  } catch (const py::cast_error&) {
    throw py::type_error(std::string(name) + ": must be " + kind + ", got " +
                         python_repr(py::reinterpret_borrow<py::object>(value)));
  }
}
}  // namespace

void Options::read(const char* name, double& target) const {
  read_as(find(name), name, "a number", target);
}
void Options::read(const char* name, long& target) const {
  read_as(find(name), name, "an integer", target);
}
void Options::read(const char* name, int& target) const {
  read_as(find(name), name, "an integer", target);
}
void Options::read(const char* name, bool& target) const {
  read_as(find(name), name, "True or False", target);
}
void Options::read(const char* name, std::string& target) const {
  read_as(find(name), name, "a string", target);
}
void Options::read(const char* name, std::optional<double>& target) const {
  if (!given(name)) return;
  double value = 0;
  read(name, value);
  target = value;
}

BinarizeOptions binarize_options(const Options& options) {
  BinarizeOptions binarize;
  std::string rule = to_string(binarize.rule);
  options.read("binarize", rule);
  binarize.rule = binarize_rule_from_string(rule);
  options.read("threshold", binarize.threshold);
  binarize.validate();
  return binarize;
}

}  // namespace allocsim::python
