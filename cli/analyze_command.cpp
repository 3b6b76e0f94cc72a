// allocsim analyze: temperature, distance to the optimal couplings and
// structure of an allocation, from CSV files or from the runs of a results file.
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <optional>
#include <sstream>

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/analysis/report_exports.hpp"
#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/label_alignment.hpp"
#include "allocsim/core/memory_limit.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "gains_reconstruction_output.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

// The option that sets a field of AllocationAnalysisOptions.
std::string option_of_field(const std::string& field) {
  if (field == "samples") return "--null-samples";
  if (field == "seed") return "--null-seed";
  return "--" + field;
}

AllocationAnalysisOptions read_options(const po::variables_map& vm) {
  AllocationAnalysisOptions options;
  check_under_names(
      [&] {
        options.temperature.confidence = vm["confidence"].as<double>();
        options.binarize.rule = binarize_rule_from_string(vm["binarize"].as<std::string>());
        if (vm.count("threshold")) options.binarize.threshold = vm["threshold"].as<double>();
        if (vm.count("nulls")) {
          NullOptions nulls;
          nulls.model = null_model_from_string(vm["nulls"].as<std::string>());
          nulls.samples = vm["null-samples"].as<long>();
          nulls.seed = static_cast<std::uint64_t>(vm["null-seed"].as<long>());
          options.nulls = nulls;
        }
        options.validate();
      },
      option_of_field);
  if (options.nulls) {
    // The ensemble keeps one value per sample and metric (NODF, WNODF).
    require_memory(static_cast<double>(options.nulls->samples) * 2 * sizeof(double),
                   "a null ensemble of " + std::to_string(options.nulls->samples) + " samples",
                   "--null-samples", "use fewer samples");
  }
  return options;
}

ValueReading read_value_reading(const po::variables_map& vm) {
  ValueReading reading;
  try {
    if (vm.count("values")) reading.kind = value_kind_from_string(vm["values"].as<std::string>());
    if (vm.count("units")) {
      reading.units = vm["units"].as<double>();
      if (!(reading.units > 0)) throw InputError("units", "must be a number > 0");
      if (!vm.count("values")) reading.kind = ValueKind::shares;  // N units behind shares
    }
    reading.validate();
  } catch (const InputError& e) {
    throw e.at("--" + e.where());
  }
  return reading;
}

// ---- CSV input ----

// The allocation's labels are the reference every other file is matched to.
LabeledMatrix read_allocation(const std::string& path, const po::variables_map& vm) {
  CsvReadOptions reading;
  if (vm.count("missing")) {
    if (vm["missing"].as<std::string>() != "zero")
      throw InputError("--missing", "'" + vm["missing"].as<std::string>() + "' is not zero");
    reading.missing_as_zero = true;
  }
  LabeledMatrix allocation = read_matrix_csv(path, reading);
  require_unique_labels(allocation.row_labels, path, "row");
  require_unique_labels(allocation.column_labels, path, "column");
  return allocation;
}

// A gains (or other agents x partners) file put in the allocation's order.
Matrix read_aligned_matrix(const std::string& path, const LabeledMatrix& allocation,
                           AllocationInput& in) {
  LabeledMatrix other = read_matrix_csv(path);
  in.matching.push_back(align_matrix(allocation, in.sources.allocation, other, path));
  return other.values;
}

AccessMask read_aligned_access(const std::string& path, const LabeledMatrix& allocation,
                               AllocationInput& in) {
  LabeledMatrix access = read_matrix_csv(path);
  access.values = read_access_csv(path).cast<double>();  // checks 0/1 with the cell named
  in.matching.push_back(align_matrix(allocation, in.sources.allocation, access, path));
  return access.values.cast<std::uint8_t>();
}

AllocationInput read_csv_input(const po::variables_map& vm) {
  if (!vm.count("allocation"))
    throw InputError("allocsim analyze",
                     "give --allocation P.csv [--gains G.csv], or a results file");
  AllocationInput in;
  in.sources.allocation = vm["allocation"].as<std::string>();
  const LabeledMatrix allocation = read_allocation(in.sources.allocation, vm);
  in.allocation = allocation.values;
  in.agent_labels = allocation.row_labels;
  in.partner_labels = allocation.column_labels;
  if (vm.count("gains")) {
    in.sources.gains = vm["gains"].as<std::string>();
    in.gains = read_aligned_matrix(in.sources.gains, allocation, in);
  }
  if (vm.count("access")) {
    in.sources.access = vm["access"].as<std::string>();
    in.access = read_aligned_access(in.sources.access, allocation, in);
  }
  in.reading = read_value_reading(vm);
  return in;
}

