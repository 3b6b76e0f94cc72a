// allocsim trend: per level of a factor, whether a summary metric rises or
// falls with a swept key (experiments/trend.hpp), as a table, JSON or CSV,
// with one plain sentence per level.
#include <algorithm>
#include <cmath>
#include <iomanip>
#include <iostream>
#include <map>
#include <set>
#include <sstream>

#include "allocsim/core/atomic_file.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/json.hpp"
#include "allocsim/core/output_file.hpp"
#include "allocsim/experiments/trend.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

constexpr const char* kDefaultMetric = "nodf_z_score";
constexpr const char* kDefaultX = "dynamics.temperature";
constexpr const char* kNoFactor = "none";

struct SummaryColumns {
  std::vector<std::pair<std::string, std::vector<double>>> numbers;
  std::vector<std::pair<std::string, std::vector<std::string>>> texts;
  long rows = 0;

  const std::vector<double>* number(const std::string& name) const {
    for (const auto& [key, column] : numbers)
      if (key == name) return &column;
    return nullptr;
  }
  const std::vector<std::string>* text(const std::string& name) const {
    for (const auto& [key, column] : texts)
      if (key == name) return &column;
    return nullptr;
  }
  // The column as text per row (numbers formatted), or empty when absent.
  std::vector<std::string> as_text(const std::string& name) const {
    if (const auto* t = text(name)) return *t;
    std::vector<std::string> out;
    if (const auto* n = number(name))
      for (double v : *n) out.push_back(format_number(v));
    return out;
  }
};

std::string numeric_column_list(const SummaryColumns& summary) {
  std::string list;
  for (const auto& [name, column] : summary.numbers) list += (list.empty() ? "" : ", ") + name;
  return list;
}

// Exact name, else the one numeric column it starts (e.g. "nodf_z" for nodf_z_score).
std::string resolve_numeric(const SummaryColumns& summary, const std::string& name,
                            const std::string& option) {
  if (summary.number(name)) return name;
  std::vector<std::string> matches;
  for (const auto& [key, column] : summary.numbers)
    if (key.rfind(name, 0) == 0) matches.push_back(key);
  if (matches.size() == 1) return matches.front();
  if (summary.text(name))
    throw InputError(option, "'" + name + "' is a text column; name a numeric one");
  throw InputError(option, "the summary has no numeric column '" + name + "'" +
                               (matches.empty() ? "" : " (several start so)") +
                               "; it has: " + numeric_column_list(summary));
}

// Parameter columns ("section.key") that take more than one value.
std::vector<std::string> varying_keys(const SummaryColumns& summary) {
  std::vector<std::string> keys;
  const auto varies = [](const std::vector<std::string>& values) {
    return std::set<std::string>(values.begin(), values.end()).size() > 1;
  };
  for (const auto& [name, column] : summary.texts)
    if (name.find('.') != std::string::npos && varies(column)) keys.push_back(name);
  for (const auto& [name, column] : summary.numbers)
    if (name.find('.') != std::string::npos && varies(summary.as_text(name))) keys.push_back(name);
  return keys;
}

// The z-score column that goes with a metric: NODF's for nodf*, WNODF's for wnodf*.
std::string z_column_for(const SummaryColumns& summary, const std::string& metric) {
  for (const char* family : {"wnodf", "nodf"}) {
    const std::string column = std::string(family) + "_z_score";
    if (metric.rfind(family, 0) == 0 && summary.number(column)) return column;
  }
  return "";
}

struct Request {
  std::string file, metric, x, z_column, null_model;
  std::vector<std::string> factors;  // level = values of these keys
  std::vector<std::string> pooled;   // other varying keys, pooled within a level
  TrendOptions options;
};

std::vector<std::string> level_labels(const SummaryColumns& summary,
                                      const std::vector<std::string>& factors) {
  if (factors.empty()) return {};
  std::vector<std::string> labels(static_cast<std::size_t>(summary.rows));
  for (const auto& key : factors) {
    const std::vector<std::string> values = summary.as_text(key);
    for (std::size_t r = 0; r < labels.size(); ++r) {
      labels[r] += (labels[r].empty() ? "" : ", ") + key + " = " + values[r];
    }
  }
  return labels;
}

