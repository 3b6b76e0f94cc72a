// allocsim plot: draws the figures of a results file (DESIGN.md section 7).
//
// It reads only what the file holds and skips a figure, with a note on
// stderr, when its data are absent, so it works on files of any stage (a
// bare simulation, or runs with their analysis and a sweep summary).
// Metric names are matched after lower-casing and turning '.', '/', '-' and
// spaces into '_', so "temperature.epsilon" and "temperature_epsilon" agree.
#include <H5Cpp.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <iostream>
#include <map>
#include <numeric>
#include <optional>
#include <set>
#include <sstream>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/results/results_file.hpp"
#include "allocsim/plots/figures.hpp"
#include "allocsim/results/results_reader.hpp"
#include "commands.hpp"
#include "options.hpp"

namespace allocsim::cli {
namespace {

using plots::FigureOptions;
using plots::Point;

// ---------------------------------------------------------------------------
// Names: what each figure looks for, first match wins (normalised names).

const std::vector<std::string> kTrueTemperature = {"dynamics_temperature", "true_temperature", "temperature"};
const std::vector<std::string> kEpsilon = {"temperature_epsilon", "epsilon", "epsilon_hat", "estimated_epsilon"};
const std::vector<std::string> kEpsilonLow = {"temperature_ci_low", "ci_low", "epsilon_ci_low"};
const std::vector<std::string> kEpsilonHigh = {"temperature_ci_high", "ci_high", "epsilon_ci_high"};
const std::vector<std::string> kBenchmarkTruth = {"true_epsilon", "epsilon_true"};
const std::vector<std::string> kBenchmarkSet = {"set", "benchmark_set", "family", "scenario_gains"};
// Distances from the emergent allocation to a coupling, most useful first
// (KL to the sparse exact coupling is usually infinite).
const std::vector<std::pair<std::string, std::string>> kDistances = {
    {"total_variation", "total variation distance"},
    {"hellinger", "Hellinger distance"},
    {"kl_divergence", "KL divergence"}};

std::string normalised(const std::string& name) {
  std::string out;
  for (const char c : name) {
    out += (c == '.' || c == '/' || c == '-' || c == ' ') ? '_' : static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  }
  return out;
}

// Numbers and texts of one run: its attributes, its analysis attributes
// (also under "analysis_<name>") and its row of /summary.
struct Values {
  std::map<std::string, double> numbers;
  std::map<std::string, std::string> texts;

