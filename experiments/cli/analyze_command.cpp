// allocsim analyze: temperature, distance to the optimal couplings and
// structure of an allocation, from CSV files or from the runs of a results file.
#include <H5Cpp.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <optional>
#include <sstream>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/analysis/compare.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/analysis/nestedness.hpp"
#include "allocsim/analysis/observed_allocation.hpp"
#include "allocsim/analysis/temperature.hpp"
#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/sim/hdf5_io.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

constexpr const char* kCaution =
    "Caution: a fitted temperature is a model-based summary that assumes the gains are known and "
    "that choices follow a logit (softmax) rule; it is evidence of an optimisation only when "
    "compared against null models, and it says nothing about cause.";

struct AnalyzeInput {
  Matrix allocation, gains;
  std::optional<AccessMask> access;
  AllocationSources sources;
};

struct AnalyzeOptions {
  TemperatureOptions temperature;
  BinarizeOptions binarize;
};

struct StructureReport {
  double connectance = 0, spectral_radius = 0;
  NestednessParts nodf, wnodf;
};

struct AnalyzeReport {
  ObservedAllocation observed;
  TemperatureResult temperature;
  ExactResult exact;
  Comparison versus_exact, versus_entropic;
  bool has_entropic = false;
  StructureReport structure;
  std::string binarize_rule;
};

AnalyzeReport analyze(const AnalyzeInput& in, const AnalyzeOptions& options) {
  AnalyzeReport report;
  report.observed = observe_allocation(in.allocation, in.gains, in.access, in.sources);
  report.temperature = estimate_temperature(report.observed, options.temperature);
  report.exact = solve_exact(report.observed.problem);
  if (report.exact.optimal())
    report.versus_exact = compare_allocation(report.observed.shares, report.exact.coupling);
  if (report.temperature.estimated()) {
    report.has_entropic = true;
    report.versus_entropic =
        compare_allocation(report.observed.shares, report.temperature.coupling);
  }
  const BinaryMatrix links = binarize(in.allocation, options.binarize);
  report.structure.connectance = connectance(links);
  report.structure.nodf = nodf(links);
  report.structure.wnodf = wnodf(in.allocation);
  report.structure.spectral_radius = spectral_radius(links);
  report.binarize_rule = describe(options.binarize);
  return report;
}

JsonObject comparison_json(const Comparison& c) {
  JsonObject json;
  for (const auto& [name, value] : named_values(c)) {
    if (name.find("is_forest") != std::string::npos) json.add(name, value != 0);
    else if (name.find("size") != std::string::npos) json.add(name, static_cast<long long>(value));
    else json.add(name, value);
  }
  return json;
}

JsonObject temperature_json(const TemperatureResult& t) {
  JsonObject json;
  json.add("epsilon", t.epsilon).add("stderr", t.standard_error).add("ci_low", t.ci_low)
      .add("ci_high", t.ci_high).add("status", to_string(t.status)).add("beta", t.beta)
      .add("confidence", t.confidence).add("ci_high_infinite", std::isinf(t.ci_high))
      .add("observed_gain", t.observed_gain).add("fitted_gain", t.fitted_gain)
      .add("optimum_gain", t.optimum_gain).add("independent_gain", t.independent_gain)
      .add("solves", static_cast<long long>(t.solves));
  if (!t.message.empty()) json.add("message", t.message);
  return json;
}

JsonObject report_json(const AnalyzeReport& r) {
  JsonObject json;
  const ObservedAllocation& o = r.observed;
  json.add("allocation", o.sources.allocation)
      .add("agents", static_cast<long long>(o.kept_rows.size() + o.dropped_rows.size()))
      .add("partners", static_cast<long long>(o.kept_columns.size() + o.dropped_columns.size()))
      .add("counts", o.counts);
  if (o.counts) json.add("units", o.units); else json.add_null("units");
  if (!o.note.empty()) json.add("note", o.note);
  json.add("temperature", temperature_json(r.temperature));
  JsonObject exact = comparison_json(r.versus_exact);
  exact.add("status", to_string(r.exact.status)).add("total_gain", r.exact.total_gain);
  json.add("exact", exact);
  if (r.has_entropic) {
    JsonObject entropic = comparison_json(r.versus_entropic);
    entropic.add("epsilon", r.temperature.epsilon).add("total_gain", r.temperature.fitted_gain);
    json.add("entropic", entropic);
  } else {
    json.add_null("entropic");
  }
  JsonObject structure;
  structure.add("nodf", r.structure.nodf.total).add("nodf_rows", r.structure.nodf.rows)
      .add("nodf_columns", r.structure.nodf.columns).add("wnodf", r.structure.wnodf.total)
      .add("spectral_radius", r.structure.spectral_radius)
      .add("connectance", r.structure.connectance).add("binarize", r.binarize_rule);
  json.add("structure", structure);
  return json;
}

