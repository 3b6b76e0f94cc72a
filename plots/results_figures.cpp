#include "allocsim/plots/results_figures.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <ostream>
#include <sstream>

#include "allocsim/core/error.hpp"
#include "allocsim/plots/figure_data.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/run_records.hpp"

namespace allocsim::plots {
namespace {

// Distances from the emergent allocation to a coupling, most useful first
// (KL to the sparse exact coupling is usually infinite).
const std::vector<std::pair<std::string, std::string>> kDistances = {
    {"total_variation", "total variation distance"},
    {"hellinger", "Hellinger distance"},
    {"kl_divergence", "KL divergence"}};

struct PlotContext {
  const ResultsFiguresRequest& request;
  std::ostream& notes;
  std::vector<std::string> written;
  FigureOptions options = request.options;

  void record(const std::string& path) {
    if (request.on_written) request.on_written(path);
    written.push_back(path);
  }
  std::string stem(const std::string& name) const {
    return (std::filesystem::path(request.out_dir) / name).string();
  }
  void skip(const std::string& figure, const std::string& reason) const {
    notes << "skipped " << figure << ": " << reason << "\n";
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
std::string run_caption(const RunRecord& run) {
  std::string caption = run.name;
  const auto rule = run.text("dynamics.rule");
  const auto temperature = run.number(kChoiceTemperatureKey);
  if (rule) caption += ": " + *rule + " rule";
  if (temperature) caption += std::string(rule ? ", " : ": ") + "T = " + short_number(*temperature);
  return caption;
}

// A matrix of the run with the shape of `like`, or nothing.
std::optional<Matrix> same_shape(const ResultsReader& reader, const std::string& run,
                                 const std::string& path, const Matrix& like) {
  if (!reader.has(run, path)) return std::nullopt;
  Matrix values = reader.read_matrix(run, path);
  if (values.rows() != like.rows() || values.cols() != like.cols()) return std::nullopt;
  return values;
}

// Display ordering stored by the analysis, when there is a valid one.
Ordering stored_ordering(const ResultsReader& reader, const std::string& run) {
  Ordering ordering;
  for (const auto& [path, target] : {std::pair{layout::kRowOrder, &ordering.rows},
                                     std::pair{layout::kColumnOrder, &ordering.columns}}) {
    if (!reader.has(run, path)) return {};
    for (const double v : reader.read_vector(run, path)) target->push_back(static_cast<long>(v));
  }
  if (ordering.rows.empty() || ordering.columns.empty()) return {};
  return ordering;
}

void draw_heatmaps(PlotContext& context, const ResultsReader& reader, const RunRecord& run) {
  const std::string figure = "allocation heatmaps of " + run.name;
  if (!reader.has(run.name, layout::kTotal)) return context.skip(figure, "no allocation/total");
  const Matrix emergent = reader.read_matrix(run.name, layout::kTotal);
  if (!(emergent.sum() > 0)) return context.skip(figure, "no units in allocation/total");
  AllocationHeatmaps heatmaps;
  heatmaps.title = "allocations of " + run_caption(run);
  heatmaps.panels.push_back({"emergent allocation (" + count_text(emergent.sum()) + " units)", emergent});
  const auto epsilon = run.number(layout::kEpsilon);
  std::string missing;
  if (const auto entropic = same_shape(reader, run.name, layout::kEntropicCoupling, emergent)) {
    heatmaps.panels.push_back({epsilon ? "entropic coupling, ε = " + short_number(*epsilon) : "entropic coupling", *entropic});
  } else {
    missing = layout::kEntropicCoupling;
  }
  if (const auto exact = same_shape(reader, run.name, layout::kExactCoupling, emergent)) {
    heatmaps.panels.push_back({"exact (optimal) coupling", *exact});
  } else {
    missing += (missing.empty() ? "" : ", ") + std::string(layout::kExactCoupling);
  }
  if (!missing.empty()) {
    context.notes << "note: " << run.name << " has no " << missing
              << "; its heatmaps show what is there (run 'allocsim analyze' to add the couplings)\n";
  }
  heatmaps.ordering = stored_ordering(reader, run.name);
  if (!heatmaps.ordering.rows.empty())
    heatmaps.ordering_name = run.text(layout::kOrderName).value_or("the stored ordering");
  heatmaps.row_labels = reader.read_texts(run.name, layout::kAgentLabels);
  heatmaps.column_labels = reader.read_texts(run.name, layout::kPartnerLabels);
  context.record(draw_allocation_heatmaps(
      heatmaps, context.stem(file_name_part(run.name) + "-allocations"), context.options));
}

void draw_trajectories(PlotContext& context, const ResultsReader& reader, const RunRecord& run) {
  const std::string figure_name = "trajectories of " + run.name;
  if (!reader.has(run.name, layout::kRoundEnd)) return context.skip(figure_name, "no allocation/round_end");
  Trajectories figure;
  figure.title = "trajectories of " + run_caption(run);
  const Vector rounds = reader.read_vector(run.name, layout::kRoundEnd);
  figure.rounds.assign(rounds.data(), rounds.data() + rounds.size());
  if (reader.has(run.name, layout::kPrices)) {
    const Matrix prices = reader.read_matrix(run.name, layout::kPrices);
    for (long j = 0; j < prices.cols() && prices.rows() == rounds.size(); ++j) {
      const Vector column = prices.col(j);
      figure.prices.emplace_back(column.data(), column.data() + column.size());
    }
  }
  figure.partner_labels = reader.read_texts(run.name, layout::kPartnerLabels);
  const long count = reader.snapshot_count(run.name);
  if (count == rounds.size() && reader.has(run.name, layout::kBudgets)) {
    const TransportProblem scenario = reader.read_scenario(run.name);
    marginal_errors(scenario.budgets, scenario.capacities, count,
                           [&](long k) { return reader.read_snapshot(run.name, k); }, figure);
  }
  if (figure.prices.empty() && figure.column_error.empty())
    return context.skip(figure_name, "neither prices nor allocation snapshots");
  context.record(draw_trajectories(
      figure, context.stem(file_name_part(run.name) + "-trajectories"), context.options));
}

void draw_metric(PlotContext& context, const std::vector<RunRecord>& runs,
                 const std::string& metric, const std::string& display) {
  const MetricAgainstTemperature figure =
      metric_against_temperature(runs, metric, display);
  if (distinct_x(figure.runs) < 2) {
    return context.skip(display + " against temperature",
                        "needs runs with a " + metric + " value at two or more temperatures");
  }
  if (figure.null_band.empty()) {
    context.notes << "note: no null model values for " << metric << "; drawing "
              << display << " against temperature without a null band\n";
  }
  context.record(draw_metric_against_temperature(
      figure, context.stem(metric + "-vs-temperature"), context.options));
}

void draw_recovery(PlotContext& context, const std::vector<RunRecord>& runs) {
  const TemperatureRecovery figure = temperature_recovery(runs);
  long drawable = 0;
  for (const auto& p : figure.runs) drawable += (p.x > 0 && p.y > 0 && std::isfinite(p.y));
  if (drawable == 0) {
    return context.skip("epsilon against temperature",
                        "no run has both a temperature and a positive epsilon estimate");
  }
  context.record(
      draw_temperature_recovery(figure, context.stem("epsilon-vs-temperature"), context.options));
}

void draw_distances(PlotContext& context, const std::vector<RunRecord>& runs) {
  for (const auto& [name, display] : kDistances) {
    const DistanceAgainstTemperature figure =
        distance_against_temperature(runs, name, display);
    std::vector<Point> both = figure.to_entropic;
    both.insert(both.end(), figure.to_exact.begin(), figure.to_exact.end());
    if (distinct_x(both) < 2) continue;
    return context.record(draw_distance_against_temperature(
        figure, context.stem("distance-vs-temperature"), context.options));
  }
  context.skip("distance against temperature",
               "needs runs with a distance to the entropic or exact coupling (total_variation, hellinger "
               "or kl_divergence) at two or more temperatures");
}

void draw_scores(PlotContext& context, const std::vector<RunRecord>& runs) {
  const EstimatorScores figure = estimator_scores(runs);
  if (figure.sets.empty()) {
    return context.skip("estimator scores",
                        "no benchmark cases (runs with true_epsilon and an epsilon estimate)");
  }
  context.record(draw_estimator_scores(figure, context.stem("estimator-scores"), context.options));
}

// The run with the smallest run_index (else the first by name), or `wanted`.
const RunRecord& chosen_run(const std::vector<RunRecord>& runs, const std::string& wanted,
                            const std::string& path) {
  if (!wanted.empty()) {
    const auto it = std::find_if(runs.begin(), runs.end(),
                                 [&](const RunRecord& r) { return r.name == wanted; });
    if (it == runs.end())
      throw InputError("--run", "no run '" + wanted + "' in " + path + " (see 'allocsim inspect')");
    return *it;
  }
  return *std::min_element(runs.begin(), runs.end(), [](const RunRecord& a, const RunRecord& b) {
    return a.number(layout::kRunIndex).value_or(1e300) < b.number(layout::kRunIndex).value_or(1e300);
  });
}

}  // namespace

std::vector<std::string> draw_results_figures(const ResultsReader& reader,
                                              const ResultsFiguresRequest& request,
                                              std::ostream& notes) {
  const std::vector<RunRecord> runs = read_run_records(reader);
  if (runs.empty()) throw InputError(reader.path(), "holds no runs");
  const RunRecord& chosen = chosen_run(runs, request.run, reader.path());
  std::error_code error;
  std::filesystem::create_directories(request.out_dir, error);
  if (error) throw InputError(request.out_dir, "cannot be created (" + error.message() + ")");
  PlotContext context{request, notes, {}};
  draw_heatmaps(context, reader, chosen);
  draw_trajectories(context, reader, chosen);
  draw_metric(context, runs, layout::kNodf, "NODF");
  draw_metric(context, runs, layout::kWnodf, "WNODF");
  draw_recovery(context, runs);
  draw_distances(context, runs);
  draw_scores(context, runs);
  return context.written;
}

}  // namespace allocsim::plots