  std::optional<double> number(const std::vector<std::string>& names) const {
    for (const auto& name : names) {
      const auto it = numbers.find(name);
      if (it != numbers.end()) return it->second;
    }
    return std::nullopt;
  }
  std::optional<std::string> text(const std::vector<std::string>& names) const {
    for (const auto& name : names) {
      const auto it = texts.find(name);
      if (it != texts.end()) return it->second;
    }
    return std::nullopt;
  }
};

struct RunInfo {
  std::string name;
  Values values;
};

// ---------------------------------------------------------------------------
// Reading.

void read_attributes(const H5::H5Object& object, const std::string& prefix, Values& values) {
  for (int k = 0; k < object.getNumAttrs(); ++k) {
    const H5::Attribute attribute = object.openAttribute(static_cast<unsigned>(k));
    const std::string name = prefix + normalised(attribute.getName());
    const H5T_class_t kind = attribute.getDataType().getClass();
    if (attribute.getSpace().getSimpleExtentNpoints() != 1) continue;
    if (kind == H5T_STRING) {
      std::string text;
      attribute.read(attribute.getStrType(), text);
      values.texts.emplace(name, text);
    } else if (kind == H5T_INTEGER || kind == H5T_FLOAT) {
      double value = 0;
      attribute.read(H5::PredType::NATIVE_DOUBLE, &value);
      values.numbers.emplace(name, value);
    }
  }
}

std::vector<hsize_t> shape_of(const H5::DataSet& dataset) {
  const H5::DataSpace space = dataset.getSpace();
  std::vector<hsize_t> shape(static_cast<std::size_t>(space.getSimpleExtentNdims()));
  if (!shape.empty()) space.getSimpleExtentDims(shape.data());
  return shape;
}

bool has_dataset(const H5::Group& group, const std::string& path) {
  return group.nameExists(path) && group.childObjType(path) == H5O_TYPE_DATASET;
}

// A 2-D numeric dataset; nullopt when absent or not 2-D.
std::optional<Matrix> read_matrix(const H5::Group& group, const std::string& path) {
  if (!has_dataset(group, path)) return std::nullopt;
  const H5::DataSet dataset = group.openDataSet(path);
  const auto shape = shape_of(dataset);
  if (shape.size() != 2 || dataset.getDataType().getClass() == H5T_STRING) return std::nullopt;
  Matrix values(static_cast<long>(shape[0]), static_cast<long>(shape[1]));
  if (values.size() > 0) dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
  return values;
}

// A 1-D numeric dataset; empty when absent.
std::vector<double> read_numbers(const H5::Group& group, const std::string& path) {
  if (!has_dataset(group, path)) return {};
  const H5::DataSet dataset = group.openDataSet(path);
  const auto shape = shape_of(dataset);
  if (shape.size() != 1 || dataset.getDataType().getClass() == H5T_STRING) return {};
  std::vector<double> values(static_cast<std::size_t>(shape[0]));
  if (!values.empty()) dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE);
  return values;
}

// A 1-D text dataset (variable-length strings); empty when absent.
std::vector<std::string> read_texts(const H5::Group& group, const std::string& path) {
  if (!has_dataset(group, path)) return {};
  const H5::DataSet dataset = group.openDataSet(path);
  const auto shape = shape_of(dataset);
  if (shape.size() != 1 || dataset.getDataType().getClass() != H5T_STRING ||
      !dataset.getStrType().isVariableStr()) {
    return {};
  }
  std::vector<char*> raw(static_cast<std::size_t>(shape[0]), nullptr);
  if (!raw.empty()) dataset.read(raw.data(), dataset.getStrType());
  std::vector<std::string> texts;
  for (char* text : raw) texts.emplace_back(text ? text : "");
  if (!raw.empty()) {
    H5::DataSet::vlenReclaim(raw.data(), dataset.getStrType(), dataset.getSpace());
  }
  return texts;
}

// Snapshot k (n x m) of a k x n x m dataset.
Matrix read_snapshot(const H5::DataSet& dataset, const std::vector<hsize_t>& shape, hsize_t k) {
  Matrix values(static_cast<long>(shape[1]), static_cast<long>(shape[2]));
  H5::DataSpace file_space = dataset.getSpace();
  const hsize_t start[3] = {k, 0, 0}, count[3] = {1, shape[1], shape[2]};
  file_space.selectHyperslab(H5S_SELECT_SET, count, start);
  const hsize_t memory_shape[2] = {shape[1], shape[2]};
  H5::DataSpace memory_space(2, memory_shape);
  dataset.read(values.data(), H5::PredType::NATIVE_DOUBLE, memory_space, file_space);
  return values;
}

std::vector<std::string> group_names(const H5::Group& group) {
  std::vector<std::string> names;
  for (hsize_t k = 0; k < group.getNumObjs(); ++k) names.push_back(group.getObjnameByIdx(k));
  return names;
}

// Every run with its values; the summary fills in what the groups lack.
std::vector<RunInfo> read_runs(const H5::H5File& file) {
  std::vector<RunInfo> runs;
  const H5::Group group = file.openGroup("runs");
  for (const auto& name : group_names(group)) {
    if (group.childObjType(name) != H5O_TYPE_GROUP) continue;
    RunInfo run{name, {}};
    const H5::Group run_group = group.openGroup(name);
    read_attributes(run_group, "", run.values);
    if (run_group.nameExists("analysis") && run_group.childObjType("analysis") == H5O_TYPE_GROUP) {
      const H5::Group analysis = run_group.openGroup("analysis");
      read_attributes(analysis, "analysis_", run.values);
      read_attributes(analysis, "", run.values);  // keeps the run's own attribute on a clash
    }
    runs.push_back(std::move(run));
  }
  if (!file.nameExists("summary")) return runs;
  const H5::Group summary = file.openGroup("summary");
  const std::vector<std::string> row_runs = read_texts(summary, "run");
  for (const auto& column : group_names(summary)) {
    const std::vector<double> numbers = read_numbers(summary, column);
    const std::vector<std::string> texts = numbers.empty() ? read_texts(summary, column) : std::vector<std::string>{};
    for (std::size_t row = 0; row < row_runs.size(); ++row) {
      auto run = std::find_if(runs.begin(), runs.end(), [&](const RunInfo& r) { return r.name == row_runs[row]; });
      if (run == runs.end()) continue;
      if (row < numbers.size()) run->values.numbers.emplace(normalised(column), numbers[row]);
      if (row < texts.size()) run->values.texts.emplace(normalised(column), texts[row]);
    }
  }
  return runs;
}

// ---------------------------------------------------------------------------
// Drawing.

struct PlotContext {
  std::string out_dir;
  FigureOptions options;
  std::vector<std::string> written;

