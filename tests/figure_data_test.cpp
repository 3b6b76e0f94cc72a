// Figure data built from run records: the points, null bands, quantiles and
// marginal errors that plot draws.
#include "allocsim/plots/figure_data.hpp"

#include <algorithm>
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

TEST_CASE("an estimator score card bands the cases by quintile of the truth, with coverage") {
  std::vector<RunRecord> rows;
  for (int k = 0; k < 10; ++k) {
    RunRecord r{
        "case-" + std::to_string(k), {}, {{layout::kSourceColumn, k < 5 ? "model" : "queue"}}};
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
  const auto units_band =
      std::find_if(card.bands.begin(), card.bands.end(),
                   [](const CoverageBand& b) { return b.axis == "units" && b.band == 1; });
  REQUIRE(units_band != card.bands.end());
  CHECK(units_band->intervals == 8);
}

TEST_CASE("marginal errors are the L1 distances of each snapshot's shares to the targets") {
  const Vector budgets = (Vector(2) << 1, 3).finished();
  const Vector capacities = (Vector(2) << 2, 2).finished();
  Matrix on_target(2, 2), empty = Matrix::Zero(2, 2);
  on_target << 1, 2, 3, 2;  // rows 3, 5 of 8 vs budgets 1:3; columns 4, 4 vs 2:2
  Trajectories figure;
  marginal_errors(
      budgets, capacities, 2, [&](long k) { return k == 0 ? on_target : empty; }, figure);
  REQUIRE(figure.row_error.size() == 2);
  CHECK(figure.row_error[0] == Approx(std::abs(3.0 / 8 - 0.25) + std::abs(5.0 / 8 - 0.75)));
  CHECK(figure.column_error[0] == Approx(0.0).margin(1e-15));
  CHECK(std::isnan(figure.row_error[1]));
}

namespace {

// A run of a temperature x capacity-law sweep.
RunRecord sweep_run(double temperature, const std::string& law, double exponent, long replicate,
                    double nodf) {
  RunRecord r = run_at("run", temperature, nodf);
  r.texts["scenario.capacities"] = law;
  r.numbers["scenario.capacities_exponent"] = exponent;
  r.numbers["scenario.agents"] = 30;
  r.numbers["scenario.seed"] = 5;
  r.numbers[layout::kReplicate] = static_cast<double>(replicate);
  return r;
}

}  // namespace

TEST_CASE("swept keys are the experiment keys that take two or more values") {
  std::vector<RunRecord> runs;
  for (const double t : {0.01, 0.1})
    for (const std::string law : {"zipf", "uniform"})
      for (long rep = 0; rep < 2; ++rep) runs.push_back(sweep_run(t, law, 1, rep, 40));
  // replicate varies but is not an experiment key; agents and the seed take one value.
  CHECK(swept_keys(runs) ==
        std::vector<std::string>{"dynamics.temperature", "scenario.capacities"});
}

TEST_CASE(
    "levels of a text key keep their first-seen order, a run without the key is '(not set)'") {
  std::vector<RunRecord> runs = {sweep_run(0.1, "uniform", 1, 0, 1),
                                 sweep_run(0.1, "zipf", 1, 0, 1),
                                 sweep_run(0.2, "lognormal", 1, 0, 1),
                                 sweep_run(0.2, "zipf", 1, 1, 1), run_at("bare", 0.3, 1)};
  const RunLevels levels = levels_of(runs, "scenario.capacities");
  CHECK(levels.factor.key == "scenario.capacities");
  CHECK(levels.factor.levels ==
        std::vector<std::string>{"uniform", "zipf", "lognormal", "(not set)"});
  CHECK(levels.level_of == std::vector<int>{0, 1, 2, 1, 3});
}

TEST_CASE("levels of a numeric key ascend, written with the fewest digits that keep them apart") {
  // printf "%.3g" of 0.0265914794847 is 0.0266 and of 0.0707106781187 is 0.0707 (C standard
  // %g: 3 significant digits, trailing zeros removed); 1.0001 and 1.0002 need 5 digits.
  std::vector<RunRecord> runs;
  for (const double e : {0.5, 0.0265914794847, 0.01, 0.0707106781187, 0.01})
    runs.push_back(sweep_run(0.1, "zipf", e, 0, 1));
  RunLevels levels = levels_of(runs, "scenario.capacities_exponent");
  CHECK(levels.factor.levels == std::vector<std::string>{"0.01", "0.0266", "0.0707", "0.5"});
  CHECK(levels.level_of == std::vector<int>{3, 1, 0, 2, 0});
  runs = {sweep_run(0.1, "zipf", 1.0002, 0, 1), sweep_run(0.1, "zipf", 1.0001, 0, 1)};
  levels = levels_of(runs, "scenario.capacities_exponent");
  CHECK(levels.factor.levels == std::vector<std::string>{"1.0001", "1.0002"});
}

TEST_CASE("the factor is the one other swept key, 'none', or a named swept key") {
  std::vector<RunRecord> runs;
  for (const double t : {0.01, 0.1})
    for (const std::string law : {"zipf", "uniform", "lognormal"})
      runs.push_back(sweep_run(t, law, 1, 0, 40));
  FactorChoice choice = choose_factor(runs, "", "s.h5");
  CHECK(choice.key == "scenario.capacities");
  CHECK(choice.automatic);
  choice = choose_factor(runs, "scenario.capacities", "s.h5");
  CHECK((choice.key == "scenario.capacities" && !choice.automatic));
  CHECK(choose_factor(runs, "none", "s.h5").key.empty());
  CHECK_THROWS_WITH(choose_factor(runs, "dynamics.rule", "s.h5"),
                    Catch::Contains("'dynamics.rule' is not a swept key") &&
                        Catch::Contains("swept in s.h5: scenario.capacities"));
  CHECK_THROWS_WITH(choose_factor(runs, "dynamics.temperature", "s.h5"), Catch::Contains("x axis"));
  // A swept seed is not picked without asking; two other swept keys: no factor unless named.
  for (std::size_t k = 0; k < runs.size(); ++k) runs[k].numbers["scenario.seed"] = double(k % 2);
  CHECK(choose_factor(runs, "", "s.h5").key == "scenario.capacities");
  for (std::size_t k = 0; k < runs.size(); ++k)
    runs[k].numbers["scenario.capacities_exponent"] = double(k % 3);
  CHECK(choose_factor(runs, "", "s.h5").key.empty());
  CHECK(choose_factor(runs, "scenario.capacities_exponent", "s.h5").key ==
        "scenario.capacities_exponent");
  // One run (a field matrix): nothing is swept.
  CHECK_THROWS_WITH(choose_factor({runs[0]}, "scenario.capacities", "one.h5"),
                    Catch::Contains("nothing besides dynamics.temperature is swept in one.h5"));
}

TEST_CASE("figures against temperature carry each run's level") {
  std::vector<RunRecord> runs;
  for (const double t : {0.01, 0.1, 1.0})
    for (const std::string law : {"uniform", "zipf"}) {
      RunRecord r = sweep_run(t, law, 1, 0, law == "zipf" ? 50 : 30);
      r.numbers["nodf_null_mean"] = law == "zipf" ? 45 : 25;
      r.numbers["nodf_null_sd"] = 1;
      r.numbers["nodf_z_score"] = law == "zipf" ? 5 : -5;
      r.numbers[layout::kEpsilon] = t;
      r.numbers["entropic_total_variation"] = 0.01;
      runs.push_back(r);
    }
  const RunLevels levels = levels_of(runs, "scenario.capacities");
  const MetricAgainstTemperature metric = metric_against_temperature(runs, "nodf", "NODF", levels);
  CHECK(metric.factor.levels == std::vector<std::string>{"uniform", "zipf"});
  REQUIRE(metric.runs.size() == 6);
  for (const auto& p : metric.runs) CHECK(p.level == (p.y == 50 ? 1 : 0));
  for (const auto& b : metric.null_band) CHECK(b.level == (b.mean == 45 ? 1 : 0));
  const ZScoresAgainstTemperature z = z_scores_against_temperature(runs, "nodf", "NODF", levels);
  for (const auto& p : z.runs) CHECK(p.level == (p.y > 0 ? 1 : 0));
  CHECK(temperature_recovery(runs, levels).runs[1].level == 1);
  CHECK(distance_against_temperature(runs, "total_variation", "TV", levels).to_entropic[1].level ==
        1);
}

TEST_CASE("the trend summary recovers a known slope per level, as allocsim trend") {
  // y = a_k + b_k log10 T with replicate offsets -/+ d at each T: the least-squares slope is
  // exactly b_k (the offsets cancel in every group; arithmetic).
  std::vector<RunRecord> runs;
  const std::vector<double> slopes = {3.0, -2.0};
  for (const double t : {0.01, 0.03, 0.1, 0.3})
    for (int k = 0; k < 2; ++k)
      for (const double d : {-0.5, 0.5}) {
        const double y = 10 * k + slopes[k] * std::log10(t) + d;
        RunRecord r = sweep_run(t, k ? "zipf" : "uniform", 1, d > 0, y);
        r.numbers["nodf_z_score"] = y;
        runs.push_back(r);
      }
  const TrendSummary figure =
      trend_summary(runs, "nodf_z_score", levels_of(runs, "scenario.capacities"));
  REQUIRE(figure.rows.size() == 2);
  for (int k = 0; k < 2; ++k) {
    CHECK(figure.rows[k].level == k);
    CHECK(figure.rows[k].runs == 8);
    CHECK(figure.rows[k].slope == Approx(slopes[k]));
    CHECK(figure.rows[k].low <= slopes[k]);
    CHECK(figure.rows[k].high >= slopes[k]);
    CHECK(std::abs(figure.rows[k].rho) > 0.8);
    CHECK(figure.rows[k].with_z == 8);
  }
  // uniform: z = 3 log10 T -/+ 0.5 is below -2 in 7 runs (all but -1.07 at T = 0.3);
  // zipf: z = 10 - 2 log10 T -/+ 0.5 is above 2 in all 8.
  CHECK((figure.rows[0].above == 0 && figure.rows[0].below == 7));
  CHECK((figure.rows[1].above == 8 && figure.rows[1].below == 0));
}
