// allocsim solve: exact or entropic transport from CSV files.
#include <algorithm>
#include <cmath>
#include <iostream>
#include <limits>
#include <optional>
#include <thread>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/label_alignment.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/core/output_file.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

struct SolveInputs {
  TransportProblem problem;
  ProblemSources sources;
  std::vector<std::string> agent_labels, partner_labels;
};

// Budgets and capacities matched to the gains' rows and columns by label
// (core/label_alignment.hpp); the access matrix on both sides.
Vector read_aligned_vector(const std::string& path, const std::vector<std::string>& labels,
                           Eigen::Index count, const std::string& gains_file, const char* side,
                           const char* noun) {
  const LabeledVector v = read_vector_csv(path);
  const LabelAlignment a =
      align_labels({labels, count, gains_file, ""}, {v.labels, v.values.size(), path, noun}, side);
  return reorder_entries(v.values, a.order);
}

AccessMask read_aligned_access(const std::string& path, const LabeledMatrix& gains,
                               const std::string& gains_file) {
  LabeledMatrix access = read_matrix_csv(path);
  access.values = read_access_csv(path).cast<double>();  // checks 0/1 with the cell named
  align_matrix(gains, gains_file, access, path);
  return access.values.cast<std::uint8_t>();
}

SolveInputs read_inputs(const po::variables_map& vm) {
  SolveInputs in;
  in.sources.gains = vm["gains"].as<std::string>();
  in.sources.budgets = vm["budgets"].as<std::string>();
  in.sources.capacities = vm["capacities"].as<std::string>();
  LabeledMatrix gains = read_matrix_csv(in.sources.gains);
  require_unique_labels(gains.row_labels, in.sources.gains, "row");
  require_unique_labels(gains.column_labels, in.sources.gains, "column");
  in.problem.budgets = read_aligned_vector(in.sources.budgets, gains.row_labels,
                                           gains.values.rows(), in.sources.gains, "row", "budgets");
  in.problem.capacities =
      read_aligned_vector(in.sources.capacities, gains.column_labels, gains.values.cols(),
                          in.sources.gains, "column", "capacities");
  if (vm.count("access")) {
    in.sources.access = vm["access"].as<std::string>();
    in.problem.access = read_aligned_access(in.sources.access, gains, in.sources.gains);
  }
  in.problem.gains = std::move(gains.values);
  in.agent_labels = std::move(gains.row_labels);
  in.partner_labels = std::move(gains.column_labels);
  if (vm.count("rescale")) {
    validate(in.problem, in.sources, std::numeric_limits<double>::infinity());
    rescale_capacities(in.problem);
  }
  validate(in.problem, in.sources);
  return in;
}

// Refuses, before solving, a problem whose working memory cannot fit (an
// estimate in dense n x m matrices of doubles: the exact solver's network
// holds about 16 per cell, Sinkhorn about 6).
void require_solve_memory(const SolveInputs& in, const std::string& method) {
  const double n = static_cast<double>(in.problem.agents());
  const double m = static_cast<double>(in.problem.partners());
  require_memory(dense_matrix_bytes(n, m, method == "exact" ? 16 : 6),
                 "an " + method + " solve of " + std::to_string(in.problem.agents()) + " x " +
                     std::to_string(in.problem.partners()) + " cells",
                 in.sources.gains, "use a smaller problem or a machine with more memory");
}

struct SolveReport {
  std::string status;
  bool ok = false;
  std::string message;
  Matrix coupling;
  JsonObject json;
  std::string brief;
  double total_gain = 0;
};

SolveReport solve_exactly(const TransportProblem& problem, double mass_units) {
  ExactOptions options;
  options.mass_units = mass_units;
  try {
    options.validate();
  } catch (const InputError& e) {
    throw e.at("--mass-units");
  }
  const ExactResult r = solve_exact(problem, options);
  SolveReport report{to_string(r.status), r.optimal(), r.message, r.coupling, {},
                     r.brief(),           r.total_gain};
  report.json.add("status", report.status)
      .add("method", "exact")
      .add("total_gain", r.total_gain)
      .add("iterations", 0)
      .add("marginal_error", r.marginal_error)
      .add("support_size", static_cast<long long>(r.support_size))
      .add("is_forest", r.support_is_forest)
      .add_null("epsilon")
      .add("seconds", r.seconds);
  return report;
}

SolveReport solve_entropically(const TransportProblem& problem, const EntropicOptions& options) {
  const EntropicResult r = solve_entropic(problem, options);
  SolveReport report{to_string(r.status), r.converged(), r.message, r.coupling, {},
                     r.brief(),           r.total_gain};
  const long long support = r.coupling.size() ? (r.coupling.array() > 0).count() : 0;
  report.json.add("status", report.status)
      .add("method", "entropic")
      .add("total_gain", r.total_gain)
      .add("iterations", static_cast<long long>(r.iterations))
      .add("marginal_error", r.marginal_error)
      .add("support_size", support)
      .add("is_forest", r.coupling.size() ? support_is_forest(r.coupling) : false)
      .add("epsilon", r.epsilon)
      .add("entropy", r.entropy)
      .add("primal_value", r.primal_value)
      .add("dual_value", r.dual_value)
      .add("stages", static_cast<long long>(r.stages))
      .add("seconds", r.seconds);
  return report;
}

