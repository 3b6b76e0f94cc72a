#include "allocsim/experiments/simulation.hpp"

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/experiments/analysis_settings.hpp"
#include "allocsim/results/report_writer.hpp"

#include <sstream>

#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/hdf5_io.hpp"
#include "allocsim/results/recorder.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim {
namespace {

SummaryTable one_row_summary(const std::string& run, const ExperimentValues& values,
                             const RunResult& result) {
  SummaryTable table;
  table.texts.push_back({"run", {run}});
  for (const auto& key : experiment_keys()) {
    if (key.kind == KeyKind::integer || key.kind == KeyKind::real) {
      table.numbers.push_back({key.name, {values.real(key.name)}});
    } else {
      table.texts.push_back({key.name, {values.text(key.name)}});
    }
  }
  table.numbers.push_back({"units_after_burn_in", {result.total.sum()}});
  table.numbers.push_back({"unplaced_units", {static_cast<double>(result.unplaced_units)}});
  return table;
}

}  // namespace

std::string SimulationReport::brief() const {
  std::ostringstream out;
  out << "wrote " << output_file << ": " << run << ", " << agents << " agents x " << partners
      << " partners, " << result.brief();
  return out.str();
}

void write_run_parameters(H5::Group& group, const ExperimentValues& values,
                          const std::string& status) {
  for (const auto& key : experiment_keys()) {
    switch (key.kind) {
      case KeyKind::integer:
        set_integer_attribute(group, key.name, values.integer(key.name));
        break;
      case KeyKind::real:
        set_number_attribute(group, key.name, values.real(key.name));
        break;
      default:
        set_text_attribute(group, key.name, values.text(key.name));
    }
  }
  set_integer_attribute(group, "seed", values.integer("scenario.seed"));
  set_text_attribute(group, "status", status);
}

RunResult record_run(ResultsFile& file, const std::string& run, std::uint64_t run_index,
                     const ExperimentValues& values, const SimulationSettings& settings,
                     const ProgressCallback& progress) {
  const TransportProblem problem = make_scenario(settings.scenario, run_index);
  H5::Group group = file.create_run(run);
  write_run_parameters(group, values, "running");
  set_integer_attribute(group, "run_index", static_cast<long long>(run_index));
  set_text_attribute(group, "feasible", explain_infeasibility(problem).empty() ? "true" : "false");
  write_scenario(group, problem);
  AllocationRecorder recorder(group, problem.agents(), problem.partners());
  const RunResult result =
      run_dynamics(problem, settings.dynamics, settings.scenario.seed, run_index, &recorder,
                   progress);
  recorder.finish(result);
  if (values.boolean("analysis.enabled")) {
    const AllocationInput input{result.total, problem.gains, problem.access,
                                {run + "/allocation/total", run + "/scenario/gains",
                                 run + "/scenario/access"}};
    write_allocation_report(group, analyze_allocation(input, analysis_options(values, run_index)));
  } else {
    group.createGroup("analysis");
  }
  set_number_attribute(group, "seconds", result.seconds);
  set_integer_attribute(group, "unplaced_units", result.unplaced_units);
  set_text_attribute(group, "status", "complete");
  return result;
}

SimulationReport simulate_to_file(const ExperimentValues& values,
                                  const SimulationRequest& request) {
  SimulationSettings settings = simulation_settings(values);
  settings.dynamics.threads = request.threads;
  settings.dynamics.validate();
  // Build the scenario once before creating the file, so bad input (files,
  // shapes, access) fails without leaving anything behind.
  const TransportProblem check = make_scenario(settings.scenario, 0);

  SimulationReport report;
  report.output_file = settings.output_file;
  report.run = run_name(0);
  report.agents = check.agents();
  report.partners = check.partners();
  report.infeasibility = explain_infeasibility(check);
  try {
    ResultsFile file(report.output_file, values.to_ini(), request.tool_version);
    report.result = record_run(file, report.run, 0, values, settings, request.progress);
    file.write_summary(one_row_summary(report.run, values, report.result));
    file.commit();
  } catch (const H5::Exception& e) {
    throw std::runtime_error(report.output_file + ": HDF5 error in " + e.getFuncName() + ": " +
                             e.getDetailMsg());
  }
  return report;
}

}  // namespace allocsim
