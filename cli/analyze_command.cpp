// allocsim analyze: temperature, distance to the optimal couplings and
// structure of an allocation, from CSV files or from the runs of a results file.
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <optional>
#include <sstream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

AllocationAnalysisOptions read_options(const po::variables_map& vm) {
  AllocationAnalysisOptions options;
  options.temperature.confidence = vm["confidence"].as<double>();
  try {
    options.temperature.validate();
  } catch (const InputError&) {
    throw InputError("--confidence", "must be in (0, 1), e.g. 0.95");
  }
  try {
    options.binarize.rule = binarize_rule_from_string(vm["binarize"].as<std::string>());
    if (vm.count("threshold")) options.binarize.threshold = vm["threshold"].as<double>();
    options.binarize.validate();
  } catch (const InputError& e) {
    throw InputError(vm.count("threshold") && e.where() == "threshold" ? "--threshold" : "--binarize",
                     std::string(e.what()).substr(e.where().size() + 2));
  }
  if (vm.count("nulls")) {
    NullOptions nulls;
    try {
      nulls.model = null_model_from_string(vm["nulls"].as<std::string>());
    } catch (const InputError& e) {
      throw InputError("--nulls", "'" + vm["nulls"].as<std::string>() +
                                      "' is not one of curveball, bicm, fixed-margins");
    }
    nulls.samples = vm["null-samples"].as<long>();
    nulls.seed = static_cast<std::uint64_t>(vm["null-seed"].as<long>());
    if (nulls.samples < 2) throw InputError("--null-samples", "must be at least 2");
    options.nulls = nulls;
  }
  return options;
}

// ---- CSV input ----

AllocationInput read_csv_input(const po::variables_map& vm) {
  if (!vm.count("allocation") || !vm.count("gains"))
    throw InputError("allocsim analyze",
                     "give --allocation P.csv and --gains G.csv, or a results file");
  AllocationInput in;
  in.sources.allocation = vm["allocation"].as<std::string>();
  in.sources.gains = vm["gains"].as<std::string>();
  in.allocation = read_matrix_csv(in.sources.allocation).values;
  in.gains = read_matrix_csv(in.sources.gains).values;
  if (vm.count("access")) {
    in.sources.access = vm["access"].as<std::string>();
    in.access = read_access_csv(in.sources.access);
  }
  return in;
}

// ---- results files ----

// What a run of a results file holds for the analysis: its total
// allocation after burn-in and its scenario.
AllocationInput read_run(const ResultsReader& reader, const std::string& run) {
  reader.require_run(run);
  const std::string where = reader.path() + ":/" + layout::kRuns + "/" + run + "/";
  const TransportProblem scenario = reader.read_scenario(run);
  AllocationInput in;
  in.sources = {where + layout::kTotal, where + layout::kGains, where + layout::kAccess};
  in.gains = scenario.gains;
  in.access = scenario.access;
  in.allocation = reader.read_matrix(run, layout::kTotal);
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
    // A copy beside the file takes the analysis; it replaces the file only when complete.
    ResultsUpdate update(path);
    for (std::size_t k = 0; k < runs.size(); ++k) update.run(runs[k]).write_report(reports[k]);
    update.commit();
    if (!vm.count("json"))
      std::cerr << "wrote the analysis of " << runs.size() << " run(s) into " << path << "\n";
  }
  return kExitOk;
}

}  // namespace

int analyze_command(const Arguments& args) {
  po::options_description options("options");
  options.add_options()
      ("allocation", po::value<std::string>(), "CSV matrix of the allocation (agents x partners); "
                                               "whole numbers are read as counts")
      ("gains", po::value<std::string>(), "CSV matrix of gains (agents x partners)")
      ("access", po::value<std::string>(), "CSV 0/1 matrix; 0 = the pair can never be used")
      ("results", po::value<std::string>(), "a results file (HDF5) to analyse instead of CSV files")
      ("run", po::value<std::string>(), "results file: analyse only this run (e.g. run-000000)")
      ("write", "results file: store the analysis in each run's analysis/ group")
      ("confidence", po::value<double>()->default_value(0.95), "level of the temperature interval")
      ("binarize", po::value<std::string>()->default_value("positive"),
       "link rule for structure metrics: positive | row-share | min-count | revealed-advantage")
      ("threshold", po::value<double>(), "threshold of the link rule (default: the rule's own)")
      ("nulls", po::value<std::string>(), "compare NODF (and WNODF) with a null model: "
                                          "curveball | bicm | fixed-margins")
      ("null-samples", po::value<long>()->default_value(200), "size of the null ensemble")
      ("null-seed", po::value<long>()->default_value(1), "seed of the null ensemble")
      ("json", "print one JSON object on stdout (one per run for a results file)");
  po::positional_options_description positional;
  positional.add("results", 1);
  po::variables_map vm;
  if (!parse_or_help(args, options, positional, vm, "analyze",
                     "--allocation P.csv --gains G.csv [--access A.csv] [--json]\n"
                     "       allocsim analyze results.h5 [--run NAME] [--json] [--write]"))
    return kExitOk;
  const AllocationAnalysisOptions analyze_options = read_options(vm);
  if (vm.count("results")) {
    if (vm.count("allocation") || vm.count("gains") || vm.count("access"))
      throw InputError("allocsim analyze",
                       "give either a results file or --allocation/--gains, not both");
    return analyze_results_file(vm["results"].as<std::string>(), vm, analyze_options);
  }
  if (vm.count("run") || vm.count("write"))
    throw InputError(vm.count("run") ? "--run" : "--write", "applies to a results file only");
  const AllocationReport report = analyze_allocation(read_csv_input(vm), analyze_options);
  if (vm.count("json")) {
    std::cout << allocation_report_json(report).str() << "\n";
  } else {
    print_allocation_report(std::cout, report);
  }
  if (!report.observed.note.empty()) std::cerr << "note: " << report.observed.note << "\n";
  return report.temperature.status == TemperatureStatus::not_converged ? kExitProblem : kExitOk;
}

}  // namespace allocsim::cli
