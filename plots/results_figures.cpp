#include "allocsim/plots/results_figures.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <ostream>
#include <sstream>

#include "allocsim/core/error.hpp"
#include "allocsim/plots/figure_data.hpp"
#include "allocsim/plots/latent_score_figure.hpp"
#include "allocsim/results/layout.hpp"
#include "allocsim/results/reconstruction_reader.hpp"
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
  RunLevels levels;  // the factor that splits the figures against temperature

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
    out +=
        (std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '-' || c == '.') ? c : '_';
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
  for (long at = static_cast<long>(digits.size()) - 3; at > 0; at -= 3)
    digits.insert(static_cast<std::size_t>(at), ",");
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

// A field matrix saved by `analyze --save` (it names the file it came from).
bool is_observed(const RunRecord& run) { return run.text(layout::kObservedAllocation).has_value(); }

std::string file_name_of(const std::string& path) {
  return std::filesystem::path(path).filename().string();
}

// "observed matrix (960 units)" or "observed matrix (shares)".
std::string observed_panel_title(const RunRecord& run, const Matrix& values) {
  const bool shares = run.text(layout::kValueReading).value_or("counts") == "shares";
  const double units = run.number(layout::kValueUnits).value_or(0);
  if (!shares) return "observed matrix (" + count_text(values.sum()) + " units)";
  return units > 0 ? "observed matrix (shares of " + count_text(units) + " units)"
                   : "observed matrix (shares)";
}

// Rows and columns of `reader`'s run in nested order (stored by the analysis), or none.
Ordering stored_nested_ordering(const ResultsReader& reader, const std::string& run) {
  Ordering ordering;
  for (const auto& [path, target] : {std::pair{layout::kNestedRowOrder, &ordering.rows},
                                     std::pair{layout::kNestedColumnOrder, &ordering.columns}}) {
    if (!reader.has(run, path)) return {};
    for (const double v : reader.read_vector(run, path)) target->push_back(static_cast<long>(v));
  }
  return ordering;
}

void draw_heatmaps(PlotContext& context, const ResultsReader& reader, const RunRecord& run) {
  const std::string figure = "allocation heatmaps of " + run.name;
  if (!reader.has(run.name, layout::kTotal)) return context.skip(figure, "no allocation/total");
  const Matrix emergent = reader.read_matrix(run.name, layout::kTotal);
  if (!(emergent.sum() > 0)) return context.skip(figure, "no units in allocation/total");
  const bool observed = is_observed(run);
  AllocationHeatmaps heatmaps;
  heatmaps.title = observed
                       ? "observed matrix " + file_name_of(*run.text(layout::kObservedAllocation)) +
                             (run.text(layout::kObservedGains) ? " and its couplings" : "")
                       : "allocations of " + run_caption(run);
  heatmaps.panels.push_back({observed
                                 ? observed_panel_title(run, emergent)
                                 : "emergent allocation (" + count_text(emergent.sum()) + " units)",
                             emergent});
  const auto epsilon = run.number(layout::kEpsilon);
  std::string missing;
  if (const auto entropic = same_shape(reader, run.name, layout::kEntropicCoupling, emergent)) {
    heatmaps.panels.push_back(
        {epsilon ? "entropic coupling, ε = " + short_number(*epsilon) : "entropic coupling",
         *entropic});
  } else {
    missing = layout::kEntropicCoupling;
  }
  if (const auto exact = same_shape(reader, run.name, layout::kExactCoupling, emergent)) {
    heatmaps.panels.push_back({"exact (optimal) coupling", *exact});
  } else {
    missing += (missing.empty() ? "" : ", ") + std::string(layout::kExactCoupling);
  }
  if (!missing.empty() && !(observed && !run.text(layout::kObservedGains))) {
    context.notes
        << "note: " << run.name << " has no " << missing
        << "; its heatmaps show what is there (run 'allocsim analyze' to add the couplings)\n";
  }
  heatmaps.ordering =
      observed ? stored_nested_ordering(reader, run.name) : stored_ordering(reader, run.name);
  if (!heatmaps.ordering.rows.empty())
    heatmaps.ordering_name = observed
                                 ? "nested order (number of links)"
                                 : run.text(layout::kOrderName).value_or("the stored ordering");
  heatmaps.row_labels = reader.read_texts(run.name, layout::kAgentLabels);
  heatmaps.column_labels = reader.read_texts(run.name, layout::kPartnerLabels);
  context.record(draw_allocation_heatmaps(
      heatmaps, context.stem(file_name_part(run.name) + "-allocations"), context.options));
}

