#include "allocsim/plots/figure_data.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <set>

#include "allocsim/core/error.hpp"
#include "allocsim/experiments/trend.hpp"
#include "allocsim/results/layout.hpp"

namespace allocsim::plots {
namespace {

// "<metric>_<field>", e.g. "nodf_null_mean".
std::string null_key(const std::string& metric, const char* field) { return metric + "_" + field; }

// The value of `key` in a run as text (numbers with 17 digits), or nothing.
std::optional<std::string> value_text(const RunRecord& run, const std::string& key) {
  if (const auto text = run.text(key)) return text;
  if (const auto value = run.number(key)) {
    char buffer[40];
    std::snprintf(buffer, sizeof buffer, "%.17g", *value);
    return std::string(buffer);
  }
  return std::nullopt;
}

// The numbers written with the fewest significant digits, from 3, that keep them apart.
std::vector<std::string> distinct_number_labels(const std::vector<double>& sorted) {
  std::vector<std::string> labels;
  for (int digits = 3; digits <= 17; ++digits) {
    labels.clear();
    for (const double v : sorted) {
      char buffer[40];
      std::snprintf(buffer, sizeof buffer, "%.*g", digits, v);
      labels.emplace_back(buffer);
    }
    if (std::set<std::string>(labels.begin(), labels.end()).size() == labels.size()) break;
  }
  return labels;
}

std::string joined_keys(const std::vector<std::string>& keys) {
  std::string list;
  for (const auto& key : keys) list += (list.empty() ? "" : ", ") + key;
  return list;
}

bool is_seed_key(const std::string& key) {
  const std::string suffix = ".seed";
  return key.size() >= suffix.size() &&
         key.compare(key.size() - suffix.size(), suffix.size(), suffix) == 0;
}

}  // namespace

std::vector<std::string> swept_keys(const std::vector<RunRecord>& runs) {
  std::vector<std::string> order;
  std::map<std::string, std::set<std::string>> values;
  for (const auto& run : runs) {
    std::vector<std::string> keys;
    for (const auto& [key, value] : run.numbers) keys.push_back(key);
    for (const auto& [key, value] : run.texts) keys.push_back(key);
    for (const auto& key : keys) {
      if (key.find('.') == std::string::npos) continue;
      if (!values.count(key)) order.push_back(key);
      values[key].insert(*value_text(run, key));
    }
  }
  std::vector<std::string> swept;
  for (const auto& key : order)
    if (values[key].size() > 1) swept.push_back(key);
  return swept;
}

RunLevels levels_of(const std::vector<RunRecord>& runs, const std::string& key) {
  RunLevels result;
  result.factor.key = key;
  constexpr char kNotSet[] = "(not set)";
  bool numeric = true;
  std::vector<double> numbers;
  for (const auto& run : runs) {
    if (run.text(key)) numeric = false;
    if (const auto v = run.number(key)) numbers.push_back(*v);
  }
  std::vector<std::string> run_label;  // per run
  if (numeric) {
    std::sort(numbers.begin(), numbers.end());
    numbers.erase(std::unique(numbers.begin(), numbers.end()), numbers.end());
    result.factor.levels = distinct_number_labels(numbers);
    for (const auto& run : runs) {
      const auto v = run.number(key);
      run_label.push_back(
          v ? result.factor.levels[static_cast<std::size_t>(
                  std::lower_bound(numbers.begin(), numbers.end(), *v) - numbers.begin())]
            : kNotSet);
    }
  } else {
    for (const auto& run : runs) {
      run_label.push_back(value_text(run, key).value_or(kNotSet));
      if (run_label.back() != kNotSet &&
          std::find(result.factor.levels.begin(), result.factor.levels.end(), run_label.back()) ==
              result.factor.levels.end())
        result.factor.levels.push_back(run_label.back());
    }
  }
  if (std::find(run_label.begin(), run_label.end(), kNotSet) != run_label.end())
    result.factor.levels.push_back(kNotSet);
  for (const auto& label : run_label) {
    result.level_of.push_back(static_cast<int>(
        std::find(result.factor.levels.begin(), result.factor.levels.end(), label) -
        result.factor.levels.begin()));
  }
  return result;
}

FactorChoice choose_factor(const std::vector<RunRecord>& runs, const std::string& requested,
                           const std::string& file) {
  const std::vector<std::string> swept = swept_keys(runs);
  std::vector<std::string> others;  // swept besides the temperature
  for (const auto& key : swept)
    if (key != kChoiceTemperatureKey) others.push_back(key);
  const std::string listed =
      others.empty()
          ? "nothing besides " + std::string(kChoiceTemperatureKey) + " is swept in " + file
          : "swept in " + file + ": " + joined_keys(others);
  if (requested == "none") return {};
  if (requested.empty()) {
    std::vector<std::string> candidates;
    for (const auto& key : others)
      if (!is_seed_key(key)) candidates.push_back(key);
    if (candidates.size() == 1) return {candidates.front(), true};
    return {};
  }
  if (requested == kChoiceTemperatureKey)
    throw InputError("--by", "'" + requested +
                                 "' is the x axis of the figures; name another swept key (" +
                                 listed + ")");
  if (std::find(others.begin(), others.end(), requested) == others.end())
    throw InputError("--by", "'" + requested + "' is not a swept key (" + listed + ")");
  return {requested, false};
}

std::vector<Point> points_against_temperature(const std::vector<RunRecord>& runs,
                                              const std::string& key, const RunLevels& levels) {
  std::vector<Point> points;
  for (std::size_t k = 0; k < runs.size(); ++k) {
    const auto t = runs[k].number(kChoiceTemperatureKey);
    const auto y = runs[k].number(key);
    if (t && y) {
      Point p{*t, *y};
      p.level = levels.of(k);
      points.push_back(p);
    }
  }
  return points;
}

std::size_t distinct_x(const std::vector<Point>& points) {
  std::set<double> x;
  for (const auto& p : points) x.insert(p.x);
  return x.size();
}

MetricAgainstTemperature metric_against_temperature(const std::vector<RunRecord>& runs,
                                                    const std::string& metric,
                                                    const std::string& display,
                                                    const RunLevels& levels) {
  MetricAgainstTemperature figure;
  figure.title = display + " of the emergent allocations against the choice temperature";
  figure.metric_name = display;
  figure.factor = levels.factor;
  figure.runs = points_against_temperature(runs, metric, levels);
  for (std::size_t k = 0; k < runs.size(); ++k) {
    const RunRecord& run = runs[k];
    const auto t = run.number(kChoiceTemperatureKey);
    const auto mean = run.number(null_key(metric, layout::kNullMean));
    const auto sd = run.number(null_key(metric, layout::kNullSd));
    if (!t || !mean || !sd) continue;
    figure.null_band.push_back({*t, *mean, *mean - 1.96 * *sd, *mean + 1.96 * *sd, levels.of(k)});
    if (const auto model = run.text(null_key(metric, layout::kNullModel)))
      figure.null_name = *model + " null model";
  }
  return figure;
}

ZScoresAgainstTemperature z_scores_against_temperature(const std::vector<RunRecord>& runs,
                                                       const std::string& metric,
                                                       const std::string& display,
                                                       const RunLevels& levels) {
  ZScoresAgainstTemperature figure;
  figure.metric_name = display;
  figure.factor = levels.factor;
  figure.runs = points_against_temperature(runs, null_key(metric, layout::kZScore), levels);
  figure.null_name = "null model";
  for (const auto& run : runs) {
    if (const auto model = run.text(null_key(metric, layout::kNullModel))) {
      figure.null_name = *model + " null model";
      break;
    }
  }
  figure.title = display + " against the " + figure.null_name + ": z-score of each run";
  return figure;
}

TemperatureRecovery temperature_recovery(const std::vector<RunRecord>& runs,
                                         const RunLevels& levels) {
  TemperatureRecovery figure;
  figure.title = "estimated transport temperature against the true choice temperature";
  figure.factor = levels.factor;
  for (std::size_t k = 0; k < runs.size(); ++k) {
    const RunRecord& run = runs[k];
    const auto t = run.number(kChoiceTemperatureKey);
    const auto e = run.number(layout::kEpsilon);
    if (!t || !e) continue;
    figure.runs.push_back({*t, *e, run.number(layout::kEpsilonCiLow).value_or(kNoValue),
                           run.number(layout::kEpsilonCiHigh).value_or(kNoValue), levels.of(k)});
  }
  return figure;
}

DistanceAgainstTemperature distance_against_temperature(const std::vector<RunRecord>& runs,
                                                        const std::string& metric,
                                                        const std::string& display,
                                                        const RunLevels& levels) {
  DistanceAgainstTemperature figure;
  figure.title = "distance from the emergent allocation to the transport couplings";
  figure.distance_name = display;
  figure.factor = levels.factor;
  figure.to_entropic = points_against_temperature(runs, layout::kEntropicPrefix + metric, levels);
  figure.to_exact = points_against_temperature(runs, layout::kExactPrefix + metric, levels);
  const auto finite = [](std::vector<Point>& points) {
    points.erase(std::remove_if(points.begin(), points.end(),
                                [](const Point& p) { return !std::isfinite(p.y); }),
                 points.end());
  };
  finite(figure.to_entropic);
  finite(figure.to_exact);
  return figure;
}

TrendSummary trend_summary(const std::vector<RunRecord>& runs, const std::string& metric,
                           const RunLevels& levels) {
  TrendSummary figure;
  figure.metric_name = metric;
  figure.x_name = kChoiceTemperatureKey;
  figure.factor = levels.factor;
  figure.factor.panels = false;
  std::string z_key;
  for (const char* family : {"wnodf", "nodf"}) {
    if (metric.rfind(family, 0) == 0) {
      z_key = null_key(family, layout::kZScore);
      break;
    }
  }
  std::vector<double> x, y, z;
  std::vector<std::string> labels;
  bool any_metric = false, any_z = false;
  for (std::size_t k = 0; k < runs.size(); ++k) {
    const auto t = runs[k].number(kChoiceTemperatureKey);
    if (!t || !(*t > 0)) continue;
    const auto value = runs[k].number(metric);
    const auto score = z_key.empty() ? std::nullopt : runs[k].number(z_key);
    any_metric = any_metric || value.has_value();
    any_z = any_z || score.has_value();
    x.push_back(*t);
    y.push_back(value.value_or(kNoValue));
    z.push_back(score.value_or(kNoValue));
    labels.push_back(std::to_string(levels.of(k)));
  }
  if (!any_metric) return figure;
  const TrendOptions options;
  figure.confidence = options.confidence;
  figure.z_threshold = options.z_threshold;
  figure.title = "trend of " + metric + " with " + figure.x_name + " (as allocsim trend)";
  for (const auto& level :
       trends_by_level(x, y, any_z ? z : std::vector<double>{}, labels, options)) {
    const TrendResult& r = level.result;
    TrendRow row;
    row.level = std::stoi(level.level);
    row.runs = r.runs;
    row.rho = r.rho;
    row.p_value = r.p_value;
    row.slope = r.slope;
    row.low = r.slope_low;
    row.high = r.slope_high;
    row.with_z = r.with_z;
    row.above = r.above;
    row.below = r.below;
    figure.rows.push_back(row);
  }
  std::sort(figure.rows.begin(), figure.rows.end(),
            [](const TrendRow& a, const TrendRow& b) { return a.level < b.level; });
  return figure;
}

double quantile(const std::vector<double>& sorted, double q) {
  if (sorted.empty()) return kNoValue;
  const double at = q * static_cast<double>(sorted.size() - 1);
  const auto below = static_cast<std::size_t>(std::floor(at));
  const std::size_t above = std::min(below + 1, sorted.size() - 1);
  return sorted[below] + (at - static_cast<double>(below)) * (sorted[above] - sorted[below]);
}

namespace {

// Band 1..5 of each value: 1 + the number of quintile edges below it.
std::vector<int> quintile_bands(const std::vector<double>& values) {
  std::vector<double> sorted = values;
  std::sort(sorted.begin(), sorted.end());
  std::vector<double> edges;
  for (int k = 1; k < 5; ++k) edges.push_back(quantile(sorted, k / 5.0));
  std::vector<int> bands;
  for (const double v : values) {
    int band = 1;
    for (const double edge : edges) band += v > edge;
    bands.push_back(band);
  }
  return bands;
}

// Coverage per band of the cases whose group is `group` (all when empty).
void add_coverage_bands(const std::string& axis, const std::vector<int>& bands,
                        const std::vector<int>& covered, const std::vector<std::string>& groups,
                        const std::string& group, EstimatorScoreCard& card) {
  for (int band = 1; band <= 5; ++band) {
    CoverageBand b{group.empty() ? axis : axis + " (" + group + ")", band, kNoValue, 0};
    long hits = 0;
    for (std::size_t k = 0; k < bands.size(); ++k) {
      if (bands[k] != band || covered[k] < 0 || (!group.empty() && groups[k] != group)) continue;
      ++b.intervals;
      hits += covered[k];
    }
    if (b.intervals > 0) b.coverage = static_cast<double>(hits) / static_cast<double>(b.intervals);
    card.bands.push_back(b);
  }
}

int source_rank(const std::string& source) {
  static const std::vector<std::string> order = {"model", "price", "gumbel",
                                                 "queue", "learn", "mixed-noise"};
  return static_cast<int>(std::find(order.begin(), order.end(), source) - order.begin());
}

}  // namespace

EstimatorScoreCard estimator_score_card(const std::vector<RunRecord>& records) {
  EstimatorScoreCard card;
  card.title = "temperature estimator on a benchmark set";
  std::vector<double> truths, units;
  std::vector<int> covered;  // 1, 0, or -1 without an interval
  std::vector<std::string> specification;
  bool units_known = true, misspecified = false;
  for (const auto& r : records) {
    const auto truth = r.number(layout::kTrueEpsilonColumn);
    if (!truth || !(*truth > 0) || !std::isfinite(*truth)) continue;
    ScoredEstimate e;
    e.true_epsilon = *truth;
    e.estimate = r.number(layout::kEpsilon).value_or(kNoValue);
    e.units = r.number(layout::kUnitsColumn)
                  .value_or(r.number(layout::kUnitsAfterBurnIn).value_or(kNoValue));
    e.series =
        r.text(layout::kSourceColumn).value_or(r.text(layout::kFamilyColumn).value_or("all cases"));
    const double low = r.number(layout::kEpsilonCiLow).value_or(kNoValue);
    const double high = r.number(layout::kEpsilonCiHigh).value_or(kNoValue);
    const bool interval = !std::isnan(e.estimate) && !std::isnan(low) && !std::isnan(high);
    covered.push_back(interval ? (low <= *truth && *truth <= high ? 1 : 0) : -1);
    truths.push_back(*truth);
    units.push_back(e.units);
    const bool off_model = r.number(layout::kMisspecifiedColumn).value_or(0) == 1;
    misspecified = misspecified || off_model;
    specification.push_back(off_model ? "misspecified" : "entropic model true");
    units_known = units_known && std::isfinite(e.units);
    card.cases.push_back(e);
  }
  if (card.cases.empty()) return card;
  // Coverage apart for the cases whose source has the entropic model as its mean and the others.
  const std::vector<std::string> groups =
      misspecified ? std::vector<std::string>{"entropic model true", "misspecified"}
                   : std::vector<std::string>{""};
  for (const auto& group : groups) {
    add_coverage_bands("true epsilon", quintile_bands(truths), covered, specification, group, card);
    if (units_known)
      add_coverage_bands("units", quintile_bands(units), covered, specification, group, card);
  }
  std::stable_sort(card.cases.begin(), card.cases.end(),
                   [](const ScoredEstimate& a, const ScoredEstimate& b) {
                     return source_rank(a.series) < source_rank(b.series);
                   });
  return card;
}

void marginal_errors(const Vector& budgets, const Vector& capacities, long count,
                     const std::function<Matrix(long)>& snapshot, Trajectories& figure) {
  const Vector row_target = budgets / budgets.sum();
  const Vector column_target = capacities / capacities.sum();
  for (long k = 0; k < count; ++k) {
    const Matrix counts = snapshot(k);
    const double total = counts.sum();
    if (!(total > 0)) {
      figure.row_error.push_back(kNoValue);
      figure.column_error.push_back(kNoValue);
      continue;
    }
    figure.row_error.push_back((counts.rowwise().sum() / total - row_target).cwiseAbs().sum());
    figure.column_error.push_back(
        (counts.colwise().sum().transpose() / total - column_target).cwiseAbs().sum());
  }
}

}  // namespace allocsim::plots
