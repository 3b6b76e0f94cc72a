// Structure of a matrix from its links: binarize, connectance, NODF, WNODF,
// spectral radius, and the orderings (Fitness-Complexity, ECI, the gradient
// order used for heatmaps). Field names follow the 'structure' object of
// `allocsim analyze --json`.
#include <cmath>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/analysis/nestedness.hpp"
#include "allocsim/analysis/rankings.hpp"
#include "allocsim/core/error.hpp"
#include "arguments.hpp"
#include "bindings.hpp"

namespace allocsim::python {
namespace {

const std::pair<std::string, std::string> kMatrixArray = {
    "matrix", "n x m, non-negative weights (an allocation) or 0/1 links"};

std::vector<OptionSpec> binarize_specs() {
  return {{"binarize", py::str("positive"),
           "link rule: positive | row-share | min-count | revealed-advantage"},
          {"threshold", py::none(), "threshold of the link rule (None: the rule's own)"}};
}

BinaryMatrix links_argument(const py::object& matrix, const Options& options) {
  const Matrix values = matrix_argument(matrix, "matrix");
  const BinarizeOptions rule = binarize_options(options);
  try {
    return binarize(values, rule);
  } catch (const InputError& e) {  // the library names the allocation; here it is `matrix`
    throw py::value_error("matrix" + std::string(e.what()).substr(e.where().size()));
  }
}

PairOrder order_option(const Options& options) {
  std::string order = to_string(PairOrder::by_degree);
  options.read("order", order);
  if (order != "by-degree" && order != "as-given")
    value_error("order", "'" + order + "' is not one of by-degree, as-given");
  return pair_order_from_string(order);
}

py::array binarize_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("binarize", kwargs);
  return to_array(links_argument(matrix, options));
}

double connectance_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("connectance", kwargs);
  return connectance(links_argument(matrix, options));
}

py::dict nodf_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("nodf", kwargs);
  const BinaryMatrix links = links_argument(matrix, options);
  const PairOrder order = order_option(options);
  NestednessParts parts;
  {
    py::gil_scoped_release release;
    parts = nodf(links, order);
  }
  py::dict d;
  d["nodf"] = parts.total;
  d["nodf_rows"] = parts.rows;
  d["nodf_columns"] = parts.columns;
  d["binarize"] = describe(binarize_options(options));
  return d;
}

// WNODF of the weights on the links the rule keeps, as `analyze` reports it.
py::dict wnodf_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("wnodf", kwargs);
  const Matrix weights = matrix_argument(matrix, "matrix");
  const BinaryMatrix links = links_argument(matrix, options);
  const PairOrder order = order_option(options);
  NestednessParts parts;
  {
    py::gil_scoped_release release;
    parts = wnodf(weights.cwiseProduct(to_matrix(links)), order);
  }
  py::dict d;
  d["wnodf"] = parts.total;
  d["wnodf_rows"] = parts.rows;
  d["wnodf_columns"] = parts.columns;
  d["binarize"] = describe(binarize_options(options));
  return d;
}

double spectral_radius_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("spectral_radius", kwargs);
  bool weighted = false;
  options.read("weighted", weighted);
  if (weighted) {
    if (options.given("binarize") || options.given("threshold"))
      value_error("weighted", "True reads the weights; binarize and threshold do not apply");
    const Matrix values = matrix_argument(matrix, "matrix");
    py::gil_scoped_release release;
    return spectral_radius(values);
  }
  const BinaryMatrix links = links_argument(matrix, options);
  py::gil_scoped_release release;
  return spectral_radius(links);
}

py::dict fitness_complexity_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("fitness_complexity", kwargs);
  const BinaryMatrix links = links_argument(matrix, options);
  FitnessComplexityOptions fc;
  options.read("tolerance", fc.tolerance);
  options.read("max_iterations", fc.max_iterations);
  options.read("zero_threshold", fc.zero_threshold);
  fc.validate();
  FitnessComplexityResult r;
  {
    py::gil_scoped_release release;
    r = fitness_complexity(links, fc);
  }
  py::dict d;
  d["status"] = to_string(r.status);
  d["message"] = r.message;
  d["fitness"] = to_array(std::move(r.fitness));
  d["complexity"] = to_array(std::move(r.complexity));
  d["row_order"] = to_array(r.row_order);
  d["column_order"] = to_array(r.column_order);
  d["iterations"] = r.iterations;
  d["last_change"] = r.last_change;
  d["decaying_rows"] = to_array(r.decaying_rows);
  d["decaying_columns"] = to_array(r.decaying_columns);
  return d;
}

py::dict eci_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("eci", kwargs);
  const BinaryMatrix links = links_argument(matrix, options);
  ComplexityIndexResult r;
  {
    py::gil_scoped_release release;
    r = economic_complexity_index(links);
  }
  py::dict d;
  d["status"] = to_string(r.status);
  d["message"] = r.message;
  d["row_index"] = to_array(std::move(r.row_index));
  d["column_index"] = to_array(std::move(r.column_index));
  d["row_order"] = to_array(r.row_order);
  d["column_order"] = to_array(r.column_order);
  d["second_eigenvalue"] = r.second_eigenvalue;
  d["eigen_gap"] = r.eigen_gap;
  return d;
}