// The 0/1 matrix the structure metrics used, in nested order.
void draw_links(PlotContext& context, const ResultsReader& reader, const RunRecord& run) {
  if (!is_observed(run) || !reader.has(run.name, layout::kLinks)) return;
  const Matrix links = reader.read_matrix(run.name, layout::kLinks);
  if (!(links.sum() > 0)) return context.skip("links of " + run.name, "no link");
  AllocationHeatmaps heatmaps;
  heatmaps.title = "links of " + file_name_of(*run.text(layout::kObservedAllocation)) + ": " +
                   run.text(layout::kBinarize).value_or("binarised");
  heatmaps.panels.push_back({count_text(links.sum()) + " links of " +
                                 count_text(static_cast<double>(links.size())) + " cells",
                             links});
  heatmaps.ordering = stored_nested_ordering(reader, run.name);
  heatmaps.ordering_name = "nested order (number of links)";
  heatmaps.log_colour_scale = false;
  heatmaps.colour_bar = false;
  heatmaps.row_labels = reader.read_texts(run.name, layout::kAgentLabels);
  heatmaps.column_labels = reader.read_texts(run.name, layout::kPartnerLabels);
  context.record(draw_allocation_heatmaps(
      heatmaps, context.stem(file_name_part(run.name) + "-links"), context.options));
}

// NODF (and WNODF) of the run against the null ensemble stored with it.
void draw_null_distributions(PlotContext& context, const ResultsReader& reader,
                             const RunRecord& run) {
  NullHistograms figure;
  for (const auto& [metric, display] :
       {std::pair<std::string, std::string>{layout::kNodf, "NODF"},
        std::pair<std::string, std::string>{layout::kWnodf, "WNODF"}}) {
    const std::string values_path =
        std::string(layout::kAnalysis) + "/" + metric + layout::kNullValuesSuffix;
    const auto observed = run.number(metric);
    if (!reader.has(run.name, values_path) || !observed) continue;
    const Vector values = reader.read_vector(run.name, values_path);
    const std::string prefix = metric + "_";
    NullDistribution panel;
    panel.metric = display;
    panel.model = run.text(prefix + layout::kNullModel).value_or("null");
    panel.values.assign(values.data(), values.data() + values.size());
    panel.observed = *observed;
    panel.z_score = run.number(prefix + layout::kZScore).value_or(kNoValue);
    panel.p_upper = run.number(prefix + layout::kPUpper).value_or(kNoValue);
    panel.p_two_sided = run.number(prefix + layout::kPTwoSided).value_or(kNoValue);
    figure.panels.push_back(panel);
  }
  if (figure.panels.empty()) {
    if (is_observed(run))
      context.notes << "note: " << run.name << " holds no null comparison; analyze with --nulls "
                    << "curveball|bicm|fixed-margins --save to draw one\n";
    return;
  }
  figure.title =
      (is_observed(run) ? file_name_of(*run.text(layout::kObservedAllocation)) : run.name) +
      " against its null ensemble";
  context.record(draw_null_histograms(figure, context.stem(file_name_part(run.name) + "-nulls"),
                                      context.options));
}

