// Figure data built from run records: the points, null bands, quantiles and
// marginal errors that plot draws.
#include "allocsim/plots/figure_data.hpp"

#include <catch2/catch.hpp>
#include <algorithm>
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

TEST_CASE("an estimator score card bands the cases by quintile of the truth, with coverage") {
  std::vector<RunRecord> rows;
  for (int k = 0; k < 10; ++k) {
    RunRecord r{"case-" + std::to_string(k), {}, {{layout::kSourceColumn, k < 5 ? "model" : "queue"}}};
    r.numbers[layout::kTrueEpsilonColumn] = 0.01 * (k + 1);
    r.numbers[layout::kUnitsColumn] = 1000;
    if (k != 9) r.numbers[layout::kEpsilon] = 0.01 * (k + 1) * 1.1;  // case 9 unanswered
    if (k < 8) {  // intervals from +5% to +15% of the truth miss it, except case 1's
      r.numbers[layout::kEpsilonCiLow] = k == 1 ? 0.0 : 0.01 * (k + 1) * 1.05;
      r.numbers[layout::kEpsilonCiHigh] = k == 0 ? INFINITY : 0.01 * (k + 1) * 1.15;
    }
    rows.push_back(r);
  }
  const EstimatorScoreCard card = estimator_score_card(rows);
  REQUIRE(card.cases.size() == 10);
  CHECK(std::isnan(card.cases[9].estimate));
  CHECK(card.cases[0].series == "model");
  CHECK(card.cases[9].series == "queue");
  // Quintile edges of 0.01..0.10 (numpy's linear quantiles): 0.028, 0.046, 0.064, 0.082,
  // so two cases per band.
  std::vector<CoverageBand> by_truth;
  for (const auto& b : card.bands)
    if (b.axis == "true epsilon") by_truth.push_back(b);
  REQUIRE(by_truth.size() == 5);
  CHECK(by_truth[0].intervals == 2);
  CHECK(by_truth[0].coverage == Approx(0.5));  // case 1 covers, case 0 does not
  CHECK(by_truth[1].coverage == Approx(0.0));
  CHECK(by_truth[4].intervals == 0);  // case 8 has no interval, case 9 no answer
  CHECK(std::isnan(by_truth[4].coverage));
  // Equal units: every case in band 1.
  const auto units_band = std::find_if(card.bands.begin(), card.bands.end(), [](const CoverageBand& b) {
    return b.axis == "units" && b.band == 1;
  });
  REQUIRE(units_band != card.bands.end());
  CHECK(units_band->intervals == 8);
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