std::string percent(double share) {
  std::ostringstream out;
  out.precision(3);
  out << 100 * share << "%";
  return out.str();
}

void print_text(std::ostream& out, const AnalyzeReport& r) {
  const ObservedAllocation& o = r.observed;
  const TemperatureResult& t = r.temperature;
  out.precision(4);
  out << "allocation " << o.sources.allocation << ": " << o.shares.rows() << " agents x "
      << o.shares.cols() << " partners, ";
  if (o.counts) out << o.units << " units (counts)\n"; else out << "shares (no unit count)\n";
  if (!o.note.empty()) out << "note: " << o.note << "\n";
  out << "temperature: " << t.brief() << "\n";
  if (!t.message.empty() && t.estimated()) out << "  note: " << t.message << "\n";
  out << "  gain: observed " << t.observed_gain << ", exact optimum " << t.optimum_gain
      << ", independent coupling " << t.independent_gain << "\n";
  if (r.exact.optimal())
    out << "versus the exact optimum (" << r.exact.support_size << " links): "
        << r.versus_exact.brief() << "; " << percent(r.versus_exact.weight_on_top_links)
        << " of the weight on the allocation's own top " << o.shares.rows() + o.shares.cols() - 1
        << " cells\n";
  if (r.has_entropic)
    out << "versus the entropic coupling at the estimate: " << r.versus_entropic.brief() << "\n";
  out << "structure (" << r.binarize_rule << "): connectance " << r.structure.connectance
      << ", NODF " << r.structure.nodf.total << ", WNODF " << r.structure.wnodf.total
      << ", spectral radius " << r.structure.spectral_radius << "\n";
  out << kCaution << "\n";
}

AnalyzeOptions read_options(const po::variables_map& vm) {
  AnalyzeOptions options;
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
  return options;
}

// ---- CSV input ----