// ---- outputs of one CSV analysis ----

void print_report(const AllocationReport& report,
                  const std::optional<GainsReconstructionReport>& reconstruction,
                  const po::variables_map& vm) {
  if (vm.count("json")) {
    JsonObject json = allocation_report_json(report);
    if (reconstruction)
      json.add("gains_reconstruction", gains_reconstruction_json(*reconstruction));
    std::cout << json.str() << "\n";
  } else {
    std::ostringstream text;
    print_allocation_report(text, report);
    std::cout << with_option_names(text.str());
    if (reconstruction) print_gains_reconstruction(std::cout, *reconstruction);
  }
  if (!vm.count("json")) return;  // the text report says both
  if (!report.observed.warning.empty())
    std::cerr << "warning: " << with_option_names(report.observed.warning) << "\n";
  if (!report.observed.note.empty()) std::cerr << "note: " << report.observed.note << "\n";
}

// Every file written into --export-dir, named on stderr.
void write_exports(const AllocationReport& report,
                   const std::optional<GainsReconstructionReport>& reconstruction,
                   const po::variables_map& vm) {
  if (!vm.count("export-dir")) return;
  const std::string folder = vm["export-dir"].as<std::string>();
  std::vector<std::string> written = export_report(report, folder);
  if (reconstruction) {
    const std::vector<std::string> more =
        export_gains_reconstruction(*reconstruction, report.values.sum(), folder);
    written.insert(written.end(), more.begin(), more.end());
  }
  std::cerr << "wrote " << written.size() << " files into " << folder << ":";
  for (std::size_t k = 0; k < written.size(); ++k)
    std::cerr << (k == 0 ? " " : ", ") << std::filesystem::path(written[k]).filename().string();
  std::cerr << "\n";
}

// Refuses, before any analysis, a --save or an export of --export-dir that
// is one of the input files.
void require_outputs_apart_from_inputs(const po::variables_map& vm) {
  std::vector<std::pair<std::string, std::string>> inputs;
  for (const char* option : {"allocation", "gains", "access", "row-traits", "column-traits"}) {
    if (vm.count(option))
      inputs.emplace_back(std::string("--") + option, vm[option].as<std::string>());
  }
  if (vm.count("features")) {
    for (const auto& path : vm["features"].as<std::vector<std::string>>())
      inputs.emplace_back("--features", path);
  }
  if (vm.count("save")) require_distinct(vm["save"].as<std::string>(), "--save", inputs);
  if (!vm.count("export-dir")) return;
  if (vm.count("save")) inputs.emplace_back("--save", vm["save"].as<std::string>());
  const std::filesystem::path folder = vm["export-dir"].as<std::string>();
  for (const std::string& name : report_export_names())
    require_distinct((folder / name).string(), "--export-dir", inputs);
}

// `--save obs.h5`: a results file with one run holding the field matrix, its
// labels, the gains when given, and the analysis, like a simulated run.
void save_results(const AllocationInput& in, const AllocationReport& report,
                  const std::optional<GainsReconstructionReport>& reconstruction,
                  const po::variables_map& vm) {
  if (!vm.count("save")) return;
  const std::string path = vm["save"].as<std::string>();
  std::string text = "# a field matrix analysed by allocsim analyze (no experiment)\n";
  text += "# allocation = " + in.sources.allocation + "\n";
  if (in.gains) text += "# gains = " + in.sources.gains + "\n";
  ResultsFile file(path, text, ALLOCSIM_VERSION);
  RunWriter run = file.create_run(run_name(0));
  run.set_integer(layout::kRunIndex, 0);
  run.set_text(layout::kObservedAllocation, in.sources.allocation);
  if (in.gains) run.set_text(layout::kObservedGains, in.sources.gains);
  if (in.access) run.set_text(layout::kObservedAccess, in.sources.access);
  run.write_labels(in.agent_labels, in.partner_labels);
  run.write_matrix(layout::kTotal, in.allocation);
  if (in.gains) {
    TransportProblem scenario;
    scenario.gains = *in.gains;
    scenario.budgets = in.allocation.rowwise().sum();
    scenario.capacities = in.allocation.colwise().sum().transpose();
    scenario.access = in.access;
    run.write_scenario(scenario);
  }
  run.write_report(report);
  if (reconstruction) run.write_gains_reconstruction(*reconstruction, report.observed);
  run.set_text(layout::kStatus, layout::kStatusComplete);
  file.commit();
  std::cerr << "saved the matrix and its analysis"
            << (reconstruction ? " (with the gains reconstruction)" : "") << " as run "
            << run_name(0) << " of " << path << "\n";
}

