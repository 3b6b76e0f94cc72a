#include "allocsim/experiments/trend.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"

using namespace allocsim;

namespace {

constexpr double kTight = 1e-12;
constexpr int kRepetitions = 400;
constexpr std::uint64_t kSeed = 20261202;

// A designed sweep: `levels` log-spaced x values from 0.005 to 0.5, each
// with `replicates` runs; y = intercept + slope * log10(x) + sd * N(0, 1).
struct Synthetic {
  std::vector<double> x, y;
};

Synthetic synthetic_sweep(int levels, int replicates, double slope, double sd, std::uint64_t rep) {
  RandomStream rng(kSeed, rep, StreamId::dynamics);
  Synthetic s;
  for (int k = 0; k < levels; ++k) {
    const double x = 0.005 * std::pow(100.0, k / static_cast<double>(levels - 1));
    for (int r = 0; r < replicates; ++r) {
      s.x.push_back(x);
      s.y.push_back(1.0 + slope * std::log10(x) + sd * rng.normal());
    }
  }
  return s;
}

TrendOptions quick_options(std::uint64_t seed) {
  TrendOptions options;
  options.permutations = 999;
  options.bootstrap_draws = 1000;
  options.seed = seed;
  return options;
}

}  // namespace

TEST_CASE("average ranks give ties the mean of their ranks", "[trend]") {
  // scipy.stats.rankdata documentation example: rankdata([0, 2, 3, 2]) = [1, 2.5, 4, 2.5].
  const std::vector<double> ranks = average_ranks({0, 2, 3, 2});
  CHECK(ranks == std::vector<double>{1, 2.5, 4, 2.5});
}

TEST_CASE("spearman's rho is 1 for any increasing relation and -1 for a decreasing one",
          "[trend]") {
  const std::vector<double> x = {0.01, 0.02, 0.05, 0.1, 0.2, 0.5};
  std::vector<double> up, down;
  for (double v : x) {
    up.push_back(std::exp(v * 10));
    down.push_back(-v * v);
  }
  CHECK(spearman_rho(x, up) == Approx(1).margin(kTight));
  CHECK(spearman_rho(x, down) == Approx(-1).margin(kTight));
  CHECK(std::isnan(spearman_rho(x, std::vector<double>(x.size(), 3.0))));
}

TEST_CASE("the slope against log10 x of a noiseless line is its coefficient", "[trend]") {
  const Synthetic s = synthetic_sweep(5, 2, 0.7, 0.0, 0);
  CHECK(log10_slope(s.x, s.y) == Approx(0.7).margin(kTight));
  const TrendResult r = measure_trend(s.x, s.y, {}, quick_options(1));
  CHECK(r.direction == TrendDirection::rises);
  CHECK(r.slope_low == Approx(0.7).margin(1e-9));  // no residual spread: a point interval
  CHECK(r.slope_high == Approx(0.7).margin(1e-9));
}

TEST_CASE("the bootstrap interval covers a known slope in about 95% of repetitions",
          "[trend][slow]") {
  // 9 temperatures x 3 replicates, as the shipped sweep. The residual
  // bootstrap with modified residuals is close to the t interval on 18
  // degrees of freedom (coverage about 0.93-0.95 of a nominal 0.95 interval).
  constexpr double kSlope = 0.7, kSd = 0.5;
  int covered = 0;
  for (int rep = 0; rep < kRepetitions; ++rep) {
    const Synthetic s = synthetic_sweep(9, 3, kSlope, kSd, static_cast<std::uint64_t>(rep));
    const TrendResult r =
        measure_trend(s.x, s.y, {}, quick_options(static_cast<std::uint64_t>(rep)));
    if (r.slope_low <= kSlope && kSlope <= r.slope_high) ++covered;
  }
  const double coverage = covered / static_cast<double>(kRepetitions);
  INFO("seed " << kSeed << ": coverage " << coverage << " over " << kRepetitions);
  // Binomial(400, 0.94): sd 0.012; the band is about 3 sd either side.
  CHECK(coverage >= 0.90);
  CHECK(coverage <= 0.98);
}

TEST_CASE("shuffled data shows a trend at the stated false-positive rate", "[trend][slow]") {
  int flagged = 0;
  for (int rep = 0; rep < kRepetitions; ++rep) {
    const Synthetic s = synthetic_sweep(9, 3, 0.0, 1.0, static_cast<std::uint64_t>(rep));
    const TrendResult r =
        measure_trend(s.x, s.y, {}, quick_options(static_cast<std::uint64_t>(rep)));
    if (r.direction == TrendDirection::rises || r.direction == TrendDirection::falls) ++flagged;
  }
  const double rate = flagged / static_cast<double>(kRepetitions);
  INFO("seed " << kSeed << ": " << flagged << " of " << kRepetitions << " flagged");
  // Binomial(400, 0.05): mean 20, sd 4.4; the band is about 3 sd either side.
  CHECK(rate >= 0.02);
  CHECK(rate <= 0.085);
}

