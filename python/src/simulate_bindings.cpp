// One simulation from Python: the same code path as `allocsim simulate`
// (experiment keys -> scenario -> dynamics -> results file), so the arrays
// read back are bit-identical to the command line's for the same keys.
// The package (allocsim.simulate) passes a scratch file and reads it back.
#include "allocsim/core/error.hpp"
#include "allocsim/experiments/experiment.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/experiments/simulation.hpp"
#include "arguments.hpp"
#include "bindings.hpp"

namespace allocsim::python {
namespace {

// `ini_path` (may be empty) is an experiment file; messages call it
// `ini_name` (e.g. `experiment` for text the caller gave).
py::dict simulate_binding(const std::string& ini_path, const std::string& ini_name,
                          const std::vector<std::pair<std::string, std::string>>& keys,
                          const std::string& output, int threads) {
  if (threads < 1) value_error("threads", "must be at least 1");
  SimulationReport report;
  try {
    ExperimentValues values;
    if (!ini_path.empty()) read_experiment_file(ini_path, values);
    for (const auto& [key, text] : keys) values.set(key, text, "experiment['" + key + "']");
    values.set("output.file", output, "simulate");
    SimulationRequest request;
    request.threads = threads;
    request.tool_version = ALLOCSIM_VERSION;
    py::gil_scoped_release release;
    report = simulate_to_file(values, request);
  } catch (const InputError& e) {
    std::string message = e.what();
    if (!ini_path.empty() && ini_name != ini_path)
      for (auto at = message.find(ini_path); at != std::string::npos; at = message.find(ini_path))
        message.replace(at, ini_path.size(), ini_name);
    throw py::value_error(message);
  }
  py::dict d;
  d["run"] = report.run;
  d["rounds"] = report.result.rounds;
  d["unplaced_units"] = report.result.unplaced_units;
  d["seconds"] = report.result.seconds;
  d["infeasibility"] = report.infeasibility;
  return d;
}

}  // namespace

void register_simulate(py::module_& m) {
  m.def("_simulate", &simulate_binding, py::arg("ini_path"), py::arg("ini_name"), py::arg("keys"),
        py::arg("output"), py::arg("threads"));
}

}  // namespace allocsim::python