int exit_code(const AllocationReport& report) {
  return report.temperature.status == TemperatureStatus::not_converged ? kExitProblem : kExitOk;
}

// ---- results files ----

std::string percent_text(std::optional<double> share) {
  if (!share || !std::isfinite(*share)) return "n/a";
  std::ostringstream out;
  out.precision(2);
  out << 100 * *share << "%";
  return out.str();
}

// Why a run's allocation is not the stationary one, from the settling it
// recorded (sim/settling.hpp: settled = "false"), with the advice; empty
// when it settled or recorded nothing (field matrices, older files).
std::string unsettled_note(const ResultsReader& reader, const std::string& run) {
  const Attributes attributes = reader.run_attributes(run);
  if (attribute_text(attributes, layout::kSettled) != "false") return "";
  return run + " had not settled when it ended (capacity error " +
         percent_text(attribute_number(attributes, layout::kCapacityError)) +
         " of the units in its last window, change " +
         percent_text(attribute_number(attributes, layout::kWindowChange)) +
         " between its last two windows, drift " +
         percent_text(attribute_number(attributes, layout::kDriftSinceBurnIn)) +
         " since burn-in): its allocation after burn-in is not the stationary one. Play more "
         "rounds with a longer burn-in (dynamics.rounds, dynamics.burn_in), a larger "
         "dynamics.price_step at low temperature, or a smaller dynamics.window; see docs/guide.md";
}

// What a run of a results file holds for the analysis: its total
// allocation after burn-in and its scenario, and whether it had settled.
AllocationInput read_run(const ResultsReader& reader, const std::string& run) {
  reader.require_run(run);
  const std::string where = reader.path() + ":/" + layout::kRuns + "/" + run + "/";
  AllocationInput in;
  in.sources = {where + layout::kTotal, where + layout::kGains, where + layout::kAccess};
  if (reader.has(run, layout::kGains)) {
    const TransportProblem scenario = reader.read_scenario(run);
    in.gains = scenario.gains;
    in.access = scenario.access;
  }
  in.allocation = reader.read_matrix(run, layout::kTotal);
  in.agent_labels = reader.read_texts(run, layout::kAgentLabels);
  in.partner_labels = reader.read_texts(run, layout::kPartnerLabels);
  in.not_stationary = unsettled_note(reader, run);
  // A field matrix read as shares stays shares (with its N).
  const Attributes analysis = reader.group_attributes(run, layout::kAnalysis);
  if (attribute_text(analysis, layout::kValueReading) == "shares") {
    in.reading.kind = ValueKind::shares;
    in.reading.units = attribute_number(analysis, layout::kValueUnits).value_or(0);
  }
  return in;
}

int analyze_results_file(const std::string& path, const po::variables_map& vm,
                         const AllocationAnalysisOptions& options) {
  std::vector<std::string> runs;
  std::vector<AllocationReport> reports;
  {
    const ResultsReader reader(path);
    runs = vm.count("run") ? std::vector<std::string>{vm["run"].as<std::string>()} : reader.runs();
    if (runs.empty()) throw InputError(path, "holds no runs");
    for (const std::string& run : runs) {
      const AllocationInput in = read_run(reader, run);
      if (!vm.count("json")) std::cerr << "analyzing " << run << "\n";
      reports.push_back(analyze_allocation(in, options));
    }
  }
  for (std::size_t k = 0; k < runs.size(); ++k) {
    if (vm.count("json")) {
      JsonObject json = allocation_report_json(reports[k]);
      json.add("run", runs[k]);
      std::cout << json.str() << "\n";
    } else {
      std::cout << "run " << runs[k] << "\n";
      print_allocation_report(std::cout, reports[k]);
    }
  }
  if (vm.count("write")) {
    // A copy beside the file (a symlink's target) takes the analysis; it
    // replaces the file only when complete.
    const std::string target = require_regular_output(path, path).path;
    const OutputLock lock(target);
    remove_orphan_temporaries(target);
    try {
      errno = 0;
      ResultsUpdate update(target);
      for (std::size_t k = 0; k < runs.size(); ++k) update.run(runs[k]).write_report(reports[k]);
      update.commit();
    } catch (const WriteError&) {
      throw;
    } catch (const std::filesystem::filesystem_error& e) {
      throw WriteError(path, e.code().message());
    } catch (const std::exception&) {
      throw;
    } catch (...) {  // the results layer's own (HDF5) failure: a write that failed
      const int error = errno;
      throw WriteError(path, write_failure_cause(target, "the results layer failed", error));
    }
    if (!vm.count("json"))
      std::cerr << "wrote the analysis of " << runs.size() << " run(s) into " << path << "\n";
  }
  return kExitOk;
}

}  // namespace