EntropicOptions entropic_options(const po::variables_map& vm, const TransportProblem& problem) {
  EntropicOptions options;
  const bool absolute = vm.count("epsilon") > 0;
  const bool relative = vm.count("epsilon-of-range") > 0;
  if (absolute == relative) {
    throw InputError("--method entropic",
                     "needs exactly one of --epsilon E "
                     "(gain units) or --epsilon-of-range R (share of the gain range)");
  }
  if (absolute) {
    options.epsilon = vm["epsilon"].as<double>();
  } else {
    const double range = gain_range(problem);
    options.epsilon = vm["epsilon-of-range"].as<double>() * (range > 0 ? range : 1.0);
  }
  options.tolerance = vm["tolerance"].as<double>();
  options.max_iterations = vm["max-iterations"].as<long>();
  options.threads = checked_threads(vm);
  try {
    options.validate();
  } catch (const InputError& e) {
    throw e.at("--" + e.where());
  }
  return options;
}

}  // namespace

int solve_command(const Arguments& args) {
  po::options_description options("options");
  options.add_options()("gains", po::value<std::string>()->required(),
                        "CSV matrix of gains (agents x partners)")(
      "budgets", po::value<std::string>()->required(), "CSV vector of agent budgets")(
      "capacities", po::value<std::string>()->required(), "CSV vector of partner capacities")(
      "access", po::value<std::string>(), "CSV 0/1 matrix; 0 = the pair can never be used")(
      "method", po::value<std::string>()->default_value("exact"), "exact | entropic")(
      "epsilon", po::value<double>(), "transport temperature in gain units (entropic)")(
      "epsilon-of-range", po::value<double>(),
      "transport temperature as a share of the gain range")(
      "tolerance", po::value<double>()->default_value(1e-9, "1e-9"),
      "entropic: relative L1 marginal violation")(
      "max-iterations", po::value<long>()->default_value(100000),
      "entropic: Sinkhorn iteration limit")("threads",
                                            po::value<int>()->default_value(static_cast<int>(
                                                std::max(1u, std::thread::hardware_concurrency()))),
                                            "entropic: threads sharing each iteration")(
      "mass-units", po::value<double>()->default_value(1e12, "1e12"),
      "exact: integer units of the total mass (resolution of the marginals), in [1e3, 1e15]")(
      "rescale", "scale the capacities so their total equals the budgets' total")(
      "out", po::value<std::string>(), "write the coupling to this CSV file ('-': stdout)")(
      "json", "print one JSON object on stdout instead of the summary line");
  po::variables_map vm;
  if (!parse_or_help(args, options, {}, vm, "solve",
                     "--gains G.csv --budgets r.csv --capacities c.csv [--access A.csv] "
                     "[--method exact|entropic] [--epsilon E] [--out P.csv] [--json]"))
    return kExitOk;

  const std::string method = vm["method"].as<std::string>();
  if (method != "exact" && method != "entropic") {
    throw InputError("--method", "'" + method + "' is not one of exact, entropic");
  }
  const int threads = checked_threads(vm);
  (void)threads;
  const SolveInputs in = read_inputs(vm);
  if (vm.count("out") && vm["out"].as<std::string>() != "-") {
    const std::string out = vm["out"].as<std::string>();
    std::vector<std::pair<std::string, std::string>> inputs = {
        {"--gains", in.sources.gains},
        {"--budgets", in.sources.budgets},
        {"--capacities", in.sources.capacities}};
    if (vm.count("access")) inputs.emplace_back("--access", in.sources.access);
    require_distinct(out, "--out", inputs);
  }
  require_solve_memory(in, method);
  const SolveReport report = method == "exact"
                                 ? solve_exactly(in.problem, vm["mass-units"].as<double>())
                                 : solve_entropically(in.problem, entropic_options(vm, in.problem));
  if (report.ok && !std::isfinite(report.total_gain)) {
    throw InputError(in.sources.gains,
                     "the total gain exceeds the largest number a double holds "
                     "(about 1.8e308); divide the gains or the masses by a "
                     "constant (the optimal coupling does not change)");
  }
  const bool coupling_to_stdout = vm.count("out") && vm["out"].as<std::string>() == "-";
  if (vm.count("json")) {
    JsonObject json = report.json;
    if (!report.message.empty()) json.add("message", report.message);
    std::cout << json.str() << "\n";
  } else if (report.ok) {
    (coupling_to_stdout ? std::cerr : std::cout) << with_option_names(report.brief) << "\n";
  }
  if (!report.ok) {
    const std::string where =
        report.status == "infeasible" ? in.sources.access : "--method " + method;
    std::cerr << "allocsim solve: error: " << where << ": " << report.status << ": "
              << report.message << "\n";
    return kExitProblem;
  }
  if (coupling_to_stdout && !vm.count("json")) {
    write_matrix_csv(std::cout, report.coupling, in.agent_labels, in.partner_labels);
  } else if (vm.count("out")) {
    write_matrix_csv(vm["out"].as<std::string>(), report.coupling, in.agent_labels,
                     in.partner_labels);
  }
  return kExitOk;
}

}  // namespace allocsim::cli
