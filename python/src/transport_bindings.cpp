// solve_exact and solve_entropic: the fields of `allocsim solve --json`
// plus the coupling and the dual potentials as arrays.
#include <limits>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "arguments.hpp"
#include "bindings.hpp"

namespace allocsim::python {
namespace {

const std::vector<std::pair<std::string, std::string>> kProblemArrays = {
    {"gains", "n x m, gain per unit sent from agent i to partner j"},
    {"budgets", "n, budget of each agent (> 0)"},
    {"capacities", "m, capacity of each partner (> 0; same total as the budgets)"},
    {"access", "n x m of 0/1, or None: 0 = agent i can never use partner j"}};

const char* const kRescaleMeaning =
    "True: scale the capacities so their total equals the budgets' total";

TransportProblem problem_argument(const py::handle& gains, const py::handle& budgets,
                                  const py::handle& capacities, const py::handle& access,
                                  const Options& options) {
  TransportProblem problem;
  problem.gains = matrix_argument(gains, "gains");
  problem.budgets = vector_argument(budgets, "budgets");
  problem.capacities = vector_argument(capacities, "capacities");
  problem.access = access_argument(access, "access");
  bool rescale = false;
  options.read("rescale", rescale);
  if (rescale) {
    validate(problem, {}, std::numeric_limits<double>::infinity());
    rescale_capacities(problem);
  }
  validate(problem);
  return problem;
}

py::dict exact_fields(ExactResult&& r) {
  py::dict d;
  d["status"] = to_string(r.status);
  d["message"] = r.message;
  d["method"] = "exact";
  d["total_gain"] = r.total_gain;
  d["iterations"] = 0;
  d["marginal_error"] = r.marginal_error;
  d["support_size"] = r.support_size;
  d["is_forest"] = r.support_is_forest;
  d["epsilon"] = py::none();
  d["seconds"] = r.seconds;
  d["coupling"] = to_array(std::move(r.coupling));
  d["agent_potential"] = to_array(std::move(r.agent_potential));
  d["partner_potential"] = to_array(std::move(r.partner_potential));
  return d;
}

py::dict solve_exact_binding(const py::object& gains, const py::object& budgets,
                             const py::object& capacities, const py::object& access,
                             const py::kwargs& kwargs) {
  const Options options("solve_exact", kwargs);
  const TransportProblem problem = problem_argument(gains, budgets, capacities, access, options);
  ExactOptions exact;
  options.read("mass_units", exact.mass_units);
  exact.validate();
  ExactResult result;
  {
    py::gil_scoped_release release;
    result = solve_exact(problem, exact);
  }
  return exact_fields(std::move(result));
}

EntropicOptions entropic_options(const Options& options, const TransportProblem& problem) {
  EntropicOptions entropic;
  if (options.given("epsilon_of_range")) {
    if (options.given("epsilon"))
      value_error("epsilon_of_range", "give epsilon (gain units) or epsilon_of_range, not both");
    double share = 0;
    options.read("epsilon_of_range", share);
    const double range = gain_range(problem);
    entropic.epsilon = share * (range > 0 ? range : 1.0);
  }
  options.read("epsilon", entropic.epsilon);
  options.read("tolerance", entropic.tolerance);
  options.read("max_iterations", entropic.max_iterations);
  options.read("epsilon_shrink", entropic.epsilon_shrink);
  options.read("epsilon_scaling", entropic.epsilon_scaling);
  options.read("absorb_threshold", entropic.absorb_threshold);
  options.read("threads", entropic.threads);
  entropic.validate();
  return entropic;
}

py::dict entropic_fields(EntropicResult&& r) {
  const long long support = r.coupling.size() ? (r.coupling.array() > 0).count() : 0;
  const bool forest = r.coupling.size() ? support_is_forest(r.coupling) : false;
  py::dict d;
  d["status"] = to_string(r.status);
  d["message"] = r.message;
  d["method"] = "entropic";
  d["total_gain"] = r.total_gain;
  d["iterations"] = r.iterations;
  d["marginal_error"] = r.marginal_error;
  d["support_size"] = support;
  d["is_forest"] = forest;
  d["epsilon"] = r.epsilon;
  d["entropy"] = r.entropy;
  d["primal_value"] = r.primal_value;
  d["dual_value"] = r.dual_value;
  d["stages"] = r.stages;
  d["log_domain_updates"] = r.log_domain_updates;
  d["seconds"] = r.seconds;
  d["coupling"] = to_array(std::move(r.coupling));
  d["agent_potential"] = to_array(std::move(r.potentials.agent));
  d["partner_potential"] = to_array(std::move(r.potentials.partner));
  return d;
}

py::dict solve_entropic_binding(const py::object& gains, const py::object& budgets,
                                const py::object& capacities, const py::object& access,
                                const py::kwargs& kwargs) {
  const Options options("solve_entropic", kwargs);
  const TransportProblem problem = problem_argument(gains, budgets, capacities, access, options);
  const EntropicOptions entropic = entropic_options(options, problem);
  EntropicResult result;
  {
    py::gil_scoped_release release;
    result = solve_entropic(problem, entropic);
  }
  return entropic_fields(std::move(result));
}

const char* const kSolveReturns =
    "Result with the fields of `allocsim solve --json`: status (word), message, method,\n"
    "total_gain (gain units), iterations, marginal_error ((|pi 1 - r|_1 + |pi^T 1 - c|_1) / sum "
    "r),\n"
    "support_size, is_forest, epsilon, seconds; and the arrays coupling (n x m),\n"
    "agent_potential (n) and partner_potential (m), the dual potentials.";

}  // namespace

void register_transport(py::module_& m) {
  const ExactOptions exact;
  FunctionSpec exact_spec{
      "solve_exact",
      "Exact optimal transport: the coupling of largest total gain,\n"
      "max <gains, pi> s.t. pi 1 = budgets, pi^T 1 = capacities, pi >= 0, pi = 0 where access\n"
      "is 0 (network simplex). A problem without solution (access too sparse) returns\n"
      "status 'infeasible' with the reason in message; it raises nothing.",
      kProblemArrays,
      {"None"},
      {{"mass_units", py::float_(exact.mass_units),
        "integer units the total mass is split into; in [1e3, 1e15]"},
       {"rescale", py::bool_(false), kRescaleMeaning}},
      std::string(kSolveReturns) +
          " status: 'optimal' | 'infeasible'. iterations is 0 and\n"
          "epsilon None, as in the JSON."};
  m.def("solve_exact", &solve_exact_binding, register_function(m, exact_spec).c_str(),
        py::arg("gains"), py::arg("budgets"), py::arg("capacities"),
        py::arg("access") = py::none());

  const EntropicOptions entropic;
  FunctionSpec entropic_spec{
      "solve_entropic",
      "Entropic optimal transport: max <gains, pi> + epsilon H(pi), H = -sum pi (log pi - 1),\n"
      "under the same marginals, by stabilised Sinkhorn iterations with epsilon-scaling.\n"
      "Stops when the relative L1 marginal violation is <= tolerance. Not converging is\n"
      "status 'not_converged', an infeasible access mask 'infeasible'; neither raises.\n"
      "The call releases the GIL: threads solve in parallel.",
      kProblemArrays,
      {"None"},
      {{"epsilon", py::float_(entropic.epsilon), "transport temperature, in gain units; > 0"},
       {"epsilon_of_range", py::none(),
        "epsilon as a share of the gain range (max - min gain); instead of epsilon"},
       {"tolerance", py::float_(entropic.tolerance),
        "relative L1 marginal violation to stop at; in (0, 1)"},
       {"max_iterations", py::int_(entropic.max_iterations), "Sinkhorn sweeps in all stages; >= 1"},
       {"epsilon_shrink", py::float_(entropic.epsilon_shrink),
        "factor between epsilon-scaling stages; in (0, 1)"},
       {"epsilon_scaling", py::bool_(entropic.epsilon_scaling), "False: start directly at epsilon"},
       {"absorb_threshold", py::float_(entropic.absorb_threshold),
        "absorb the scalings into the potentials when one leaves [1/t, t]; > 1"},
       {"threads", py::int_(entropic.threads),
        "threads sharing each iteration (the command line's default is all cores); >= 1"},
       {"rescale", py::bool_(false), kRescaleMeaning}},
      std::string(kSolveReturns) +
          " status: 'converged' | 'not_converged' | 'infeasible'.\n"
          "Also entropy, primal_value, dual_value, stages, log_domain_updates;\n"
          "coupling_ij = exp((gains_ij + agent_potential_i + partner_potential_j) / epsilon)."};
  m.def("solve_entropic", &solve_entropic_binding, register_function(m, entropic_spec).c_str(),
        py::arg("gains"), py::arg("budgets"), py::arg("capacities"),
        py::arg("access") = py::none());
}

}  // namespace allocsim::python
