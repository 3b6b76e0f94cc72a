// The null models (curveball, bicm, fixed_margins): the sampled matrices and
// the comparison of structure metrics with them, drawn and scored exactly as
// `allocsim analyze --nulls` does (same seed, same numbers).
#include <cstring>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/analysis/nestedness.hpp"
#include "allocsim/analysis/null_models.hpp"
#include "allocsim/core/error.hpp"
#include "arguments.hpp"
#include "bindings.hpp"

namespace allocsim::python {
namespace {

// A metric by name, or a Python callable taking one matrix (called with the GIL).
struct NamedMetric {
  std::string name;
  MetricFunction function;
};

NamedMetric metric_by_name(const std::string& name, const BinarizeOptions& rule) {
  if (name == "nodf")
    return {name, [rule](const Matrix& m) { return nodf(binarize(m, rule)).total; }};
  if (name == "wnodf")
    return {name, [rule](const Matrix& m) {
              return wnodf(m.cwiseProduct(to_matrix(binarize(m, rule)))).total;
            }};
  if (name == "connectance")
    return {name, [rule](const Matrix& m) { return connectance(binarize(m, rule)); }};
  if (name == "spectral_radius")
    return {name, [rule](const Matrix& m) { return spectral_radius(binarize(m, rule)); }};
  value_error("metrics", "'" + name +
                             "' is not one of nodf, wnodf, connectance, spectral_radius "
                             "(or give a function of one matrix)");
}

NamedMetric metric_from_callable(const py::object& function) {
  std::string name = py::hasattr(function, "__name__")
                         ? py::str(function.attr("__name__")).cast<std::string>()
                         : std::string("metric");
  return {name, [function](const Matrix& m) {
            py::gil_scoped_acquire acquire;
            py::array_t<double> array({m.rows(), m.cols()});
            std::memcpy(array.mutable_data(), m.data(), sizeof(double) * m.size());
            return function(array).cast<double>();
          }};
}

std::vector<NamedMetric> metrics_option(const Options& options, const BinarizeOptions& rule,
                                        const std::vector<std::string>& defaults) {
  std::vector<NamedMetric> metrics;
  if (!options.given("metrics")) {
    for (const std::string& name : defaults) metrics.push_back(metric_by_name(name, rule));
    return metrics;
  }
  py::object given = options.value("metrics");
  if (py::isinstance<py::str>(given) || PyCallable_Check(given.ptr()))
    given = py::make_tuple(given);
  for (const py::handle& item : given) {
    if (py::isinstance<py::str>(item))
      metrics.push_back(metric_by_name(item.cast<std::string>(), rule));
    else if (PyCallable_Check(item.ptr()))
      metrics.push_back(metric_from_callable(py::reinterpret_borrow<py::object>(item)));
    else
      value_error("metrics", "holds " + py::repr(item).cast<std::string>() +
                                 ", neither a metric name nor a function");
  }
  return metrics;
}

py::dict comparison_fields(const NullComparison& c) {
  py::dict d;
  d["model"] = to_string(c.model);
  d["model_description"] = c.model_description;
  d["samples"] = c.samples;
  d["seed"] = c.seed;
  d["observed"] = c.observed;
  d["null_mean"] = c.null_mean;
  d["null_sd"] = c.null_sd;
  d["z_score"] = c.z_score;
  d["p_upper"] = c.p_upper;
  d["p_two_sided"] = c.p_two_sided;
  d["status"] = to_string(c.status);
  d["message"] = c.message;
  d["null_values"] = to_array(c.null_values);
  return d;
}

// Sampled matrices, k x n x m: float64 for the weighted model, uint8 for binary ones.
class SampleStore {
 public:
  SampleStore(bool keep, bool binary, long samples, Eigen::Index rows, Eigen::Index columns)
      : keep_(keep), binary_(binary), cell_count_(rows * columns) {
    if (!keep_) return;
    if (binary_)
      array_ = py::array_t<std::uint8_t>(
          {py::ssize_t(samples), py::ssize_t(rows), py::ssize_t(columns)});
    else
      array_ = py::array_t<double>({py::ssize_t(samples), py::ssize_t(rows), py::ssize_t(columns)});
    data_ = array_.mutable_data();
  }
  void store(long k, const Matrix& m) {
    if (!keep_) return;
    if (binary_) {
      auto* out = static_cast<std::uint8_t*>(data_) + k * cell_count_;
      for (Eigen::Index c = 0; c < cell_count_; ++c) out[c] = m.data()[c] != 0 ? 1 : 0;
    } else {
      std::memcpy(static_cast<double*>(data_) + k * cell_count_, m.data(),
                  sizeof(double) * cell_count_);
    }
  }
  py::object array() const { return keep_ ? py::object(array_) : py::object(py::none()); }