int analyze_command(const Arguments& args) {
  po::options_description options("options");
  options.add_options()("allocation", po::value<std::string>(),
                        "CSV matrix of the allocation (agents x partners), "
                        "labels optional; rows and columns of the other "
                        "files are matched to its labels")(
      "gains", po::value<std::string>(),
      "CSV matrix of gains (agents x partners); optional: "
      "without it no temperature, everything else")(
      "values", po::value<std::string>(),
      ("how the allocation's cells are read: " + join_words(value_kind_words(), " | ") +
       " (default: counts when every cell is whole, else shares)")
          .c_str())("units", po::value<double>(),
                    "shares: the number N of independent units behind them "
                    "(for standard errors and intervals)")(
      "export-dir", po::value<std::string>(),
      "write labelled CSV files of the analysis into this folder")(
      "missing", po::value<std::string>(),
      "zero: read empty and NA cells of the allocation as 0 "
      "(default: they are an error naming the cell)")(
      "save", po::value<std::string>(),
      "write the matrix, labels, gains and analysis as a results "
      "file (one run) for inspect, plot and analyze")(
      "access", po::value<std::string>(), "CSV 0/1 matrix; 0 = the pair can never be used")(
      "results", po::value<std::string>(), "a results file (HDF5) to analyse instead of CSV files")(
      "run", po::value<std::string>(), "results file: analyse only this run (e.g. run-000000)")(
      "write", "results file: store the analysis in each run's analysis/ group")(
      "confidence", po::value<double>()->default_value(0.95), "level of the temperature interval")(
      "binarize", po::value<std::string>()->default_value("positive"),
      ("link rule for structure metrics: " + join_words(binarize_rule_words(), " | ")).c_str())(
      "threshold", po::value<double>(), "threshold of the link rule (default: the rule's own)")(
      "nulls", po::value<std::string>(),
      ("compare NODF (and WNODF) with a null model: " + join_words(null_model_words(), " | "))
          .c_str())("null-samples", po::value<long>()->default_value(200),
                    "size of the null ensemble")("null-seed", po::value<long>()->default_value(1),
                                                 "seed of the null ensemble")(
      "json", "print one JSON object on stdout (one per run for a results file)");
  add_gains_reconstruction_options(options);
  po::positional_options_description positional;
  positional.add("results", 1);
  po::variables_map vm;
  if (!parse_or_help(
          args, options, positional, vm, "analyze",
          "--allocation P.csv [--gains G.csv] [--access A.csv] [--values counts|shares]\n"
          "       [--units N] [--nulls MODEL] [--export-dir D] [--save obs.h5] [--json]\n"
          "       allocsim analyze results.h5 [--run NAME] [--json] [--write]"))
    return kExitOk;
  const AllocationAnalysisOptions analyze_options = read_options(vm);
  if (vm.count("results")) {
    for (const char* csv_only : {"values", "units", "export-dir", "save", "missing", "features",
                                 "row-traits", "column-traits", "latent-rank"})
      if (vm.count(csv_only))
        throw InputError(std::string("--") + csv_only, "applies to --allocation P.csv only");
    if (vm.count("allocation") || vm.count("gains") || vm.count("access"))
      throw InputError("allocsim analyze",
                       "give either a results file or --allocation/--gains, not both");
    return analyze_results_file(vm["results"].as<std::string>(), vm, analyze_options);
  }
  if (vm.count("run") || vm.count("write"))
    throw InputError(vm.count("run") ? "--run" : "--write", "applies to a results file only");
  require_outputs_apart_from_inputs(vm);
  const AllocationInput input = read_csv_input(vm);
  const AllocationReport report = analyze_allocation(input, analyze_options);
  const std::optional<GainsReconstructionReport> reconstruction = reconstruct_if_asked(vm, report);
  print_report(report, reconstruction, vm);
  write_exports(report, reconstruction, vm);
  save_results(input, report, reconstruction, vm);
  return exit_code(report);
}

}  // namespace allocsim::cli