std::string null_phrase(const std::string& model) {
  return model.empty() ? "more than their null (|z| > threshold)"
                       : "more nested than the " + model + " null";
}

JsonObject level_json(const TrendLevel& level, const std::string& sentence) {
  const TrendResult& r = level.result;
  JsonObject json;
  json.add("level", level.level)
      .add("runs", static_cast<long long>(r.runs))
      .add("left_out", static_cast<long long>(r.left_out))
      .add("x_values", static_cast<long long>(r.x_values))
      .add("smallest_group", static_cast<long long>(r.smallest_group))
      .add("rho", r.rho)
      .add("p_value", r.p_value)
      .add("slope_per_tenfold", r.slope)
      .add("slope_low", r.slope_low)
      .add("slope_high", r.slope_high)
      .add("runs_with_z", static_cast<long long>(r.with_z))
      .add("runs_above", static_cast<long long>(r.above))
      .add("runs_below", static_cast<long long>(r.below))
      .add("direction", to_string(r.direction))
      .add("sentence", sentence);
  if (!r.note.empty()) json.add("note", r.note);
  return json;
}

void write_csv(const std::string& path, const std::vector<TrendLevel>& levels) {
  AtomicFile file(path);
  std::ostream& out = file.stream();
  out << "level,runs,left_out,x_values,rho,p_value,slope_per_tenfold,slope_low,slope_high,"
         "runs_with_z,runs_above,runs_below,direction\n";
  const auto number = [](double v) { return std::isfinite(v) ? format_number(v) : std::string(); };
  for (const auto& level : levels) {
    const TrendResult& r = level.result;
    std::string label = level.level;
    if (label.find_first_of(",\"") != std::string::npos) {
      std::string quoted = "\"";
      for (char c : label) quoted += c == '"' ? std::string("\"\"") : std::string(1, c);
      label = quoted + "\"";
    }
    out << label << "," << r.runs << "," << r.left_out << "," << r.x_values << "," << number(r.rho)
        << "," << number(r.p_value) << "," << number(r.slope) << "," << number(r.slope_low) << ","
        << number(r.slope_high) << "," << r.with_z << "," << r.above << "," << r.below << ","
        << to_string(r.direction) << "\n";
  }
  file.commit();
}

std::string cell(double value, int precision = 3) {
  if (!std::isfinite(value)) return "n/a";
  std::ostringstream out;
  out << std::setprecision(precision) << value;
  return out.str();
}

void print_table(const Request& request, const std::vector<TrendLevel>& levels,
                 const std::vector<std::string>& sentences) {
  std::cout << request.metric << " against " << request.x << " (log10), in " << request.file;
  if (!request.factors.empty()) {
    std::cout << ", by ";
    for (std::size_t k = 0; k < request.factors.size(); ++k)
      std::cout << (k ? " and " : "") << request.factors[k];
  }
  std::cout << "\n";
  std::size_t width = 5;
  for (const auto& level : levels) width = std::max(width, level.level.size());
  const double z = request.options.z_threshold;
  std::cout << std::left << std::setw(static_cast<int>(width) + 2) << "level" << std::right
            << std::setw(6) << "runs" << std::setw(8) << "rho" << std::setw(9) << "p"
            << std::setw(17) << "slope per 10x" << std::setw(24)
            << (cell(100 * request.options.confidence) + "% interval");
  if (!request.z_column.empty()) {
    std::cout << std::setw(9) << ("z > " + cell(z)) << std::setw(9) << ("z < -" + cell(z));
  }
  std::cout << "\n";
  for (const auto& level : levels) {
    const TrendResult& r = level.result;
    std::cout << std::left << std::setw(static_cast<int>(width) + 2)
              << (level.level.empty() ? "all runs" : level.level) << std::right << std::setw(6)
              << r.runs << std::setw(8) << cell(r.rho, 2) << std::setw(9)
              << (std::isfinite(r.p_value) && r.p_value < 0.001 ? "<0.001" : cell(r.p_value, 2))
              << std::setw(17) << cell(r.slope) << std::setw(24)
              << ("[" + cell(r.slope_low) + ", " + cell(r.slope_high) + "]");
    if (!request.z_column.empty()) {
      std::cout << std::setw(9) << (std::to_string(r.above) + "/" + std::to_string(r.with_z))
                << std::setw(9) << (std::to_string(r.below) + "/" + std::to_string(r.with_z));
    }
    std::cout << "\n";
  }
  std::cout << "(rho: Spearman, p: two-sided permutation p-value over "
            << request.options.permutations << " permutations; slope: least squares on log10 "
            << request.x << ", interval: bootstrap over replicates, "
            << request.options.bootstrap_draws << " draws";
  if (!request.z_column.empty()) std::cout << "; z: " << request.z_column;
  std::cout << ")\n";
  if (!request.pooled.empty()) {
    std::cout << "pooled within each level (also vary):";
    for (const auto& key : request.pooled) std::cout << " " << key;
    std::cout << "\n";
  }
  std::cout << "\n";
  for (const auto& sentence : sentences) std::cout << sentence << "\n";
}