py::dict gradient_order_binding(const py::object& matrix, const py::kwargs& kwargs) {
  const Options options("gradient_order", kwargs);
  const Matrix weights = matrix_argument(matrix, "matrix");
  for (Eigen::Index i = 0; i < weights.rows(); ++i)
    for (Eigen::Index j = 0; j < weights.cols(); ++j)
      if (!(weights(i, j) >= 0) || !std::isfinite(weights(i, j)))
        value_error("matrix", "row " + std::to_string(i + 1) + ", column " + std::to_string(j + 1) +
                                  " is negative or not finite");
  GradientOrder r;
  {
    py::gil_scoped_release release;
    r = correspondence_order(weights);
  }
  py::dict d;
  d["row_order"] = to_array(r.rows);
  d["column_order"] = to_array(r.columns);
  d["row_scores"] = to_array(std::move(r.row_scores));
  d["column_scores"] = to_array(std::move(r.column_scores));
  return d;
}

template <typename Function>
void define(py::module_& m, const FunctionSpec& spec, Function function) {
  m.def(spec.name.c_str(), function, register_function(m, spec).c_str(), py::arg("matrix"));
}

std::vector<OptionSpec> with_binarize(std::vector<OptionSpec> specs) {
  std::vector<OptionSpec> all = binarize_specs();
  all.insert(all.end(), specs.begin(), specs.end());
  return all;
}

}  // namespace

void register_structure(py::module_& m) {
  const OptionSpec order{"order", py::str("by-degree"),
                         "by-degree (rows and columns by decreasing degree) | as-given"};
  define(m,
         {"binarize",
          "The 0/1 links of a matrix by a stated rule.",
          {kMatrixArray},
          {},
          binarize_specs(),
          "numpy array of uint8, n x m."},
         &binarize_binding);
  define(m,
         {"connectance",
          "Links / (n m) of the matrix binarised by the rule.",
          {kMatrixArray},
          {},
          binarize_specs(),
          "float in [0, 1]."},
         &connectance_binding);
  define(m,
         {"nodf",
          "NODF (Almeida-Neto et al. 2008, Oikos 117:1227) of the matrix binarised by the rule:\n"
          "mean paired nestedness over row pairs, column pairs and all pairs, in [0, 100].",
          {kMatrixArray},
          {},
          with_binarize({order}),
          "Result: nodf (all pairs), nodf_rows, nodf_columns, binarize (the rule in words)."},
         &nodf_binding);
  define(m,
         {"wnodf",
          "WNODF (Almeida-Neto & Ulrich 2011) of the weights on the links the rule keeps, as\n"
          "`allocsim analyze` reports it; in [0, 100].",
          {kMatrixArray},
          {},
          with_binarize({order}),
          "Result: wnodf (all pairs), wnodf_rows, wnodf_columns, binarize."},
         &wnodf_binding);
  define(m,
         {"spectral_radius",
          "Largest singular value of the biadjacency matrix: of the links by the rule, or of\n"
          "the weights themselves with weighted=True.",
          {kMatrixArray},
          {},
          with_binarize({{"weighted", py::bool_(false), "True: of the weights, not the links"}}),
          "float."},
         &spectral_radius_binding);
  const FitnessComplexityOptions fc;
  define(m,
         {"fitness_complexity",
          "Fitness-Complexity (Tacchella et al. 2012) of the links: row fitness, column\n"
          "complexity (mean 1 over rows or columns with links) and the orders they induce.\n"
          "Scores decaying to zero are status 'scores_decay', not an error.",
          {kMatrixArray},
          {},
          with_binarize({{"tolerance", py::float_(fc.tolerance),
                          "relative change of the scores to stop at; in (0, 1)"},
                         {"max_iterations", py::int_(fc.max_iterations), "iterations; >= 1"},
                         {"zero_threshold", py::float_(fc.zero_threshold),
                          "a score below this has decayed; in (0, 1)"}}),
          "Result: status, message, fitness (n), complexity (m), row_order, column_order\n"
          "(indices, highest first), iterations, last_change, decaying_rows, decaying_columns."},
         &fitness_complexity_binding);
  define(m,
         {"eci",
          "Economic Complexity Index (Hidalgo & Hausmann 2009) of the links: rows (ECI) and\n"
          "columns (PCI), standardised, signed to correlate with the row degree.",
          {kMatrixArray},
          {},
          binarize_specs(),
          "Result: status ('computed' | 'degenerate' | 'no_links'), message, row_index,\n"
          "column_index, row_order, column_order, second_eigenvalue, eigen_gap."},
         &eci_binding);
  define(m,
         {"gradient_order",
          "Correspondence-analysis order of the weights (reciprocal averaging): rows and\n"
          "columns along the matrix's main gradient, as the heatmaps draw them.",
          {kMatrixArray},
          {},
          {},
          "Result: row_order, column_order (indices), row_scores, column_scores."},
         &gradient_order_binding);
}

}  // namespace allocsim::python