  // Announces a figure on stdout as soon as it exists.
  void record(const std::string& path) {
    std::cout << path << std::endl;
    written.push_back(path);
  }
  std::string stem(const std::string& name) const {
    return (std::filesystem::path(out_dir) / name).string();
  }
  void skip(const std::string& figure, const std::string& reason) const {
    std::cerr << "allocsim plot: skipped " << figure << ": " << reason << "\n";
  }
};

// A run name made safe for a file name: letters, digits, '.', '_', '-'.
std::string file_name_part(const std::string& text) {
  std::string out;
  for (const char c : text) {
    out += (std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '-' || c == '.') ? c : '_';
  }
  if (out.empty() || out[0] == '.') out = "run" + out;
  return out;
}

std::string short_number(double value) {
  std::ostringstream out;
  out.precision(3);
  out << value;
  return out.str();
}

// A count as "4,000,000"; a number that is not whole as short_number does.
std::string count_text(double value) {
  if (!(std::abs(value) < 1e15) || value != std::round(value)) return short_number(value);
  std::string digits = std::to_string(std::llround(std::abs(value)));
  for (long at = static_cast<long>(digits.size()) - 3; at > 0; at -= 3) digits.insert(static_cast<std::size_t>(at), ",");
  return (value < 0 ? "-" : "") + digits;
}

// "run-000000: price rule, T = 0.05"
std::string run_caption(const RunInfo& run) {
  std::string caption = run.name;
  const auto rule = run.values.text({"dynamics_rule", "rule"});
  const auto temperature = run.values.number(kTrueTemperature);
  if (rule) caption += ": " + *rule + " rule";
  if (temperature) caption += std::string(rule ? ", " : ": ") + "T = " + short_number(*temperature);
  return caption;
}

// Display ordering stored by the analysis, when there is a valid one.
plots::Ordering stored_ordering(const H5::Group& run_group) {
  plots::Ordering ordering;
  for (const auto& [path, target] : {std::pair{"analysis/row_order", &ordering.rows},
                                     std::pair{"analysis/column_order", &ordering.columns}}) {
    for (const double v : read_numbers(run_group, path)) target->push_back(static_cast<long>(v));
  }
  if (ordering.rows.empty() || ordering.columns.empty()) return {};
  return ordering;
}

void draw_heatmaps(PlotContext& context, const H5::Group& run_group, const RunInfo& run) {
  const std::string figure = "allocation heatmaps of " + run.name;
  plots::AllocationHeatmaps heatmaps;
  heatmaps.title = "allocations of " + run_caption(run);
  const auto emergent = read_matrix(run_group, "allocation/total");
  if (!emergent || emergent->sum() <= 0) {
    context.skip(figure, "no allocation/total with units in it");
    return;
  }
  heatmaps.panels.push_back({"emergent allocation (" + count_text(emergent->sum()) + " units)", *emergent});
  const auto epsilon = run.values.number(kEpsilon);
  std::vector<std::string> missing;
  const auto entropic = read_matrix(run_group, "analysis/entropic");
  if (entropic && entropic->rows() == emergent->rows() && entropic->cols() == emergent->cols()) {
    heatmaps.panels.push_back({epsilon ? "entropic coupling, ε = " + short_number(*epsilon) : "entropic coupling", *entropic});
  } else {
    missing.push_back("analysis/entropic");
  }
  const auto exact = read_matrix(run_group, "analysis/exact");
  if (exact && exact->rows() == emergent->rows() && exact->cols() == emergent->cols()) {
    heatmaps.panels.push_back({"exact (optimal) coupling", *exact});
  } else {
    missing.push_back("analysis/exact");
  }
  if (!missing.empty()) {
    std::string list;
    for (const auto& name : missing) list += (list.empty() ? "" : ", ") + name;
    std::cerr << "allocsim plot: note: " << run.name << " has no " << list
              << "; its heatmaps show what is there (run 'allocsim analyze' to add the couplings)\n";
  }
  heatmaps.ordering = stored_ordering(run_group);
  if (!heatmaps.ordering.rows.empty()) {
    const auto name = run.values.text({"order_name"});
    heatmaps.ordering_name = name ? *name : "the stored ordering";
  }
  heatmaps.row_labels = read_texts(run_group, "scenario/agent_labels");
  heatmaps.column_labels = read_texts(run_group, "scenario/partner_labels");
  context.record(plots::draw_allocation_heatmaps(
      heatmaps, context.stem(file_name_part(run.name) + "-allocations"), context.options));
}

// L1 marginal errors of each snapshot window against the normalised
// budgets and capacities.
void marginal_errors(const H5::Group& run_group, plots::Trajectories& figure) {
  if (!has_dataset(run_group, "allocation/snapshots")) return;
  const std::vector<double> r = read_numbers(run_group, "scenario/budgets");
  const std::vector<double> c = read_numbers(run_group, "scenario/capacities");
  const H5::DataSet snapshots = run_group.openDataSet("allocation/snapshots");
  const auto shape = shape_of(snapshots);
  if (shape.size() != 3 || shape[1] != r.size() || shape[2] != c.size() || shape[0] != figure.rounds.size()) return;
  const Vector row_target = Eigen::Map<const Vector>(r.data(), static_cast<long>(r.size())) /
                            std::accumulate(r.begin(), r.end(), 0.0);
  const Vector column_target = Eigen::Map<const Vector>(c.data(), static_cast<long>(c.size())) /
                               std::accumulate(c.begin(), c.end(), 0.0);
  for (hsize_t k = 0; k < shape[0]; ++k) {
    const Matrix counts = read_snapshot(snapshots, shape, k);
    const double total = counts.sum();
    if (!(total > 0)) {
      figure.row_error.push_back(plots::kNoValue);
      figure.column_error.push_back(plots::kNoValue);
      continue;
    }
    figure.row_error.push_back((counts.rowwise().sum() / total - row_target).cwiseAbs().sum());
    figure.column_error.push_back((counts.colwise().sum().transpose() / total - column_target).cwiseAbs().sum());
  }
}

void draw_trajectories(PlotContext& context, const H5::Group& run_group, const RunInfo& run) {
  const std::string figure_name = "trajectories of " + run.name;
  plots::Trajectories figure;
  figure.title = "trajectories of " + run_caption(run);
  figure.rounds = read_numbers(run_group, "allocation/round_end");
  if (figure.rounds.empty()) {
    context.skip(figure_name, "no allocation/round_end");
    return;
  }
  if (const auto prices = read_matrix(run_group, "prices");
      prices && prices->rows() == static_cast<long>(figure.rounds.size())) {
    for (long j = 0; j < prices->cols(); ++j) {
      const Vector column = prices->col(j);
      figure.prices.emplace_back(column.data(), column.data() + column.size());
    }
  }
  figure.partner_labels = read_texts(run_group, "scenario/partner_labels");
  marginal_errors(run_group, figure);
  if (figure.prices.empty() && figure.column_error.empty()) {
    context.skip(figure_name, "neither prices nor allocation snapshots");
    return;
  }
  context.record(plots::draw_trajectories(
      figure, context.stem(file_name_part(run.name) + "-trajectories"), context.options));
}

// Points (true temperature, value) over the runs that have both.
std::vector<Point> points_against_temperature(const std::vector<RunInfo>& runs,
                                              const std::vector<std::string>& names) {
  std::vector<Point> points;
  for (const auto& run : runs) {
    const auto t = run.values.number(kTrueTemperature);
    const auto y = run.values.number(names);
    if (t && y) points.push_back({*t, *y});
  }
  return points;
}

std::size_t distinct_x(const std::vector<Point>& points) {
  std::set<double> x;
  for (const auto& p : points) x.insert(p.x);
  return x.size();
}

// The observed metric and the first null model that has a mean for it:
// names "<metric>_<model>_null_mean" / "..._mean" with "_sd" or "_low"/"_high".
void draw_metric(PlotContext& context, const std::vector<RunInfo>& runs, const std::string& metric,
                 const std::string& display) {
  const std::string figure_name = display + " against temperature";
  const std::vector<std::string> observed = {metric, "structure_" + metric, metric + "_total",
                                             "structure_" + metric + "_total"};
  plots::MetricAgainstTemperature figure;
  figure.title = display + " of the emergent allocations against the choice temperature";
  figure.metric_name = display;
  figure.runs = points_against_temperature(runs, observed);
  if (distinct_x(figure.runs) < 2) {
    context.skip(figure_name, "needs runs with a " + metric + " value at two or more temperatures");
    return;
  }
  // The null model: the first "<prefix>mean" key that names the metric and "null".
  std::string prefix;
  for (const auto& run : runs) {
    for (const auto& [key, value] : run.values.numbers) {
      const bool names_metric = key.rfind(metric + "_", 0) == 0 || key.rfind("structure_" + metric + "_", 0) == 0;
      if (names_metric && key.find("null") != std::string::npos && key.size() > 5 &&
          key.compare(key.size() - 5, 5, "_mean") == 0) {
        prefix = key.substr(0, key.size() - 4);
        break;
      }
    }
    if (!prefix.empty()) break;
  }
  if (prefix.empty()) {
    std::cerr << "allocsim plot: note: no null model values for " << metric << "; drawing "
              << figure_name << " without a null band\n";
  } else {
    std::string model = prefix.substr(prefix.find(metric) + metric.size());
    for (const char* word : {"_null", "null_", "_"}) {
      for (std::size_t at; (at = model.find(word)) != std::string::npos;) model.replace(at, std::string(word).size(), " ");
    }
    model.erase(0, model.find_first_not_of(' '));
    model.erase(model.find_last_not_of(' ') + 1);
    figure.null_name = model.empty() ? "null model" : model + " null model";
    for (const auto& run : runs) {  // the analysis names its null model in "<prefix>model"
      if (const auto named = run.values.text({prefix + "model"})) {
        figure.null_name = *named + " null model";
        break;
      }
    }
    for (const auto& run : runs) {
      const auto t = run.values.number(kTrueTemperature);
      const auto mean = run.values.number({prefix + "mean"});
      if (!t || !mean) continue;
      const auto low = run.values.number({prefix + "low", prefix + "q025"});
      const auto high = run.values.number({prefix + "high", prefix + "q975"});
      const auto sd = run.values.number({prefix + "sd"});
      if (low && high) figure.null_band.push_back({*t, *mean, *low, *high});
      else if (sd) figure.null_band.push_back({*t, *mean, *mean - 1.96 * *sd, *mean + 1.96 * *sd});
    }
  }
  context.record(plots::draw_metric_against_temperature(
      figure, context.stem(metric + "-vs-temperature"), context.options));
}

void draw_recovery(PlotContext& context, const std::vector<RunInfo>& runs) {
  plots::TemperatureRecovery figure;
  figure.title = "estimated transport temperature against the true choice temperature";
  for (const auto& run : runs) {
    const auto t = run.values.number(kTrueTemperature);
    const auto e = run.values.number(kEpsilon);
    if (!t || !e) continue;
    figure.runs.push_back({*t, *e, run.values.number(kEpsilonLow).value_or(plots::kNoValue),
                           run.values.number(kEpsilonHigh).value_or(plots::kNoValue)});
  }
  long drawable = 0;
  for (const auto& p : figure.runs) drawable += (p.x > 0 && p.y > 0 && std::isfinite(p.y));
  if (drawable == 0) {
    context.skip("epsilon against temperature", "no run has both a temperature and a positive epsilon estimate");
    return;
  }
  context.record(
      plots::draw_temperature_recovery(figure, context.stem("epsilon-vs-temperature"), context.options));
}

void draw_distances(PlotContext& context, const std::vector<RunInfo>& runs) {
  for (const auto& [name, display] : kDistances) {
    plots::DistanceAgainstTemperature figure;
    figure.title = "distance from the emergent allocation to the transport couplings";
    figure.distance_name = display;
    figure.to_entropic = points_against_temperature(runs, {"entropic_" + name, name + "_entropic", "analysis_entropic_" + name});
    figure.to_exact = points_against_temperature(runs, {"exact_" + name, name + "_exact", "analysis_exact_" + name});
    auto finite = [](std::vector<Point>& points) {
      points.erase(std::remove_if(points.begin(), points.end(), [](const Point& p) { return !std::isfinite(p.y); }),
                   points.end());
    };
    finite(figure.to_entropic);
    finite(figure.to_exact);
    std::vector<Point> both = figure.to_entropic;
    both.insert(both.end(), figure.to_exact.begin(), figure.to_exact.end());
    if (distinct_x(both) < 2) continue;
    context.record(plots::draw_distance_against_temperature(
        figure, context.stem("distance-vs-temperature"), context.options));
    return;
  }
  context.skip("distance against temperature",
               "needs runs with a distance to the entropic or exact coupling (total_variation, hellinger "
               "or kl_divergence) at two or more temperatures");
}

// Median and quartiles of sorted values (linear interpolation).
double quantile(const std::vector<double>& sorted, double q) {
  const double at = q * static_cast<double>(sorted.size() - 1);
  const auto below = static_cast<std::size_t>(std::floor(at));
  const std::size_t above = std::min(below + 1, sorted.size() - 1);
  return sorted[below] + (at - static_cast<double>(below)) * (sorted[above] - sorted[below]);
}

void draw_scores(PlotContext& context, const std::vector<RunInfo>& runs) {
  struct Cases {
    std::vector<double> relative_errors;
    long covered = 0, with_interval = 0;
  };
  std::map<std::string, std::map<double, Cases>> sets;
  for (const auto& run : runs) {
    const auto truth = run.values.number(kBenchmarkTruth);
    const auto estimate = run.values.number(kEpsilon);
    if (!truth || !estimate || !(*truth > 0) || !std::isfinite(*estimate)) continue;
    Cases& cases = sets[run.values.text(kBenchmarkSet).value_or("all cases")][*truth];
    cases.relative_errors.push_back((*estimate - *truth) / *truth);
    const auto low = run.values.number(kEpsilonLow), high = run.values.number(kEpsilonHigh);
    if (low && high) {
      ++cases.with_interval;
      cases.covered += (*low <= *truth && *truth <= *high);
    }
  }
  if (sets.empty()) {
    context.skip("estimator scores", "no benchmark cases (runs with true_epsilon and an epsilon estimate)");
    return;
  }
  plots::EstimatorScores figure;
  figure.title = "temperature estimator on benchmark sets";
  for (auto& [label, by_truth] : sets) {
    plots::BenchmarkSeries series{label, {}};
    for (auto& [truth, cases] : by_truth) {
      std::sort(cases.relative_errors.begin(), cases.relative_errors.end());
      series.scores.push_back({truth, quantile(cases.relative_errors, 0.5), quantile(cases.relative_errors, 0.25),
                               quantile(cases.relative_errors, 0.75),
                               cases.with_interval ? double(cases.covered) / double(cases.with_interval) : plots::kNoValue,
                               static_cast<long>(cases.relative_errors.size())});
    }
    figure.sets.push_back(series);
  }
  context.record(plots::draw_estimator_scores(figure, context.stem("estimator-scores"), context.options));
}

std::string usage_text() {
  return "Draws the figures of a results file into a folder and prints the files written,\n"
         "one per line. A figure whose data the file does not hold is skipped with a note\n"
         "on stderr. Figures (NAME.png, or .svg/.pdf):\n"
         "  <run>-allocations      emergent allocation beside the entropic and exact couplings\n"
         "                         (runs/<run>/allocation/total, analysis/entropic, analysis/exact)\n"
         "  <run>-trajectories     prices and marginal errors over the rounds\n"
         "                         (runs/<run>/prices, allocation/snapshots, allocation/round_end)\n"
         "  nodf-vs-temperature    NODF against the choice temperature, with the null band\n"
         "  wnodf-vs-temperature   the same for WNODF\n"
         "  epsilon-vs-temperature estimated epsilon (with its interval) against the true temperature\n"
         "  distance-vs-temperature distance to the entropic and exact couplings\n"
         "  estimator-scores       error and coverage on benchmark sets (true_epsilon columns)\n"
         "Per-run figures are drawn for --run (default: the run with the smallest run_index).";
}

}  // namespace