po::options_description trend_options() {
  po::options_description options("trend options");
  options.add_options()("file", po::value<std::string>(), "results file (HDF5) of a sweep")(
      "metric", po::value<std::string>()->default_value(kDefaultMetric),
      "summary column to follow (a unique start of its name is enough, e.g. nodf_z)")(
      "x", po::value<std::string>()->default_value(kDefaultX),
      "swept key the metric is set against (> 0; log10 scale)")(
      "by", po::value<std::string>(),
      "key whose levels get one trend each (default: every other swept key; 'none' pools all "
      "runs)")("z", po::value<std::string>(),
               "z-score column counted against the null (default: the metric's own, e.g. "
               "nodf_z_score for nodf*; 'none' for no counts)")(
      "permutations", po::value<long>()->default_value(9999),
      "permutations of the p-value (>= 99)")("draws", po::value<long>()->default_value(2000),
                                             "bootstrap draws of the slope interval (>= 200)")(
      "seed", po::value<unsigned long long>()->default_value(1),
      "seed of the permutations and draws")("json", "print one JSON object on stdout")(
      "csv", po::value<std::string>(), "also write the table as CSV to this file");
  return options;
}

Request make_request(const po::variables_map& vm, const SummaryColumns& summary,
                     ResultsReader& reader) {
  Request request;
  request.file = vm["file"].as<std::string>();
  request.metric = resolve_numeric(summary, vm["metric"].as<std::string>(), "--metric");
  request.x = resolve_numeric(summary, vm["x"].as<std::string>(), "--x");
  const std::vector<std::string> varying = varying_keys(summary);
  const std::string by = vm.count("by") ? vm["by"].as<std::string>() : "";
  if (by == kNoFactor) {
  } else if (!by.empty()) {
    if (!summary.number(by) && !summary.text(by)) {
      std::string list;
      for (const auto& key : varying) list += (list.empty() ? "" : ", ") + key;
      throw InputError("--by", "the summary has no column '" + by +
                                   "' (keys that vary: " + (list.empty() ? "none" : list) + ")");
    }
    if (by == request.x) throw InputError("--by", "is the x key itself; name another key");
    request.factors.push_back(by);
  } else {
    for (const auto& key : varying)
      if (key != request.x) request.factors.push_back(key);
  }
  for (const auto& key : varying) {
    if (key != request.x &&
        std::find(request.factors.begin(), request.factors.end(), key) == request.factors.end()) {
      request.pooled.push_back(key);
    }
  }
  const std::string z = vm.count("z") ? vm["z"].as<std::string>() : "";
  if (z == kNoFactor) {
  } else if (!z.empty()) {
    request.z_column = resolve_numeric(summary, z, "--z");
  } else {
    request.z_column = z_column_for(summary, request.metric);
  }
  if (!request.z_column.empty()) {
    const std::string family = request.z_column.substr(0, request.z_column.find("_z_score"));
    const std::vector<std::string> runs = reader.runs();
    if (!runs.empty()) {
      request.null_model =
          attribute_text(reader.group_attributes(runs.front(), "analysis"), family + "_null_model");
    }
  }
  request.options.permutations = vm["permutations"].as<long>();
  request.options.bootstrap_draws = vm["draws"].as<long>();
  request.options.seed = vm["seed"].as<unsigned long long>();
  try {
    request.options.validate();
  } catch (const InputError& e) {
    const std::string option = e.where() == "bootstrap_draws" ? "--draws" : "--" + e.where();
    throw e.at(option);
  }
  return request;
}

}  // namespace

