#include "allocsim/plots/figure_data.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <set>

#include "allocsim/results/layout.hpp"

namespace allocsim::plots {
namespace {

// "<metric>_<field>", e.g. "nodf_null_mean".
std::string null_key(const std::string& metric, const char* field) {
  return metric + "_" + field;
}

}  // namespace

std::vector<Point> points_against_temperature(const std::vector<RunRecord>& runs,
                                              const std::string& key) {
  std::vector<Point> points;
  for (const auto& run : runs) {
    const auto t = run.number(kChoiceTemperatureKey);
    const auto y = run.number(key);
    if (t && y) points.push_back({*t, *y});
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
                                                    const std::string& display) {
  MetricAgainstTemperature figure;
  figure.title = display + " of the emergent allocations against the choice temperature";
  figure.metric_name = display;
  figure.runs = points_against_temperature(runs, metric);
  for (const auto& run : runs) {
    const auto t = run.number(kChoiceTemperatureKey);
    const auto mean = run.number(null_key(metric, layout::kNullMean));
    const auto sd = run.number(null_key(metric, layout::kNullSd));
    if (!t || !mean || !sd) continue;
    figure.null_band.push_back({*t, *mean, *mean - 1.96 * *sd, *mean + 1.96 * *sd});
    if (const auto model = run.text(null_key(metric, layout::kNullModel)))
      figure.null_name = *model + " null model";
  }
  return figure;
}

TemperatureRecovery temperature_recovery(const std::vector<RunRecord>& runs) {
  TemperatureRecovery figure;
  figure.title = "estimated transport temperature against the true choice temperature";
  for (const auto& run : runs) {
    const auto t = run.number(kChoiceTemperatureKey);
    const auto e = run.number(layout::kEpsilon);
    if (!t || !e) continue;
    figure.runs.push_back({*t, *e, run.number(layout::kEpsilonCiLow).value_or(kNoValue),
                           run.number(layout::kEpsilonCiHigh).value_or(kNoValue)});
  }
  return figure;
}

DistanceAgainstTemperature distance_against_temperature(const std::vector<RunRecord>& runs,
                                                        const std::string& metric,
                                                        const std::string& display) {
  DistanceAgainstTemperature figure;
  figure.title = "distance from the emergent allocation to the transport couplings";
  figure.distance_name = display;
  figure.to_entropic = points_against_temperature(runs, layout::kEntropicPrefix + metric);
  figure.to_exact = points_against_temperature(runs, layout::kExactPrefix + metric);
  const auto finite = [](std::vector<Point>& points) {
    points.erase(std::remove_if(points.begin(), points.end(),
                                [](const Point& p) { return !std::isfinite(p.y); }),
                 points.end());
  };
  finite(figure.to_entropic);
  finite(figure.to_exact);
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
void add_coverage_bands(const std::string& axis, const std::vector<int>& bands, const std::vector<int>& covered,
                        const std::vector<std::string>& groups, const std::string& group,
                        EstimatorScoreCard& card) {
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
  static const std::vector<std::string> order = {"model", "price", "gumbel", "queue", "learn", "mixed-noise"};
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
    e.units = r.number(layout::kUnitsColumn).value_or(r.number(layout::kUnitsAfterBurnIn).value_or(kNoValue));
    e.series = r.text(layout::kSourceColumn).value_or(r.text(layout::kFamilyColumn).value_or("all cases"));
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
      misspecified ? std::vector<std::string>{"entropic model true", "misspecified"} : std::vector<std::string>{""};
  for (const auto& group : groups) {
    add_coverage_bands("true epsilon", quintile_bands(truths), covered, specification, group, card);
    if (units_known) add_coverage_bands("units", quintile_bands(units), covered, specification, group, card);
  }
  std::stable_sort(card.cases.begin(), card.cases.end(), [](const ScoredEstimate& a, const ScoredEstimate& b) {
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