TEST_CASE("a clear rise is found, and the permutation p-value is never 0", "[trend]") {
  const Synthetic s = synthetic_sweep(9, 3, 1.0, 0.2, 7);
  // One seeded realisation: its 95% bootstrap interval covers the true slope 1.
  const TrendResult r = measure_trend(s.x, s.y, {}, quick_options(5));
  CHECK(r.direction == TrendDirection::rises);
  CHECK(r.p_value == Approx(1.0 / 1000));  // (1 + 0) / (1 + 999)
  CHECK(r.slope_low < 1.0);
  CHECK(r.slope_high > 1.0);
}

TEST_CASE("z-scores are counted each side of the threshold", "[trend]") {
  const std::vector<double> x = {0.1, 0.1, 0.2, 0.2, 0.4, 0.4};
  const std::vector<double> y = {1, 2, 3, 4, 5, 6};
  const std::vector<double> z = {-3, -1, 0.5, 2.5, 4, std::nan("")};
  const TrendResult r = measure_trend(x, y, z, quick_options(1));
  CHECK(r.with_z == 5);
  CHECK(r.above == 2);
  CHECK(r.below == 1);
}

TEST_CASE("runs without a value are left out and counted", "[trend]") {
  const std::vector<double> x = {0.1, 0.1, 0.2, 0.2, 0.4, 0.4};
  const std::vector<double> y = {1, std::nan(""), 3, 4, 5, 6};
  const TrendResult r = measure_trend(x, y, {}, quick_options(1));
  CHECK(r.runs == 5);
  CHECK(r.left_out == 1);
  CHECK(r.smallest_group == 1);
  CHECK(std::isnan(r.slope_low));  // x = 0.1 has one run left: no interval
  CHECK_FALSE(r.note.empty());
}

TEST_CASE("a level whose x does not vary has no measurable trend", "[trend]") {
  const TrendResult r = measure_trend({0.1, 0.1, 0.1}, {1, 2, 3}, {}, quick_options(1));
  CHECK(r.direction == TrendDirection::not_measurable);
  CHECK(r.note == "x takes fewer than two values");
}

TEST_CASE("x must be positive for a slope against log10 x", "[trend]") {
  CHECK_THROWS_AS(measure_trend({0.0, 0.1, 0.2}, {1, 2, 3}, {}, quick_options(1)), InputError);
}

TEST_CASE("trends are measured per level in order of first appearance", "[trend]") {
  const Synthetic rising = synthetic_sweep(5, 3, 1.0, 0.1, 1);
  const Synthetic flat = synthetic_sweep(5, 3, -1.0, 0.1, 2);
  std::vector<double> x, y;
  std::vector<std::string> levels;
  for (std::size_t i = 0; i < rising.x.size(); ++i) {
    x.push_back(flat.x[i]);
    y.push_back(flat.y[i]);
    levels.push_back("zipf");
    x.push_back(rising.x[i]);
    y.push_back(rising.y[i]);
    levels.push_back("uniform");
  }
  const std::vector<TrendLevel> trends = trends_by_level(x, y, {}, levels, quick_options(1));
  REQUIRE(trends.size() == 2);
  CHECK(trends[0].level == "zipf");
  CHECK(trends[0].result.direction == TrendDirection::falls);
  CHECK(trends[1].level == "uniform");
  CHECK(trends[1].result.direction == TrendDirection::rises);
  CHECK(trends[1].result.runs == 15);
}

TEST_CASE("the sentence names level, direction, numbers and the null counts", "[trend]") {
  const Synthetic s = synthetic_sweep(9, 3, 1.0, 0.2, 7);
  std::vector<double> z(s.x.size(), 0.0);
  z[0] = 3;
  const TrendOptions options = quick_options(3);
  const TrendResult r = measure_trend(s.x, s.y, z, options);
  const std::string text =
      describe_trend(r,
                     {"scenario.capacities = zipf", "nodf_z_score", "dynamics.temperature",
                      "more nested than the curveball null", "less nested"},
                     options);
  INFO(text);
  CHECK(text.rfind(
            "With scenario.capacities = zipf, nodf_z_score rises with dynamics.temperature: rho ",
            0) == 0);
  CHECK(text.find("over 27 runs, p = 0.001") != std::string::npos);
  CHECK(text.find("per tenfold dynamics.temperature (95% interval ") != std::string::npos);
  CHECK(text.find("1 of 27 runs more nested than the curveball null, 0 less nested.") !=
        std::string::npos);
}
