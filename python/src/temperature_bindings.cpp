// estimate_temperature, analyze, fit_gains and fit_latent_association: the
// analysis of one allocation. analyze returns exactly the object `allocsim analyze --json`
// prints (the same function writes it).
#include <cmath>

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/analysis/gains_fit.hpp"
#include "allocsim/analysis/gains_reconstruction.hpp"
#include "allocsim/analysis/temperature.hpp"
#include "allocsim/core/error.hpp"
#include "arguments.hpp"
#include "bindings.hpp"

namespace allocsim::python {
namespace {

const std::pair<std::string, std::string> kAllocationArray = {
    "allocation", "n x m, units (or shares) sent by agent i to partner j; >= 0"};
const std::pair<std::string, std::string> kAccessArray = {
    "access", "n x m of 0/1, or None: 0 = agent i can never use partner j"};

// values = "auto" | "counts" | "shares" and units = N decide how the
// allocation's total is read: counts give standard errors and intervals.
void apply_value_kind(const Options& options, ObservedAllocation& observed) {
  std::string values = "auto";
  options.read("values", values);
  if (values == "counts") {
    if (!observed.counts)
      value_error("values",
                  "'counts' but the allocation holds numbers that are not whole; "
                  "use values='shares', or units=N for shares of N units");
  } else if (values == "shares") {
    observed.counts = false;
    observed.units = 0;
  } else if (values != "auto") {
    value_error("values", "'" + values + "' is not one of auto, counts, shares");
  }
  if (options.given("units")) {
    double units = 0;
    options.read("units", units);
    if (!(units > 0 && std::isfinite(units)))
      value_error("units", "must be a positive number of units");
    observed.counts = true;
    observed.units = units;
  }
}

TemperatureOptions temperature_options(const Options& options) {
  TemperatureOptions t;
  options.read("confidence", t.confidence);
  options.read("beta_tolerance", t.beta_tolerance);
  options.read("sinkhorn_tolerance", t.sinkhorn_tolerance);
  options.read("max_sinkhorn_iterations", t.max_sinkhorn_iterations);
  options.read("max_solves", t.max_solves);
  options.read("boundary_tolerance", t.boundary_tolerance);
  options.read("interval", t.interval);
  t.validate();
  return t;
}

py::array indices(const std::vector<Eigen::Index>& values) { return to_array(values); }

py::dict temperature_fields(TemperatureResult&& t, const ObservedAllocation& o, Eigen::Index rows,
                            Eigen::Index columns) {
  py::dict d;
  d["epsilon"] = t.epsilon;
  d["stderr"] = t.standard_error;
  d["ci_low"] = t.ci_low;
  d["ci_high"] = t.ci_high;
  d["status"] = to_string(t.status);
  d["beta"] = t.beta;
  d["confidence"] = t.confidence;
  d["ci_high_infinite"] = std::isinf(t.ci_high);
  d["observed_gain"] = t.observed_gain;
  d["fitted_gain"] = t.fitted_gain;
  d["optimum_gain"] = t.optimum_gain;
  d["independent_gain"] = t.independent_gain;
  d["solves"] = t.solves;
  d["message"] = t.message;
  d["search_steps"] = t.search_steps;
  d["conditional_variance"] = t.conditional_variance;
  d["counts"] = o.counts;
  d["units"] = o.counts ? py::object(py::float_(o.units)) : py::object(py::none());
  d["note"] = o.note;
  d["dropped_rows"] = indices(o.dropped_rows);
  d["dropped_columns"] = indices(o.dropped_columns);
  d["coupling"] = t.coupling.size() ? to_array(expand_to_input(t.coupling, o, rows, columns))
                                    : to_array(Matrix());
  return d;
}

py::dict estimate_temperature_binding(const py::object& allocation, const py::object& gains,
                                      const py::object& access, const py::kwargs& kwargs) {
  const Options options("estimate_temperature", kwargs);
  const Matrix p = matrix_argument(allocation, "allocation");
  const Matrix g = matrix_argument(gains, "gains");
  const std::optional<AccessMask> a = access_argument(access, "access");
  const TemperatureOptions t = temperature_options(options);
  ObservedAllocation observed = observe_allocation(p, g, a);
  apply_value_kind(options, observed);
  TemperatureResult result;
  {
    py::gil_scoped_release release;
    result = estimate_temperature(observed, t);
  }
  return temperature_fields(std::move(result), observed, p.rows(), p.cols());
}

std::vector<OptionSpec> temperature_specs() {
  const TemperatureOptions t;
  return {
      {"values", py::str("auto"), "'auto' (counts when every cell is whole), 'counts' or 'shares'"},
      {"units", py::none(), "N, the units the shares stand for (gives errors and intervals)"},
      {"confidence", py::float_(t.confidence), "level of the likelihood-ratio interval; in (0, 1)"},
      {"beta_tolerance", py::float_(t.beta_tolerance),
       "stop when a step changes log(1/epsilon) by less; in (0, 1e-3]"},
      {"sinkhorn_tolerance", py::float_(t.sinkhorn_tolerance),
       "relative L1 marginal violation of each entropic solve; in (0, 1e-6]"},
      {"max_sinkhorn_iterations", py::int_(t.max_sinkhorn_iterations), "per solve; >= 1"},
      {"max_solves", py::int_(t.max_solves), "entropic solves in all; >= 10"},
      {"boundary_tolerance", py::float_(t.boundary_tolerance),
       "share of (optimum - independent gain) within which the observed gain is at a "
       "boundary; in [0, 0.01]"},
      {"interval", py::bool_(t.interval), "compute the likelihood-ratio interval (counts only)"}};
}

// ---- analyze ----

py::object analyze_binding(const py::object& allocation, const py::object& gains,
                           const py::object& access, const py::kwargs& kwargs) {
  const Options options("analyze", kwargs);
  AllocationInput input;
  input.allocation = matrix_argument(allocation, "allocation");
  if (!gains.is_none()) input.gains = matrix_argument(gains, "gains");  // none: structure only
  input.access = access_argument(access, "access");
  AllocationAnalysisOptions analysis;
  options.read("confidence", analysis.temperature.confidence);
  analysis.binarize = binarize_options(options);
  if (options.given("nulls")) {
    std::string model;
    options.read("nulls", model);
    NullOptions nulls;
    nulls.model = null_model_from_string(model);
    nulls.samples = 200;
    options.read("null_samples", nulls.samples);
    long seed = 1;
    options.read("seed", seed);
    if (seed < 0) value_error("seed", "must be >= 0");
    nulls.seed = static_cast<std::uint64_t>(seed);
    analysis.nulls = nulls;
  }
  check_under_names(
      [&] { analysis.validate(); },
      [](const std::string& field) { return field == "samples" ? "null_samples" : field; });
  std::string json;
  {
    py::gil_scoped_release release;
    const AllocationReport report = analyze_allocation(input, analysis);
    json = allocation_report_json(report).str();
  }
  return py::module_::import("json").attr("loads")(json);
}

// ---- fit_gains ----

py::dict fit_gains_binding(const py::object& allocation, const py::object& features,
                           const py::object& access, const py::kwargs& kwargs) {
  const Options options("fit_gains", kwargs);
  const Matrix p = matrix_argument(allocation, "allocation");
  std::vector<Matrix> matrices;
  std::vector<std::string> names;
  if (py::isinstance<py::dict>(features)) {
    for (const auto& item : py::reinterpret_borrow<py::dict>(features)) {
      names.push_back(py::str(item.first));
      matrices.push_back(matrix_argument(item.second, "features['" + names.back() + "']"));
    }
  } else {
    if (!py::isinstance<py::sequence>(features) || py::isinstance<py::str>(features))
      value_error("features", "must be a list of n x m arrays or a dict of them by name");
    long k = 0;
    for (const py::handle& feature : features) {
      names.push_back("features[" + std::to_string(k++) + "]");
      matrices.push_back(matrix_argument(feature, names.back()));
    }
  }
  if (matrices.empty()) value_error("features", "holds no feature");
  GainsFitOptions fit;
  options.read("tolerance", fit.tolerance);
  options.read("max_iterations", fit.max_iterations);
  options.read("max_lambda", fit.max_lambda);
  options.read("confidence", fit.confidence);
  fit.validate();
  // The fit profiles the margins out and never reads the gains: zeros stand in.
  ObservedAllocation observed =
      observe_allocation(p, Matrix::Zero(p.rows(), p.cols()), access_argument(access, "access"));
  apply_value_kind(options, observed);
  GainsFitResult r;
  {
    py::gil_scoped_release release;
    r = fit_gains(observed, matrices, names, fit);
  }
  py::dict d;
  d["status"] = to_string(r.status);
  d["message"] = r.message;
  d["names"] = names;
  d["theta_over_epsilon"] = to_array(std::move(r.theta_over_epsilon));
  d["standard_errors"] = to_array(std::move(r.standard_errors));
  d["interval_low"] = to_array(std::move(r.ci_low));
  d["interval_high"] = to_array(std::move(r.ci_high));
  d["confidence"] = r.confidence;
  d["deviance"] = r.fit.deviance;
  d["degrees_of_freedom"] = r.fit.degrees_of_freedom;
  d["log_likelihood"] = r.fit.log_likelihood;
  d["aic"] = r.fit.aic;
  d["bic"] = r.fit.bic;
  Matrix covariance = r.covariance;
  d["covariance"] = to_array(std::move(covariance));
  d["moment_error"] = r.moment_error;
  d["iterations"] = r.iterations;
  d["counts"] = observed.counts;
  d["units"] = observed.counts ? py::object(py::float_(observed.units)) : py::object(py::none());
  d["note"] = observed.note;
  d["coupling"] = r.coupling.size()
                      ? to_array(expand_to_input(r.coupling, observed, p.rows(), p.cols()))
                      : to_array(Matrix());
  return d;
}

// ---- fit_latent_association ----

// Kept rows (or columns) of `kept` put back at their input positions; NaN
// in the left-out ones.
Matrix scores_in_input_order(const Matrix& kept, const std::vector<Eigen::Index>& positions,
                             Eigen::Index count) {
  Matrix out = Matrix::Constant(count, kept.cols(), std::nan(""));
  for (std::size_t k = 0; k < positions.size(); ++k)
    out.row(positions[k]) = kept.row(static_cast<Eigen::Index>(k));
  return out;
}

LatentAssociationOptions latent_options(const Options& options) {
  LatentAssociationOptions latent;
  const py::object rank = options.value("rank");
  if (!rank.is_none()) {
    if (py::isinstance<py::str>(rank)) {
      if (rank.cast<std::string>() != "auto")
        value_error("rank", "'" + rank.cast<std::string>() + "' is not 'auto' or a K >= 0");
      latent.rank = -1;
    } else if (py::isinstance<py::int_>(rank) && !py::isinstance<py::bool_>(rank)) {
      latent.rank = rank.cast<long>();
      if (latent.rank < 0) value_error("rank", "must be 'auto' or a whole number >= 0");
    } else {
      throw py::type_error("rank: must be 'auto' or an int");
    }
  }
  options.read("max_rank", latent.max_rank);
  options.read("tolerance", latent.tolerance);
  options.read("max_sweeps", latent.max_sweeps);
  options.read("random_starts", latent.random_starts);
  long seed = static_cast<long>(latent.seed);
  options.read("seed", seed);
  if (seed < 0) value_error("seed", "must be >= 0");
  latent.seed = static_cast<std::uint64_t>(seed);
  latent.validate();
  return latent;
}

py::dict fit_latent_binding(const py::object& allocation, const py::object& access,
                            const py::kwargs& kwargs) {
  const Options options("fit_latent_association", kwargs);
  const Matrix p = matrix_argument(allocation, "allocation");
  // The fit never reads the gains: zeros stand in.
  ObservedAllocation observed =
      observe_allocation(p, Matrix::Zero(p.rows(), p.cols()), access_argument(access, "access"));
  apply_value_kind(options, observed);
  GainsReconstructionOptions reconstruction;
  reconstruction.latent = latent_options(options);
  GainsReconstructionReport report;
  {
    py::gil_scoped_release release;
    report = reconstruct_gains(observed, {}, reconstruction);
  }
  // The JSON of `allocsim analyze --json` for the scalar fields and the model table.
  const py::object loads = py::module_::import("json").attr("loads");
  const py::dict json = loads(gains_reconstruction_json(report).str());
  py::dict d;
  for (const auto& item : py::reinterpret_borrow<py::dict>(json["latent"])) {
    const std::string key = py::str(item.first);
    if (key != "row_scores" && key != "column_scores") d[item.first] = item.second;
  }
  LatentAssociationResult& l = *report.latent;
  d["strengths"] = to_array(std::move(l.strengths));
  d["strength_standard_errors"] = to_array(std::move(l.strength_errors));
  d["row_scores"] = to_array(scores_in_input_order(l.row_scores, observed.kept_rows, p.rows()));
  d["column_scores"] =
      to_array(scores_in_input_order(l.column_scores, observed.kept_columns, p.cols()));
  d["models"] = json["models"];
  d["coupling"] = to_array(expand_to_input(l.coupling, observed, p.rows(), p.cols()));
  Matrix association = expand_to_input(l.association, observed, p.rows(), p.cols());
  for (const Eigen::Index i : observed.dropped_rows) association.row(i).setConstant(std::nan(""));
  for (const Eigen::Index j : observed.dropped_columns)
    association.col(j).setConstant(std::nan(""));
  d["association"] = to_array(std::move(association));
  d["counts"] = observed.counts;
  d["units"] = observed.counts ? py::object(py::float_(observed.units)) : py::object(py::none());
  d["note"] = observed.note;
  return d;
}

}  // namespace

void register_temperature(py::module_& m) {
  FunctionSpec temperature_spec{
      "estimate_temperature",
      "Maximum-likelihood transport temperature epsilon of an allocation with known gains:\n"
      "the epsilon whose entropic coupling with the allocation's own marginals has the\n"
      "allocation's total gain (a Poisson log-linear model with row and column effects and\n"
      "the gains as covariate; epsilon = 1 / its coefficient). With counts, a standard error\n"
      "(Fisher information) and a likelihood-ratio interval. All-zero rows and columns are\n"
      "left out (see note). Boundaries are statuses, not exceptions: 'at_optimum' (epsilon 0),\n"
      "'not_explained_by_noise' (epsilon inf), 'not_converged'. Releases the GIL.",
      {kAllocationArray,
       {"gains", "n x m, gain per unit (gain units: epsilon is in them too)"},
       kAccessArray},
      {"None"},
      temperature_specs(),
      "Result with the fields of the 'temperature' object of `allocsim analyze --json`:\n"
      "epsilon (gain units), stderr, ci_low, ci_high, status, beta = 1/epsilon, confidence,\n"
      "ci_high_infinite, observed_gain, fitted_gain, optimum_gain, independent_gain, solves,\n"
      "message (nan where the JSON has null); also search_steps, conditional_variance,\n"
      "counts, units, note, dropped_rows, dropped_columns and coupling (n x m, the entropic\n"
      "coupling at the estimate as shares, zero in dropped rows and columns)."};
  m.def("estimate_temperature", &estimate_temperature_binding,
        register_function(m, temperature_spec).c_str(), py::arg("allocation"), py::arg("gains"),
        py::arg("access") = py::none());

  FunctionSpec analyze_spec{
      "analyze",
      "The analysis of `allocsim analyze --json` on arrays: the temperature, the comparison\n"
      "with the exact and the entropic couplings, and the structure (connectance, NODF,\n"
      "WNODF, spectral radius; with nulls, NODF and WNODF against a null ensemble).\n"
      "Releases the GIL.",
      {kAllocationArray, {"gains", "n x m, gain per unit"}, kAccessArray},
      {"None", "None"},
      {{"confidence", py::float_(0.95), "level of the temperature interval; in (0, 1)"},
       {"binarize", py::str("positive"),
        "link rule for the structure: positive | row-share | min-count | revealed-advantage"},
       {"threshold", py::none(), "threshold of the link rule (None: the rule's own)"},
       {"nulls", py::none(), "None, or a null model: curveball | bicm | fixed-margins"},
       {"null_samples", py::int_(200), "size of the null ensemble; >= 2"},
       {"seed", py::int_(1), "seed of the null ensemble"}},
      "dict: the JSON object of `allocsim analyze --json` (null as None); with pandas\n"
      "DataFrames, also agent_labels and partner_labels."};
  m.def("analyze", &analyze_binding, register_function(m, analyze_spec).c_str(),
        py::arg("allocation"), py::arg("gains") = py::none(), py::arg("access") = py::none());

  const GainsFitOptions fit;
  FunctionSpec fit_spec{
      "fit_gains",
      "Fits gains = sum_k theta_k F_k from feature matrices when the gains are unknown, by\n"
      "maximum likelihood of the log-linear model pi_ij = exp(sum_k lambda_k F_k,ij + a_i + b_j)\n"
      "with the allocation's marginals (moment matching). Only lambda = theta / epsilon is\n"
      "identified, and only beyond row and column constants: an additive feature, or\n"
      "collinear features, raise ValueError. Releases the GIL.",
      {kAllocationArray,
       {"features", "list of n x m arrays, or a dict of them by name"},
       kAccessArray},
      {"None"},
      {{"values", py::str("auto"), "'auto', 'counts' or 'shares' (counts give standard errors)"},
       {"units", py::none(), "N, the units the shares stand for"},
       {"tolerance", py::float_(fit.tolerance),
        "stop when max_k |<F_k, pi> - <F_k, p>| / max|F_k| <= this; in (0, 1e-3]"},
       {"max_iterations", py::int_(fit.max_iterations), "Newton steps; >= 1"},
       {"max_lambda", py::float_(fit.max_lambda), "|lambda_k| * max|F_k| above this diverges; > 0"},
       {"confidence", py::float_(fit.confidence),
        "level of the likelihood-ratio intervals; in (0, 1)"}},
      "Result: status ('converged' | 'not_converged'), message, names, theta_over_epsilon\n"
      "(one per feature), standard_errors and covariance (nan without counts), interval_low\n"
      "and interval_high (likelihood-ratio interval of each weight at `confidence`; nan\n"
      "without counts, +-inf when the profile never drops enough), confidence, deviance,\n"
      "degrees_of_freedom, log_likelihood, aic, bic (nan without counts), moment_error,\n"
      "iterations, counts, units, note, coupling (n x m shares at the fit)."};
  m.def("fit_gains", &fit_gains_binding, register_function(m, fit_spec).c_str(),
        py::arg("allocation"), py::arg("features"), py::arg("access") = py::none());

  const LatentAssociationOptions latent;
  FunctionSpec latent_spec{
      "fit_latent_association",
      "Reconstructs the gains from the allocation alone: the row-column association model\n"
      "RC(K) of Goodman (1979, 1985), gains/epsilon = sum_k sigma_k a_k b_k^T up to row and\n"
      "column constants, fitted by maximum likelihood with the margins profiled out (as\n"
      "`allocsim analyze --latent-rank`). Scores have zero mean and unit variance weighted\n"
      "by the observed margins; sigma_1 is 1/epsilon for latent traits of unit spread.\n"
      "rank='auto' chooses K from 0 to max_rank by BIC (needs counts). A rank at or above\n"
      "the saturated one raises ValueError; a fit that does not converge is status\n"
      "'not_converged'. Releases the GIL.",
      {kAllocationArray, kAccessArray},
      {"None"},
      {{"rank", py::str("auto"), "'auto' or K >= 0, below min(n, m) - 1 of the kept table"},
       {"max_rank", py::int_(latent.max_rank), "largest K that 'auto' tries; >= 1"},
       {"values", py::str("auto"), "'auto', 'counts' or 'shares' (counts give standard errors)"},
       {"units", py::none(), "N, the units the shares stand for"},
       {"tolerance", py::float_(latent.tolerance),
        "stop when every score equation holds to this, per unit; in (0, 1e-4]"},
       {"max_sweeps", py::int_(latent.max_sweeps), "block coordinate sweeps per start; >= 1"},
       {"random_starts", py::int_(latent.random_starts),
        "seeded random starts besides the two deterministic ones; >= 0"},
       {"seed", py::int_(static_cast<long>(latent.seed)), "seed of the random starts"}},
      "Result with the fields of the 'latent' object of `allocsim analyze --json`: status,\n"
      "message, rank, rank_chosen_by_bic, strengths, strength_standard_errors (nan without\n"
      "counts), sweeps, score_equation_error, strength_meaning; row_scores (n x K) and\n"
      "column_scores (m x K) as arrays in input order (nan in all-zero rows and columns);\n"
      "models (the JSON's model table: independence, each latent rank, saturated);\n"
      "association (n x m, gains/epsilon up to row and column constants; nan where left\n"
      "out), coupling (n x m shares at the fit), counts, units, note."};
  m.def("fit_latent_association", &fit_latent_binding, register_function(m, latent_spec).c_str(),
        py::arg("allocation"), py::arg("access") = py::none());
}

}  // namespace allocsim::python
