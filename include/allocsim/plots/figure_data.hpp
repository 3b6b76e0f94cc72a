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
// Keys of a benchmark case's truth and set in score tables.
inline constexpr char kTrueEpsilonKey[] = "true_epsilon";
inline constexpr char kBenchmarkSetKey[] = "family";

// (temperature, value of `key`) for every run that has both.
std::vector<Point> points_against_temperature(const std::vector<RunRecord>& runs,
                                              const std::string& key);

// How many distinct x values the points have.
std::size_t distinct_x(const std::vector<Point>& points);

// NODF or WNODF (`metric` = layout name, e.g. "nodf") against temperature,
// with the null mean and mean -/+ 1.96 sd band when the runs hold a null
// comparison. `display` is the metric's name on the figure.
MetricAgainstTemperature metric_against_temperature(const std::vector<RunRecord>& runs,
                                                    const std::string& metric,
                                                    const std::string& display);

// Estimated epsilon (with its interval) against the true temperature.
TemperatureRecovery temperature_recovery(const std::vector<RunRecord>& runs);

// Distance `metric` (a comparison name, e.g. "total_variation") to the
// entropic and exact couplings against temperature; non-finite values left out.
DistanceAgainstTemperature distance_against_temperature(const std::vector<RunRecord>& runs,
                                                        const std::string& metric,
                                                        const std::string& display);

// The q-quantile (0..1) of sorted values by linear interpolation; NaN when empty.
double quantile(const std::vector<double>& sorted, double q);

// Median and quartiles of the relative error and interval coverage per set
// and true epsilon, over runs with kTrueEpsilonKey and an epsilon estimate.
// Empty sets when no run qualifies.
EstimatorScores estimator_scores(const std::vector<RunRecord>& runs);

// L1 marginal errors ||P 1/N - r/sum r||_1 and ||P^T 1/N - c/sum c||_1 of
// each of `count` snapshots (snapshot(k) returns snapshot k); NaN for an
// empty snapshot. Fills figure.row_error and figure.column_error.
void marginal_errors(const Vector& budgets, const Vector& capacities, long count,
                     const std::function<Matrix(long)>& snapshot, Trajectories& figure);

}  // namespace allocsim::plots