AnalyzeInput read_csv_input(const po::variables_map& vm) {
  if (!vm.count("allocation") || !vm.count("gains"))
    throw InputError("allocsim analyze",
                     "give --allocation P.csv and --gains G.csv, or a results file");
  AnalyzeInput in;
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

Matrix read_matrix_dataset(const H5::Group& group, const std::string& name,
                           const std::string& where) {
  if (!group.nameExists(name)) throw InputError(where, "has no dataset '" + name + "'");
  const H5::DataSet ds = group.openDataSet(name);
  hsize_t dims[2] = {0, 0};
  if (ds.getSpace().getSimpleExtentNdims() != 2)
    throw InputError(where + "/" + name, "is not a matrix");
  ds.getSpace().getSimpleExtentDims(dims);
  Matrix values(dims[0], dims[1]);
  ds.read(values.data(), H5::PredType::NATIVE_DOUBLE);
  return values;
}

AnalyzeInput read_run(const H5::H5File& file, const std::string& path, const std::string& run) {
  const std::string where = path + ":/runs/" + run;
  if (!file.nameExists("runs") || !file.openGroup("runs").nameExists(run))
    throw InputError(path, "has no run '" + run + "'");
  const H5::Group group = file.openGroup("runs/" + run);
  if (!group.nameExists("scenario") || !group.nameExists("allocation"))
    throw InputError(where, "lacks its scenario or allocation group");
  const H5::Group scenario = group.openGroup("scenario");
  AnalyzeInput in;
  in.sources = {where + "/allocation/total", where + "/scenario/gains",
                where + "/scenario/access"};
  in.gains = read_matrix_dataset(scenario, "gains", where + "/scenario");
  in.allocation = read_matrix_dataset(group.openGroup("allocation"), "total", where + "/allocation");
  if (scenario.nameExists("access")) {
    const Matrix access = read_matrix_dataset(scenario, "access", where + "/scenario");
    in.access = (access.array() != 0).cast<std::uint8_t>();
  }
  return in;
}

std::vector<std::string> run_names(const H5::H5File& file, const std::string& path) {
  if (!file.nameExists("runs")) throw InputError(path, "has no /runs group (not a results file?)");
  const H5::Group runs = file.openGroup("runs");
  std::vector<std::string> names;
  for (hsize_t k = 0; k < runs.getNumObjs(); ++k) names.push_back(runs.getObjnameByIdx(k));
  return names;
}

void write_comparison(H5::Group& group, const std::string& prefix, const Comparison& c) {
  for (const auto& [name, value] : named_values(c)) set_number_attribute(group, prefix + name, value);
}

void write_analysis(H5::H5File& file, const std::string& run, const AnalyzeReport& r) {
  H5::Group run_group = file.openGroup("runs/" + run);
  if (run_group.nameExists("analysis")) run_group.unlink("analysis");
  H5::Group group = run_group.createGroup("analysis");
  const TemperatureResult& t = r.temperature;
  set_text_attribute(group, "temperature_status", to_string(t.status));
  set_number_attribute(group, "epsilon", t.epsilon);
  set_number_attribute(group, "epsilon_stderr", t.standard_error);
  set_number_attribute(group, "epsilon_ci_low", t.ci_low);
  set_number_attribute(group, "epsilon_ci_high", t.ci_high);
  set_number_attribute(group, "confidence", t.confidence);
  set_number_attribute(group, "observed_gain", t.observed_gain);
  set_number_attribute(group, "optimum_gain", t.optimum_gain);
  set_number_attribute(group, "independent_gain", t.independent_gain);
  write_comparison(group, "exact_", r.versus_exact);
  if (r.has_entropic) write_comparison(group, "entropic_", r.versus_entropic);
  set_number_attribute(group, "nodf", r.structure.nodf.total);
  set_number_attribute(group, "wnodf", r.structure.wnodf.total);
  set_number_attribute(group, "spectral_radius", r.structure.spectral_radius);
  set_number_attribute(group, "connectance", r.structure.connectance);
  set_text_attribute(group, "binarize", r.binarize_rule);
  const auto rows = static_cast<Eigen::Index>(r.observed.kept_rows.size() + r.observed.dropped_rows.size());
  const auto cols = static_cast<Eigen::Index>(r.observed.kept_columns.size() + r.observed.dropped_columns.size());
  if (r.exact.optimal())
    write_matrix(group, "exact", expand_to_input(r.exact.coupling, r.observed, rows, cols));
  if (r.has_entropic)
    write_matrix(group, "entropic", expand_to_input(t.coupling, r.observed, rows, cols));
}

int analyze_results_file(const std::string& path, const po::variables_map& vm,
                         const AnalyzeOptions& options) {
  H5::Exception::dontPrint();
  std::vector<std::string> runs;
  std::vector<AnalyzeReport> reports;
  try {
    if (!H5::H5File::isHdf5(path)) throw InputError(path, "is not an HDF5 file");
  } catch (const H5::Exception&) {
    throw InputError(path, "cannot be read (does the file exist?)");
  }
  try {
    const H5::H5File file(path, H5F_ACC_RDONLY);
    runs = vm.count("run") ? std::vector<std::string>{vm["run"].as<std::string>()}
                           : run_names(file, path);
    for (const std::string& run : runs) {
      const AnalyzeInput in = read_run(file, path, run);
      if (!vm.count("json")) std::cerr << "analyzing " << run << "\n";
      reports.push_back(analyze(in, options));
    }
  } catch (const H5::Exception& e) {
    throw InputError(path, "cannot be read: " + e.getDetailMsg());
  }
  for (std::size_t k = 0; k < runs.size(); ++k) {
    if (vm.count("json")) {
      JsonObject json = report_json(reports[k]);
      json.add("run", runs[k]);
      std::cout << json.str() << "\n";
    } else {
      std::cout << "run " << runs[k] << "\n";
      print_text(std::cout, reports[k]);
    }
  }
  if (vm.count("write")) {
    // A copy beside the file takes the analysis; it replaces the file only when complete.
    const std::string temporary = temporary_name_for(path);
    std::filesystem::copy_file(path, temporary, std::filesystem::copy_options::overwrite_existing);
    try {
      {
        H5::H5File file(temporary, H5F_ACC_RDWR);
        for (std::size_t k = 0; k < runs.size(); ++k) write_analysis(file, runs[k], reports[k]);
      }
      std::filesystem::rename(temporary, path);
    } catch (...) {
      std::remove(temporary.c_str());
      throw;
    }
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
      ("json", "print one JSON object on stdout (one per run for a results file)");
  po::positional_options_description positional;
  positional.add("results", 1);
  po::variables_map vm;
  if (!parse_or_help(args, options, positional, vm, "analyze",
                     "--allocation P.csv --gains G.csv [--access A.csv] [--json]\n"
                     "       allocsim analyze results.h5 [--run NAME] [--json] [--write]"))
    return kExitOk;
  const AnalyzeOptions analyze_options = read_options(vm);
  if (vm.count("results")) {
    if (vm.count("allocation") || vm.count("gains") || vm.count("access"))
      throw InputError("allocsim analyze",
                       "give either a results file or --allocation/--gains, not both");
    return analyze_results_file(vm["results"].as<std::string>(), vm, analyze_options);
  }
  if (vm.count("run") || vm.count("write"))
    throw InputError(vm.count("run") ? "--run" : "--write", "applies to a results file only");
  const AnalyzeReport report = analyze(read_csv_input(vm), analyze_options);
  if (vm.count("json")) {
    std::cout << report_json(report).str() << "\n";
  } else {
    print_text(std::cout, report);
  }
  if (!report.observed.note.empty()) std::cerr << "note: " << report.observed.note << "\n";
  return report.temperature.status == TemperatureStatus::not_converged ? kExitProblem : kExitOk;
}

}  // namespace allocsim::cli
