// The data of each figure against temperature, built from the run records of
// a results file (results/run_records.hpp) under their layout names: the
// choice temperature is the experiment key "dynamics.temperature", the
// estimate "epsilon" with "epsilon_ci_low"/"epsilon_ci_high", the distances
// "entropic_<metric>"/"exact_<metric>", a null comparison "<metric>_null_mean"
// and "<metric>_null_sd" (results/layout.hpp). Pure functions: no file, no
// gnuplot; plot_command draws what they return.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"
#include "allocsim/plots/figures.hpp"
#include "allocsim/results/run_records.hpp"

namespace allocsim::plots {

// The key of the choice temperature in a run record.
inline constexpr char kChoiceTemperatureKey[] = "dynamics.temperature";

// The runs split by a factor: the factor's levels and the level of each run.
struct RunLevels {
  Factor factor;              // no key and no levels: every run is level 0
  std::vector<int> level_of;  // one per run (empty: all 0)

  int of(std::size_t run) const { return level_of.empty() ? 0 : level_of[run]; }
};

// Experiment keys ("section.key") that take two or more values over the
// runs, in the order first seen: the swept keys. "replicate" is not one.
std::vector<std::string> swept_keys(const std::vector<RunRecord>& runs);

// The levels of `key` over the runs. Numeric values ascend and are written
// with the fewest significant digits, from 3, that keep them apart ("0.01",
// "0.0266", "0.5"); text values keep the order first seen. A run without
// the key gets the level "(not set)".
RunLevels levels_of(const std::vector<RunRecord>& runs, const std::string& key);

// Which factor splits the figures, from the `--by` request: "" picks the one
// swept key besides the temperature and the seeds ("*.seed") when there is
// exactly one (else none); "none" is no factor; any other word must be a
// swept key (not the temperature), else InputError("--by") naming the
// swept keys. `automatic` is set when the factor was picked without asking.
struct FactorChoice {
  std::string key;  // empty: no factor
  bool automatic = false;
};
FactorChoice choose_factor(const std::vector<RunRecord>& runs, const std::string& requested,
                           const std::string& file);

// (temperature, value of `key`) for every run that has both, with the run's level.
std::vector<Point> points_against_temperature(const std::vector<RunRecord>& runs,
                                              const std::string& key, const RunLevels& levels = {});

// How many distinct x values the points have.
std::size_t distinct_x(const std::vector<Point>& points);

// NODF or WNODF (`metric` = layout name, e.g. "nodf") against temperature,
// with the null mean and mean -/+ 1.96 sd band when the runs hold a null
// comparison. `display` is the metric's name on the figure.
MetricAgainstTemperature metric_against_temperature(const std::vector<RunRecord>& runs,
                                                    const std::string& metric,
                                                    const std::string& display,
                                                    const RunLevels& levels = {});

// The z-scores "<metric>_z_score" against temperature, named after the
// null model "<metric>_null_model".
ZScoresAgainstTemperature z_scores_against_temperature(const std::vector<RunRecord>& runs,
                                                       const std::string& metric,
                                                       const std::string& display,
                                                       const RunLevels& levels = {});

// Estimated epsilon (with its interval) against the true temperature.
TemperatureRecovery temperature_recovery(const std::vector<RunRecord>& runs,
                                         const RunLevels& levels = {});

// Distance `metric` (a comparison name, e.g. "total_variation") to the
// entropic and exact couplings against temperature; non-finite values left out.
DistanceAgainstTemperature distance_against_temperature(const std::vector<RunRecord>& runs,
                                                        const std::string& metric,
                                                        const std::string& display,
                                                        const RunLevels& levels = {});

// The trend of `metric` (e.g. "nodf_z_score") against the temperature per
// level, measured as `allocsim trend` measures it with its default options
// (experiments/trend.hpp), the z-scores "<family>_z_score" counted when the
// metric starts with "nodf" or "wnodf". Runs with a temperature <= 0 are
// left out. Rows in level order; no rows when no run has the metric.
TrendSummary trend_summary(const std::vector<RunRecord>& runs, const std::string& metric,
                           const RunLevels& levels = {});

// The q-quantile (0..1) of sorted values by linear interpolation; NaN when empty.
double quantile(const std::vector<double>& sorted, double q);

// An estimator's score card from records with a true epsilon
// (layout::kTrueEpsilonColumn: the rows of a scores file, or runs that carry
// one): the estimate (layout::kEpsilon; missing = unanswered), the units
// (kUnitsColumn, else kUnitsAfterBurnIn), one series per source (else per
// family), and the coverage of the intervals (kEpsilonCiLow, kEpsilonCiHigh)
// per quintile band of the truth and of the units, banded as `allocsim
// score` bands them (band k: above the (k-1)th quintile, up to the kth);
// when some records are misspecified (kMisspecifiedColumn = 1), coverage is
// given apart for them and for the others ("true epsilon (misspecified)").
// Cases in source order (model, price, gumbel, queue, learn, mixed-noise,
// then the others). No cases when no record has a positive true epsilon.
EstimatorScoreCard estimator_score_card(const std::vector<RunRecord>& records);

// L1 marginal errors ||P 1/N - r/sum r||_1 and ||P^T 1/N - c/sum c||_1 of
// each of `count` snapshots (snapshot(k) returns snapshot k); NaN for an
// empty snapshot. Fills figure.row_error and figure.column_error.
void marginal_errors(const Vector& budgets, const Vector& capacities, long count,
                     const std::function<Matrix(long)>& snapshot, Trajectories& figure);

}  // namespace allocsim::plots