// The latent scores of a stored gains reconstruction (analyze --latent-rank
// ... --save, or a sweep with analysis.latent_rank).
void draw_latent(PlotContext& context, const ResultsReader& reader, const RunRecord& run) {
  const std::optional<GainsReconstructionReport> reconstruction =
      read_gains_reconstruction(reader, run.name);
  if (!reconstruction) return;
  const std::string source =
      is_observed(run) ? file_name_of(*run.text(layout::kObservedAllocation)) : run_caption(run);
  const std::optional<LatentScoreMap> figure = latent_score_map(*reconstruction, source);
  if (!figure) {
    if (reconstruction->latent)
      context.notes << "note: " << run.name << " holds a latent fit of rank 0 (independence): "
                    << "no latent scores to draw\n";
    return;
  }
  context.record(draw_latent_scores(
      *figure, context.stem(file_name_part(run.name) + "-latent-scores"), context.options));
}

void draw_trajectories(PlotContext& context, const ResultsReader& reader, const RunRecord& run) {
  const std::string figure_name = "trajectories of " + run.name;
  if (!reader.has(run.name, layout::kRoundEnd))
    return context.skip(figure_name, "no allocation/round_end");
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
    marginal_errors(
        scenario.budgets, scenario.capacities, count,
        [&](long k) { return reader.read_snapshot(run.name, k); }, figure);
  }
  if (figure.prices.empty() && figure.column_error.empty())
    return context.skip(figure_name, "neither prices nor allocation snapshots");
  context.record(draw_trajectories(figure, context.stem(file_name_part(run.name) + "-trajectories"),
                                   context.options));
}

void draw_metric(PlotContext& context, const std::vector<RunRecord>& runs,
                 const std::string& metric, const std::string& display) {
  const MetricAgainstTemperature figure =
      metric_against_temperature(runs, metric, display, context.levels);
  if (distinct_x(figure.runs) < 2) {
    return context.skip(display + " against temperature",
                        "needs runs with a " + metric + " value at two or more temperatures");
  }
  if (figure.null_band.empty()) {
    context.notes << "note: no null model values for " << metric << "; drawing " << display
                  << " against temperature without a null band\n";
  }
  context.record(draw_metric_against_temperature(figure, context.stem(metric + "-vs-temperature"),
                                                 context.options));
}

// The z-scores of a metric against its null; silent when no run has one.
void draw_z_scores(PlotContext& context, const std::vector<RunRecord>& runs,
                   const std::string& metric, const std::string& display) {
  const ZScoresAgainstTemperature figure =
      z_scores_against_temperature(runs, metric, display, context.levels);
  if (figure.runs.empty()) return;
  if (distinct_x(figure.runs) < 2) {
    return context.skip(display + " z-scores against temperature",
                        "needs runs with a " + metric + "_z_score at two or more temperatures");
  }
  context.record(draw_z_scores_against_temperature(
      figure, context.stem(metric + "-z-vs-temperature"), context.options));
}

// The trend of NODF's z-score (else NODF) against temperature per level.
void draw_trend(PlotContext& context, const std::vector<RunRecord>& runs) {
  for (const char* metric : {"nodf_z_score", "nodf"}) {
    if (distinct_x(points_against_temperature(runs, metric)) < 2) continue;
    const TrendSummary figure = trend_summary(runs, metric, context.levels);
    if (figure.rows.empty()) continue;
    return context.record(
        draw_trend_summary(figure, context.stem("trend-summary"), context.options));
  }
}

void draw_recovery(PlotContext& context, const std::vector<RunRecord>& runs) {
  const TemperatureRecovery figure = temperature_recovery(runs, context.levels);
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
        distance_against_temperature(runs, name, display, context.levels);
    std::vector<Point> both = figure.to_entropic;
    both.insert(both.end(), figure.to_exact.begin(), figure.to_exact.end());
    if (distinct_x(both) < 2) continue;
    return context.record(draw_distance_against_temperature(
        figure, context.stem("distance-vs-temperature"), context.options));
  }
  context.skip(
      "distance against temperature",
      "needs runs with a distance to the entropic or exact coupling (total_variation, hellinger "
      "or kl_divergence) at two or more temperatures");
}