 private:
  bool keep_, binary_;
  Eigen::Index cell_count_;
  py::array array_;
  void* data_ = nullptr;
};

py::dict sample_nulls(NullModel model, const std::string& function, const py::object& matrix,
                      const py::kwargs& kwargs, const std::vector<std::string>& default_metrics) {
  const Options options(function, kwargs);
  const Matrix values = matrix_argument(matrix, "matrix");
  const BinarizeOptions rule = binarize_options(options);
  NullOptions nulls;
  nulls.model = model;
  options.read("samples", nulls.samples);
  long seed = static_cast<long>(nulls.seed);
  options.read("seed", seed);
  if (seed < 0) value_error("seed", "must be >= 0");
  nulls.seed = static_cast<std::uint64_t>(seed);
  options.read("trades", nulls.curveball_trades);
  options.read("share_units", nulls.share_units);
  options.read("tolerance", nulls.bicm.tolerance);
  options.read("max_iterations", nulls.bicm.max_iterations);
  check_under_names([&] { nulls.validate(); },
                    [](const std::string& field) {
                      return field == "curveball_trades" ? std::string("trades") : field;
                    });
  bool keep = true;
  options.read("keep_samples", keep);
  // One thread evaluates the metrics: the samples are stored in the order
  // the metric sees them, and Python metrics hold the GIL anyway.
  nulls.threads = 1;

  const bool weighted = model == NullModel::fixed_margins;
  Matrix observed;
  try {
    observed = weighted ? values : to_matrix(binarize(values, rule));
    if (weighted) binarize(values, rule);  // checks the entries (negative, not finite)
  } catch (const InputError& e) {
    throw py::value_error("matrix" + std::string(e.what()).substr(e.where().size()));
  }
  const BinarizeOptions metric_rule = weighted ? rule : BinarizeOptions{};
  std::vector<NamedMetric> metrics = metrics_option(options, metric_rule, default_metrics);
  if (metrics.empty()) metrics.push_back({"", [](const Matrix&) { return 0.0; }});

  SampleStore store(keep, !weighted, nulls.samples, values.rows(), values.cols());
  std::vector<NullComparison> comparisons;
  std::string description;
  {
    py::gil_scoped_release release;
    for (std::size_t q = 0; q < metrics.size(); ++q) {
      long calls = 0;
      const MetricFunction& metric = metrics[q].function;
      const MetricFunction recording = [&](const Matrix& m) {
        if (q == 0 && calls > 0) store.store(calls - 1, m);
        ++calls;
        return metric(m);
      };
      comparisons.push_back(compare_with_null(recording, observed, nulls));
    }
  }
  py::dict d;
  d["model"] = to_string(model);
  d["model_description"] = comparisons.front().model_description;
  d["samples"] = store.array();
  d["reference"] = to_array(Matrix(observed));
  d["binarize"] = describe(rule);
  py::dict by_metric;
  for (std::size_t q = 0; q < metrics.size(); ++q)
    if (!metrics[q].name.empty())
      by_metric[py::str(metrics[q].name)] = comparison_fields(comparisons[q]);
  d["comparisons"] = by_metric;
  if (model == NullModel::bicm) {
    BicmFit fit = fit_bicm(binarize(values, rule), nulls.bicm);
    d["fit_status"] = to_string(fit.status);
    d["fit_message"] = fit.message;
    d["probabilities"] = to_array(std::move(fit.probabilities));
    d["row_values"] = to_array(std::move(fit.row_values));
    d["column_values"] = to_array(std::move(fit.column_values));
    d["max_degree_error"] = fit.max_degree_error;
    d["fit_iterations"] = fit.iterations;
  }
  return d;
}

std::vector<OptionSpec> common_specs(const std::vector<std::string>& default_metrics) {
  const NullOptions defaults;
  return {{"samples", py::int_(defaults.samples), "ensemble size; >= 2"},
          {"seed", py::int_(defaults.seed), "seed of every random draw (same seed, same ensemble)"},
          {"binarize", py::str("positive"),
           "link rule: positive | row-share | min-count | revealed-advantage"},
          {"threshold", py::none(), "threshold of the link rule (None: the rule's own)"},
          {"metrics", py::tuple(py::cast(default_metrics)),
           "metrics compared with the ensemble: names (nodf, wnodf, connectance,\n"
           "    spectral_radius) or functions of one matrix returning a float"},
          {"keep_samples", py::bool_(true), "False: return no sampled matrices (saves memory)"}};
}

const char* const kNullReturns =
    "Result: model, model_description, samples (samples x n x m; uint8 for binary models,\n"
    "float64 for fixed_margins; None without keep_samples), reference (the matrix the\n"
    "metrics see as the observation), binarize, and comparisons: a dict by metric name of\n"
    "Results with the fields of `allocsim analyze --json`'s nodf_null (model, samples, seed,\n"
    "null_mean, null_sd, z_score, p_upper, p_two_sided, status) plus observed, message\n"
    "and null_values.";

}  // namespace

void register_nulls(py::module_& m) {
  const NullOptions defaults;
  std::vector<OptionSpec> curveball = common_specs({"nodf"});
  curveball.push_back({"trades", py::int_(defaults.curveball_trades),
                       "trades between samples; 0 = max(100, 5 rows); >= 0"});
  FunctionSpec curveball_spec{
      "curveball",
      "Curveball null model (Strona et al. 2014): binary matrices with exactly the degrees\n"
      "of the matrix binarised by the rule, as states of one chain spaced by `trades`\n"
      "trades. Releases the GIL (callable metrics take it back per sample).",
      {{"matrix", "n x m, non-negative weights or 0/1 links"}},
      {},
      curveball,
      kNullReturns};
  m.def(
      "curveball",
      [](const py::object& matrix, const py::kwargs& kwargs) {
        return sample_nulls(NullModel::curveball, "curveball", matrix, kwargs, {"nodf"});
      },
      register_function(m, curveball_spec).c_str(), py::arg("matrix"));

  std::vector<OptionSpec> bicm = common_specs({"nodf"});
  bicm.push_back({"tolerance", py::float_(defaults.bicm.tolerance),
                  "fit: max |expected - observed degree| to stop at; > 0"});
  bicm.push_back({"max_iterations", py::int_(defaults.bicm.max_iterations),
                  "fit: fixed-point sweeps at most; >= 1"});
  FunctionSpec bicm_spec{
      "bicm",
      "Bipartite configuration model (Saracco et al. 2015): independent links with\n"
      "p_ij = x_i y_j / (1 + x_i y_j) fitted so that expected degrees equal the observed\n"
      "ones. A fit that does not converge is fit_status 'not_converged', not an error.",
      {{"matrix", "n x m, non-negative weights or 0/1 links"}},
      {},
      bicm,
      std::string(kNullReturns) +
          "\nAlso the fit: fit_status, fit_message, probabilities (n x m), row_values,\n"
          "column_values, max_degree_error, fit_iterations."};
  m.def(
      "bicm",
      [](const py::object& matrix, const py::kwargs& kwargs) {
        return sample_nulls(NullModel::bicm, "bicm", matrix, kwargs, {"nodf"});
      },
      register_function(m, bicm_spec).c_str(), py::arg("matrix"));

  std::vector<OptionSpec> fixed = common_specs({"nodf", "wnodf"});
  fixed.push_back({"share_units", py::int_(defaults.share_units),
                   "units of the multinomial table for a matrix of shares; >= 1"});
  FunctionSpec fixed_spec{
      "fixed_margins",
      "Weighted null model keeping the margins: for counts, tables with exactly the\n"
      "observed row and column totals (Patefield 1981); for shares, multinomial tables of\n"
      "share_units units rescaled to the total. Metrics read the links by the rule.",
      {{"matrix", "n x m, non-negative counts or shares"}},
      {},
      fixed,
      kNullReturns};
  m.def(
      "fixed_margins",
      [](const py::object& matrix, const py::kwargs& kwargs) {
        return sample_nulls(NullModel::fixed_margins, "fixed_margins", matrix, kwargs,
                            {"nodf", "wnodf"});
      },
      register_function(m, fixed_spec).c_str(), py::arg("matrix"));
}

}  // namespace allocsim::python
