// Results files from Python, through the results layer's reader (the one
// home of the file layout): the summary table, the runs, and one run's
// scenario, snapshots, total, prices and analysis.
#include "allocsim/core/error.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_reader.hpp"
#include "arguments.hpp"
#include "bindings.hpp"

namespace allocsim::python {
namespace {

py::dict attributes_dict(const Attributes& attributes) {
  py::dict d;
  for (const auto& [name, value] : attributes) {
    if (const auto* text = std::get_if<std::string>(&value))
      d[py::str(name)] = *text;
    else if (const auto* whole = std::get_if<long long>(&value))
      d[py::str(name)] = *whole;
    else
      d[py::str(name)] = std::get<double>(value);
  }
  return d;
}

// Runs `read` and turns a failure of the HDF5 library into ValueError naming the file.
template <typename Read>
auto reading(const std::string& path, Read read) {
  try {
    return read();
  } catch (const InputError&) {
    throw;
  } catch (const py::error_already_set&) {
    throw;
  } catch (const std::exception& e) {
    value_error(path, std::string("cannot be read: ") + e.what());
  } catch (...) {  // the HDF5 C++ library's exceptions
    value_error(path, "cannot be read as an allocsim results file");
  }
}

py::dict read_results_binding(const std::string& path) {
  return reading(path, [&] {
    const ResultsReader reader(path);
    py::dict d;
    d["path"] = path;
    d["attributes"] = attributes_dict(reader.root_attributes());
    d["runs"] = reader.runs();
    py::dict summary;
    for (auto& [name, values] : reader.summary_numbers()) summary[py::str(name)] = to_array(values);
    for (auto& [name, values] : reader.summary_texts()) summary[py::str(name)] = values;
    d["summary"] = summary;
    return d;
  });
}

py::dict read_run_binding(const std::string& path, const py::object& run_argument) {
  return reading(path, [&] {
    const ResultsReader reader(path);
    const std::vector<std::string> runs = reader.runs();
    std::string run;
    if (run_argument.is_none()) {
      if (runs.size() != 1)
        value_error("run", "the file holds " + std::to_string(runs.size()) +
                               " runs; name one (allocsim.read_results(path).runs lists them)");
      run = runs.front();
    } else {
      run = py::str(run_argument);
    }
    try {
      reader.require_run(run);
    } catch (const InputError& e) {
      value_error("run", e.what());
    }
    py::dict d;
    d["run"] = run;
    d["parameters"] = attributes_dict(reader.run_attributes(run));
    TransportProblem scenario = reader.read_scenario(run);
    const Eigen::Index n = scenario.gains.rows(), m = scenario.gains.cols();
    d["gains"] = to_array(std::move(scenario.gains));
    d["budgets"] = to_array(std::move(scenario.budgets));
    d["capacities"] = to_array(std::move(scenario.capacities));
    if (scenario.access) {
      const AccessMask& mask = *scenario.access;
      BinaryMatrix access = mask;
      d["access"] = to_array(std::move(access));
    } else {
      d["access"] = py::none();
    }
    const long count = reader.snapshot_count(run);
    py::array_t<double> snapshots({py::ssize_t(count), py::ssize_t(n), py::ssize_t(m)});
    for (long k = 0; k < count; ++k) {
      const Matrix snapshot = reader.read_snapshot(run, k);
      std::copy(snapshot.data(), snapshot.data() + snapshot.size(),
                snapshots.mutable_data() + k * n * m);
    }
    d["snapshots"] = snapshots;
    d["round_end"] = reader.has(run, layout::kRoundEnd)
                         ? py::object(to_array(reader.read_vector(run, layout::kRoundEnd)))
                         : py::object(py::none());
    d["total"] = to_array(reader.read_matrix(run, layout::kTotal));
    d["prices"] = reader.has(run, layout::kPrices)
                      ? py::object(to_array(reader.read_matrix(run, layout::kPrices)))
                      : py::object(py::none());
    const std::vector<std::string> agents = reader.read_texts(run, layout::kAgentLabels);
    const std::vector<std::string> partners = reader.read_texts(run, layout::kPartnerLabels);
    d["agent_labels"] = agents.empty() ? py::object(py::none()) : py::cast(agents);
    d["partner_labels"] = partners.empty() ? py::object(py::none()) : py::cast(partners);
    d["analysis"] = attributes_dict(reader.group_attributes(run, layout::kAnalysis));
    return d;
  });
}

}  // namespace

void register_results(py::module_& m) {
  m.def("_read_results", &read_results_binding, py::arg("path"));
  m.def("_read_run", &read_run_binding, py::arg("path"), py::arg("run") = py::none());
}

}  // namespace allocsim::python