int trend_command(const Arguments& args) {
  const po::options_description options = trend_options();
  po::positional_options_description positional;
  positional.add("file", 1);
  po::variables_map vm;
  if (!parse_or_help(args, options, positional, vm, "trend",
                     "RESULTS.h5 [--metric nodf_z_score] [--x dynamics.temperature] [--by KEY] "
                     "[--json] [--csv FILE]\n\n"
                     "Per level of a factor, whether a summary metric rises or falls with a swept "
                     "key: Spearman's rho with a permutation p-value, the slope against log10 x "
                     "with a bootstrap interval over replicates, the runs above and below their "
                     "null, and one sentence per level. See docs/guide.md.")) {
    return kExitOk;
  }
  if (!vm.count("file"))
    throw InputError("allocsim trend", "name a results file (see 'allocsim trend --help')");
  if (vm.count("csv")) {
    require_distinct(vm["csv"].as<std::string>(), "--csv",
                     {{"the results file", vm["file"].as<std::string>()}});
  }
  ResultsReader reader(vm["file"].as<std::string>());
  SummaryColumns summary{reader.summary_numbers(), reader.summary_texts(), 0};
  if (!summary.numbers.empty())
    summary.rows = static_cast<long>(summary.numbers.front().second.size());
  if (summary.rows == 0) throw InputError(reader.path(), "has no /summary rows to follow");
  const Request request = make_request(vm, summary, reader);

  const std::vector<double>& x = *summary.number(request.x);
  const std::vector<double>& y = *summary.number(request.metric);
  const std::vector<double> empty;
  const std::vector<double>& z =
      request.z_column.empty() ? empty : *summary.number(request.z_column);
  std::vector<TrendLevel> levels;
  try {
    levels = trends_by_level(x, y, z, level_labels(summary, request.factors), request.options);
  } catch (const InputError& e) {
    throw InputError(reader.path() + ": " + request.x, e.reason());
  }
  std::vector<std::string> sentences;
  for (const auto& level : levels) {
    sentences.push_back(describe_trend(
        level.result,
        {level.level, request.metric, request.x, null_phrase(request.null_model), "less nested"},
        request.options));
  }

  if (vm.count("csv")) write_csv(vm["csv"].as<std::string>(), levels);
  if (vm.count("json")) {
    std::vector<JsonObject> rows;
    for (std::size_t k = 0; k < levels.size(); ++k)
      rows.push_back(level_json(levels[k], sentences[k]));
    std::string factors;
    for (const auto& key : request.factors) factors += (factors.empty() ? "" : ",") + key;
    JsonObject json;
    json.add("file", request.file)
        .add("metric", request.metric)
        .add("x", request.x)
        .add("by", factors)
        .add("z_column", request.z_column)
        .add("null_model", request.null_model)
        .add("confidence", request.options.confidence)
        .add("significance", request.options.significance)
        .add("z_threshold", request.options.z_threshold)
        .add("permutations", static_cast<long long>(request.options.permutations))
        .add("bootstrap_draws", static_cast<long long>(request.options.bootstrap_draws))
        .add("levels", rows);
    std::cout << json.str() << "\n";
  } else {
    print_table(request, levels, sentences);
  }
  return kExitOk;
}

}  // namespace allocsim::cli