int plot_command(const Arguments& args) {
  po::options_description options("plot options");
  options.add_options()
      ("file", po::value<std::string>()->required(), "results file (HDF5)")
      ("out-dir", po::value<std::string>()->default_value("."), "folder for the figures (created if missing)")
      ("format", po::value<std::string>()->default_value("png"), "png, svg or pdf")
      ("run", po::value<std::string>(), "the run whose heatmaps and trajectories are drawn (default: the first)")
      ("script-only", "write the gnuplot scripts (NAME.gp) instead of running gnuplot");
  po::positional_options_description positional;
  positional.add("file", 1);
  po::variables_map vm;
  if (!parse_or_help(args, options, positional, vm, "plot",
                     "RESULTS.h5 [--out-dir DIR] [--format png|svg|pdf] [--run NAME] [--script-only]\n\n" +
                         usage_text())) {
    return kExitOk;
  }
  PlotContext context;
  context.out_dir = vm["out-dir"].as<std::string>();
  context.options.format = plots::image_format_from_string(vm["format"].as<std::string>());
  context.options.script_only = vm.count("script-only") > 0;
  const std::string path = vm["file"].as<std::string>();

  try {
    ResultsReader reader(path);
    const H5::H5File& file = reader.file();
    const std::vector<RunInfo> runs = read_runs(file);
    if (runs.empty()) throw InputError(path, "holds no runs");
    // Default: the run with the smallest run_index (else the first by name).
    const RunInfo* chosen = &*std::min_element(runs.begin(), runs.end(), [](const RunInfo& a, const RunInfo& b) {
      return a.values.number({"run_index"}).value_or(1e300) < b.values.number({"run_index"}).value_or(1e300);
    });
    if (vm.count("run")) {
      const std::string wanted = vm["run"].as<std::string>();
      const auto it = std::find_if(runs.begin(), runs.end(), [&](const RunInfo& r) { return r.name == wanted; });
      if (it == runs.end()) throw InputError("--run", "no run '" + wanted + "' in " + path + " (see 'allocsim inspect')");
      chosen = &*it;
    }
    std::error_code error;
    std::filesystem::create_directories(context.out_dir, error);
    if (error) throw InputError(context.out_dir, "cannot be created (" + error.message() + ")");

    const H5::Group run_group = file.openGroup("runs").openGroup(chosen->name);
    draw_heatmaps(context, run_group, *chosen);
    draw_trajectories(context, run_group, *chosen);
    draw_metric(context, runs, "nodf", "NODF");
    draw_metric(context, runs, "wnodf", "WNODF");
    draw_recovery(context, runs);
    draw_distances(context, runs);
    draw_scores(context, runs);
  } catch (const H5::Exception& e) {
    throw InputError(path, "cannot be read as a results file (" + e.getDetailMsg() + ")");
  }
  if (context.written.empty()) {
    std::cerr << "allocsim plot: error: " << path << " holds nothing that can be drawn\n";
    return kExitProblem;
  }
  return kExitOk;
}

}  // namespace allocsim::cli