void draw_scores(PlotContext& context, const std::vector<RunRecord>& records) {
  const EstimatorScoreCard figure = estimator_score_card(records);
  const bool answered = std::any_of(
      figure.cases.begin(), figure.cases.end(),
      [](const ScoredEstimate& e) { return e.estimate > 0 && std::isfinite(e.estimate); });
  if (!answered) {
    return context.skip("estimator scores",
                        "no benchmark cases (rows with true_epsilon and a positive finite epsilon; "
                        "see allocsim score --out scores.h5)");
  }
  context.record(
      draw_estimator_score_card(figure, context.stem("estimator-scores"), context.options));
}

// "swept in FILE: a, b" or "nothing besides the temperature is swept in FILE".
std::string swept_list(const std::vector<RunRecord>& runs, const std::string& path) {
  std::string list;
  for (const auto& key : swept_keys(runs))
    if (key != kChoiceTemperatureKey) list += (list.empty() ? "" : ", ") + key;
  return list.empty() ? "nothing besides the temperature is swept in " + path
                      : "swept in " + path + ": " + list;
}

// The factor of the figures against temperature (request.by), told when picked.
RunLevels chosen_levels(const ResultsFiguresRequest& request, const std::vector<RunRecord>& runs,
                        const std::string& path) {
  const FactorChoice choice = choose_factor(runs, request.by, path);
  if (choice.key.empty() && request.panels)
    throw InputError("--panels", "needs a swept key to split by: name one with --by KEY (" +
                                     swept_list(runs, path) + ")");
  if (choice.key.empty()) return {};
  RunLevels levels = levels_of(runs, choice.key);
  levels.factor.panels = request.panels;
  if (choice.automatic && request.on_factor) request.on_factor(choice.key);
  return levels;
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
    return a.number(layout::kRunIndex).value_or(1e300) <
           b.number(layout::kRunIndex).value_or(1e300);
  });
}

}  // namespace

std::vector<std::string> draw_results_figures(const ResultsReader& reader,
                                              const ResultsFiguresRequest& request,
                                              std::ostream& notes) {
  const std::vector<RunRecord> runs = read_run_records(reader);
  const std::vector<RunRecord> rows =
      runs.empty() ? read_summary_records(reader) : std::vector<RunRecord>{};
  const bool scores_only = runs.empty() && !estimator_score_card(rows).cases.empty();
  if (runs.empty() && !scores_only) throw InputError(reader.path(), "holds no runs");
  if (scores_only && !request.run.empty())
    throw InputError("--run", reader.path() + " holds scores of a benchmark set, no runs");
  if (scores_only && !request.by.empty() && request.by != "none")
    throw InputError("--by", reader.path() +
                                 " holds scores of a benchmark set; --by splits the figures "
                                 "against temperature of runs");
  RunLevels levels;
  if (!scores_only) {
    chosen_run(runs, request.run, reader.path());  // refuses an unknown --run before writing
    levels = chosen_levels(request, runs, reader.path());
  }
  std::error_code error;
  std::filesystem::create_directories(request.out_dir, error);
  if (error) throw InputError(request.out_dir, "cannot be created (" + error.message() + ")");
  PlotContext context{request, notes, {}, request.options, levels};
  if (scores_only) {  // a scores file (allocsim score --out scores.h5): one row per case
    draw_scores(context, rows);
    return context.written;
  }
  const RunRecord& chosen = chosen_run(runs, request.run, reader.path());

  draw_heatmaps(context, reader, chosen);
  draw_links(context, reader, chosen);
  draw_null_distributions(context, reader, chosen);
  draw_latent(context, reader, chosen);
  if (is_observed(chosen)) return context.written;  // one matrix: no trajectories, no sweeps
  draw_trajectories(context, reader, chosen);
  draw_metric(context, runs, layout::kNodf, "NODF");
  draw_metric(context, runs, layout::kWnodf, "WNODF");
  draw_z_scores(context, runs, layout::kNodf, "NODF");
  draw_z_scores(context, runs, layout::kWnodf, "WNODF");
  draw_recovery(context, runs);
  draw_distances(context, runs);
  draw_trend(context, runs);
  draw_scores(context, runs);
  return context.written;
}

}  // namespace allocsim::plots
