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

EstimatorScores estimator_scores(const std::vector<RunRecord>& runs) {
  struct Cases {
    std::vector<double> relative_errors;
    long covered = 0, with_interval = 0;
  };
  std::map<std::string, std::map<double, Cases>> sets;
  for (const auto& run : runs) {
    const auto truth = run.number(kTrueEpsilonKey);
    const auto estimate = run.number(layout::kEpsilon);
    if (!truth || !estimate || !(*truth > 0) || !std::isfinite(*estimate)) continue;
    Cases& cases = sets[run.text(kBenchmarkSetKey).value_or("all cases")][*truth];
    cases.relative_errors.push_back((*estimate - *truth) / *truth);
    const auto low = run.number(layout::kEpsilonCiLow), high = run.number(layout::kEpsilonCiHigh);
    if (low && high) {
      ++cases.with_interval;
      cases.covered += (*low <= *truth && *truth <= *high);
    }
  }
  EstimatorScores figure;
  figure.title = "temperature estimator on benchmark sets";
  for (auto& [label, by_truth] : sets) {
    BenchmarkSeries series{label, {}};
    for (auto& [truth, cases] : by_truth) {
      std::vector<double>& errors = cases.relative_errors;
      std::sort(errors.begin(), errors.end());
      const double coverage =
          cases.with_interval ? double(cases.covered) / double(cases.with_interval) : kNoValue;
      series.scores.push_back({truth, quantile(errors, 0.5), quantile(errors, 0.25),
                               quantile(errors, 0.75), coverage, static_cast<long>(errors.size())});
    }
    figure.sets.push_back(series);
  }
  return figure;
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
