// Figure data built from run records: the points, null bands, quantiles and
// marginal errors that plot draws.
#include "allocsim/plots/figure_data.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "allocsim/results/layout.hpp"

using namespace allocsim;
using namespace allocsim::plots;

namespace {

RunRecord run_at(const std::string& name, double temperature, double nodf) {
  RunRecord r{name, {}, {}};
  r.numbers[kChoiceTemperatureKey] = temperature;
  r.numbers[layout::kNodf] = nodf;
  return r;
}

}  // namespace

TEST_CASE("quantiles interpolate linearly between order statistics") {
  // numpy.quantile([1, 2, 4, 8], q) with its default linear method (common practice):
  // 0.25 -> 1.75, 0.5 -> 3.0, 0.75 -> 5.0.
  const std::vector<double> sorted = {1, 2, 4, 8};
  CHECK(quantile(sorted, 0.25) == Approx(1.75));
  CHECK(quantile(sorted, 0.5) == Approx(3.0));
  CHECK(quantile(sorted, 0.75) == Approx(5.0));
  CHECK(std::isnan(quantile({}, 0.5)));
}

TEST_CASE("a metric against temperature takes its null band from mean and sd") {
  std::vector<RunRecord> runs = {run_at("a", 0.1, 40), run_at("b", 0.2, 50), run_at("c", 0.3, 60)};
  runs[0].numbers["nodf_null_mean"] = 35;
  runs[0].numbers["nodf_null_sd"] = 2;
  runs[0].texts["nodf_null_model"] = "curveball";
  runs.push_back(RunRecord{"no temperature", {{layout::kNodf, 10}}, {}});
  const MetricAgainstTemperature figure = metric_against_temperature(runs, layout::kNodf, "NODF");
  REQUIRE(figure.runs.size() == 3);
  CHECK(distinct_x(figure.runs) == 3);
  REQUIRE(figure.null_band.size() == 1);
  CHECK(figure.null_band[0].low == Approx(35 - 1.96 * 2));
  CHECK(figure.null_band[0].high == Approx(35 + 1.96 * 2));
  CHECK(figure.null_name == "curveball null model");
}

TEST_CASE("estimator scores group cases by set and truth, with coverage") {
  std::vector<RunRecord> runs;
  for (int k = 0; k < 4; ++k) {
    RunRecord r{"case" + std::to_string(k), {}, {{kBenchmarkSetKey, "random"}}};
    r.numbers[kTrueEpsilonKey] = 0.1;
    const double estimate = 0.1 * (1 + 0.1 * (k - 1));  // errors -10%, 0, +10%, +20%
    r.numbers[layout::kEpsilon] = estimate;
    r.numbers[layout::kEpsilonCiLow] = 0.95 * estimate;
    r.numbers[layout::kEpsilonCiHigh] = 1.05 * estimate;
    runs.push_back(r);
  }
  const EstimatorScores scores = estimator_scores(runs);
  REQUIRE(scores.sets.size() == 1);
  REQUIRE(scores.sets[0].scores.size() == 1);
  const BenchmarkScore& s = scores.sets[0].scores[0];
  CHECK(s.cases == 4);
  CHECK(s.median_relative_error == Approx(0.05));
  CHECK(s.coverage == Approx(0.25));  // only the exact answer's interval covers 0.1
}

TEST_CASE("marginal errors are the L1 distances of each snapshot's shares to the targets") {
  const Vector budgets = (Vector(2) << 1, 3).finished();
  const Vector capacities = (Vector(2) << 2, 2).finished();
  Matrix on_target(2, 2), empty = Matrix::Zero(2, 2);
  on_target << 1, 2, 3, 2;  // rows 3, 5 of 8 vs budgets 1:3; columns 4, 4 vs 2:2
  Trajectories figure;
  marginal_errors(budgets, capacities, 2, [&](long k) { return k == 0 ? on_target : empty; },
                  figure);
  REQUIRE(figure.row_error.size() == 2);
  CHECK(figure.row_error[0] == Approx(std::abs(3.0 / 8 - 0.25) + std::abs(5.0 / 8 - 0.75)));
  CHECK(figure.column_error[0] == Approx(0.0).margin(1e-15));
  CHECK(std::isnan(figure.row_error[1]));
}
