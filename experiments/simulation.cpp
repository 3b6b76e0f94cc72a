#include "allocsim/experiments/simulation.hpp"

#include <sys/statvfs.h>

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <sstream>

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/experiments/analysis_settings.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_reader.hpp"
#include "allocsim/sim/scenario.hpp"
#include "key_errors.hpp"

namespace allocsim {
namespace {

SummaryTable one_row_summary(const std::string& run, std::uint64_t run_index,
                             const ExperimentValues& values, const RunResult& result) {
  SummaryTable table;
  table.texts.push_back({layout::kRunColumn, {run}});
  for (const auto& key : experiment_keys()) {
    if (key.kind == KeyKind::integer || key.kind == KeyKind::real) {
      table.numbers.push_back({key.name, {values.real(key.name)}});
    } else {
      table.texts.push_back({key.name, {values.text(key.name)}});
    }
  }
  table.numbers.push_back({layout::kUnitsAfterBurnIn, {result.total.sum()}});
  table.numbers.push_back({layout::kUnplacedUnits, {static_cast<double>(result.unplaced_units)}});
  table.numbers.push_back({layout::kRunIndex, {static_cast<double>(run_index)}});
  table.texts.push_back({layout::kSettled, {result.settling.settled ? "true" : "false"}});
  table.numbers.push_back({layout::kCapacityError, {result.settling.capacity_error}});
  table.numbers.push_back({layout::kWindowChange, {result.settling.change}});
  table.numbers.push_back({layout::kDriftSinceBurnIn, {result.settling.drift}});
  return table;
}

// Whether the run settled, its last windows' measures, and every window's.
void write_settling(RunWriter& group, const RunResult& result) {
  const Settling& s = result.settling;
  group.set_text(layout::kSettled, s.settled ? "true" : "false");
  group.set_number(layout::kCapacityError, s.capacity_error);
  group.set_number(layout::kWindowChange, s.change);
  group.set_number(layout::kDriftSinceBurnIn, s.drift);
  const auto as_vector = [](const std::vector<double>& values) {
    return Vector(
        Eigen::Map<const Vector>(values.data(), static_cast<Eigen::Index>(values.size())));
  };
  group.write_vector(layout::kWindowCapacityErrors, as_vector(result.trace.capacity_errors));
  // Changes between consecutive windows: k - 1 values (the first window has none before it).
  const std::vector<double>& changes = result.trace.changes;
  group.write_vector(
      layout::kWindowChanges,
      as_vector(changes.size() > 1 ? std::vector<double>(changes.begin() + 1, changes.end())
                                   : std::vector<double>()));
}

}  // namespace

double simulation_memory_bytes(const ExperimentValues& values) {
  constexpr double kSimulationMatrices = 8;
  return dense_matrix_bytes(values.real("scenario.agents"), values.real("scenario.partners"),
                            kSimulationMatrices);
}

std::string SimulationReport::brief() const {
  std::ostringstream out;
  out << "wrote " << output_file << ": " << run << ", " << agents << " agents x " << partners
      << " partners, " << result.brief();
  return out.str();
}

void write_run_parameters(RunWriter& run, const ExperimentValues& values,
                          const std::string& status) {
  for (const auto& key : experiment_keys()) {
    switch (key.kind) {
      case KeyKind::integer:
        run.set_integer(key.name, values.integer(key.name));
        break;
      case KeyKind::real:
        run.set_number(key.name, values.real(key.name));
        break;
      default:
        run.set_text(key.name, values.text(key.name));
    }
  }
  run.set_integer(layout::kSeed, values.integer("scenario.seed"));
  run.set_text(layout::kStatus, status);
}

RunResult record_run(ResultsFile& file, const std::string& run, std::uint64_t run_index,
                     const ExperimentValues& values, const SimulationSettings& settings,
                     const ProgressCallback& progress) {
  const TransportProblem problem = make_scenario(settings.scenario, run_index);
  RunWriter group = file.create_run(run);
  write_run_parameters(group, values, layout::kStatusRunning);
  group.set_integer(layout::kRunIndex, static_cast<long long>(run_index));
  group.set_text(layout::kFeasible, explain_infeasibility(problem).empty() ? "true" : "false");
  group.write_scenario(problem);
  AllocationRecorder recorder = group.record_allocation(problem.agents(), problem.partners());
  const RunResult result = run_dynamics(problem, settings.dynamics, settings.scenario.seed,
                                        run_index, &recorder, progress);
  recorder.finish(result);
  write_settling(group, result);
  if (values.boolean("analysis.enabled")) {
    const AllocationInput input{
        result.total,
        problem.gains,
        problem.access,
        {run + "/" + layout::kTotal, run + "/" + layout::kGains, run + "/" + layout::kAccess}};
    const AllocationReport report = analyze_allocation(input, analysis_options(values, run_index));
    group.write_report(report);
    if (const auto options = reconstruction_options(values, run_index))
      group.write_gains_reconstruction(
          reconstruct_simulated_gains(report.observed, problem,
                                      scenario_traits(settings.scenario, run_index), *options,
                                      values),
          report.observed);
  } else {
    group.clear_analysis();
  }
  group.set_number(layout::kSeconds, result.seconds);
  group.set_integer(layout::kUnplacedUnits, result.unplaced_units);
  group.set_text(layout::kStatus, layout::kStatusComplete);
  return result;
}

namespace {

// An existing output must be a results file allocsim wrote.
void require_results_or_nothing(const std::string& path, const std::string& where) {
  if (!std::filesystem::exists(path)) return;
  try {
    ResultsReader existing(path);
  } catch (const InputError&) {
    throw InputError(where, path +
                                " exists and was not written by allocsim (no allocsim format "
                                "attribute); remove it or choose another output");
  }
}

}  // namespace

SimulationReport simulate_to_file(const ExperimentValues& values,
                                  const SimulationRequest& request) {
  SimulationSettings settings = simulation_settings(values);
  settings.dynamics.threads = request.threads;
  settings.dynamics.validate();
  const std::string where = values.where("output.file") == "--output.file"
                                ? std::string("--out")
                                : values.where("output.file") + ": output.file";
  const ResolvedOutput output = require_regular_output(settings.output_file, where);
  std::vector<std::pair<std::string, std::string>> inputs = request.inputs;
  if (settings.scenario.gains == GainsKind::file)
    inputs.emplace_back("scenario.gains_file", settings.scenario.gains_file);
  if (settings.scenario.budgets == MassKind::file)
    inputs.emplace_back("scenario.budgets_file", settings.scenario.budgets_file);
  if (settings.scenario.capacities == MassKind::file)
    inputs.emplace_back("scenario.capacities_file", settings.scenario.capacities_file);
  if (settings.scenario.access == AccessKind::file)
    inputs.emplace_back("scenario.access_file", settings.scenario.access_file);
  require_distinct(settings.output_file, where, inputs);
  // Build the scenario once before creating the file, so bad input (files,
  // shapes, access) fails without leaving anything behind.
  const auto run_index = static_cast<std::uint64_t>(request.run_index);
  TransportProblem check;
  detail::check_as_keys(values, "scenario",
                        [&] { check = make_scenario(settings.scenario, run_index); });

  SimulationReport report;
  report.output_file = settings.output_file;
  report.run = run_name(request.run_index);
  report.agents = check.agents();
  report.partners = check.partners();
  report.infeasibility = explain_infeasibility(check);
  const OutputLock lock(settings.output_file);
  remove_orphan_temporaries(settings.output_file);
  require_results_or_nothing(output.path, where);
  try {
    errno = 0;
    ResultsFile file(output.path, values.to_ini(), request.tool_version);
    report.result = record_run(file, report.run, run_index, values, settings, request.progress);
    file.write_summary(one_row_summary(report.run, run_index, values, report.result));
    file.commit();
  } catch (const std::exception&) {
    throw;
  } catch (...) {  // the results layer's own (HDF5) failure: a write that failed
    const int error = errno;
    throw WriteError(report.output_file,
                     write_failure_cause(output.path, "the results layer failed", error));
  }
  return report;
}

}  // namespace allocsim
