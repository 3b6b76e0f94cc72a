// One-sided likelihood-ratio bounds at the boundaries of the temperature
// estimate, and the scale of epsilon following the scale of the gains.
#include <catch2/catch.hpp>
#include <cmath>
#include <iostream>

#include "allocsim/analysis/additive_residual.hpp"
#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/analysis/temperature.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/sim/scenario.hpp"
#include "test_problems.hpp"

using namespace allocsim;
using namespace allocsim::testing;

namespace {

// Mass of the entropic coupling off the exact optimum's support.
double leak(const TransportProblem& problem, const Matrix& support, double epsilon) {
  return entropic_coupling(problem, epsilon, 1e-12)
      .cwiseProduct((support.array() == 0).cast<double>().matrix())
      .sum();
}

// The epsilon at which N * (mass off the optimal support) = expected, by bisection in log epsilon.
double epsilon_for_leak(const TransportProblem& problem, long units, double expected) {
  const ExactResult exact = solve_exact(problem);
  REQUIRE(exact.optimal());
  double lo = std::log(1e-3 * gain_range(problem)), hi = std::log(gain_range(problem));
  for (int k = 0; k < 40; ++k) {
    const double mid = 0.5 * (lo + hi);
    (units * leak(problem, exact.coupling, std::exp(mid)) < expected ? lo : hi) = mid;
  }
  return std::exp(0.5 * (lo + hi));
}

bool covers(const TemperatureResult& r, double epsilon) {
  return r.ci_low <= epsilon && epsilon <= r.ci_high;
}

}  // namespace

TEST_CASE(
    "at the optimum the bound runs from 0 to eps_up, where the likelihood ratio is "
    "chi-square's point") {
  const TransportProblem problem = lognormal_scenario(GainsKind::trait_distance, 5, 5, 3);
  const ExactResult exact = solve_exact(problem);
  REQUIRE(exact.optimal());
  // Counts exactly proportional to the optimal plan (rounded): at the optimum.
  Matrix counts = (exact.coupling * 400).array().round().matrix();
  const ObservedAllocation o = observe_allocation(counts, problem.gains, std::nullopt);
  const TemperatureResult r = estimate_temperature(o);
  INFO(r.brief());
  REQUIRE(r.status == TemperatureStatus::at_optimum);
  CHECK(r.ci_low == 0);
  REQUIRE(std::isfinite(r.ci_high));
  REQUIRE(r.ci_high > 0);
  // At eps_up the profile log-likelihood is chi2_1(0.95)/2 below its supremum
  // (the plan itself when the optimum is unique: sum n log p).
  const Matrix at_bound = entropic_coupling(o.problem, r.ci_high, 1e-12);
  double drop = 0;
  for (Eigen::Index k = 0; k < counts.size(); ++k)
    if (o.shares.data()[k] > 0)
      drop += o.units * o.shares.data()[k] * std::log(o.shares.data()[k] / at_bound.data()[k]);
  // 3.841458820694124: scipy.stats.chi2.ppf(0.95, 1) (from memory).
  CHECK(2 * drop == Approx(3.841458820694124).epsilon(1e-4));
}

TEST_CASE(
    "without signal the bound runs from eps_lo to infinity, where the likelihood ratio is "
    "chi-square's point") {
  const TransportProblem problem = lognormal_scenario(GainsKind::random, 5, 6, 4);
  Matrix flat(5, 6);
  for (Eigen::Index i = 0; i < 5; ++i)
    for (Eigen::Index j = 0; j < 6; ++j) flat(i, j) = 20 + ((i * 7 + j * 3) % 5);
  // Tilt towards low gains so that the observed gain is below independence's.
  for (Eigen::Index k = 0; k < flat.size(); ++k)
    flat.data()[k] = std::round(flat.data()[k] * (1.5 - problem.gains.data()[k]));
  const ObservedAllocation o = observe_allocation(flat, problem.gains, std::nullopt);
  const TemperatureResult r = estimate_temperature(o);
  INFO(r.brief());
  REQUIRE(r.status == TemperatureStatus::not_explained_by_noise);
  CHECK(std::isinf(r.ci_high));
  REQUIRE(std::isfinite(r.ci_low));
  REQUIRE(r.ci_low > 0);
  const Matrix at_bound = entropic_coupling(o.problem, r.ci_low, 1e-12);
  const Matrix independent = entropic_coupling(o.problem, 1e6 * gain_range(o.problem), 1e-12);
  double drop = 0;
  for (Eigen::Index k = 0; k < flat.size(); ++k)
    if (o.shares.data()[k] > 0)
      drop += o.units * o.shares.data()[k] * std::log(independent.data()[k] / at_bound.data()[k]);
  CHECK(2 * drop == Approx(3.841458820694124).epsilon(1e-4));
}

TEST_CASE("epsilon and its interval scale with the gains from 1e-300 to 1e300") {
  const TransportProblem problem = lognormal_scenario(GainsKind::trait_distance, 6, 7, 5);
  const Matrix counts =
      draw_counts(entropic_coupling(problem, 0.1 * gain_range(problem), 1e-12), 3000, 5, 3);
  const TemperatureResult base =
      estimate_temperature(observe_allocation(counts, problem.gains, std::nullopt));
  REQUIRE(base.estimated());
  for (const double factor :
       {1e-300, 1e-200, 1e-100, 1e-16, 1e-3, 7.0, 1e16, 1e100, 1e200, 1e300}) {
    const TemperatureResult r =
        estimate_temperature(observe_allocation(counts, problem.gains * factor, std::nullopt));
    INFO("factor " << factor << ": " << r.brief());
    REQUIRE(r.estimated());
    CHECK(r.epsilon / factor == Approx(base.epsilon).epsilon(1e-9));
    CHECK(r.standard_error / factor == Approx(base.standard_error).epsilon(1e-9));
    CHECK(r.ci_low / factor == Approx(base.ci_low).epsilon(1e-9));
    CHECK(r.ci_high / factor == Approx(base.ci_high).epsilon(1e-9));
  }
  // Below the smallest normal double the gains are refused, naming the reason.
  CHECK_THROWS_WITH(
      estimate_temperature(observe_allocation(counts, problem.gains * 1e-310, std::nullopt)),
      Catch::Contains("smallest normal double"));
}

TEST_CASE("the boundary bounds scale with the gains too") {
  const TransportProblem problem = lognormal_scenario(GainsKind::trait_distance, 5, 5, 3);
  const Matrix counts = (solve_exact(problem).coupling * 400).array().round().matrix();
  const TemperatureResult base =
      estimate_temperature(observe_allocation(counts, problem.gains, std::nullopt));
  REQUIRE(base.status == TemperatureStatus::at_optimum);
  for (const double factor : {1e-300, 1e300}) {
    const TemperatureResult r =
        estimate_temperature(observe_allocation(counts, problem.gains * factor, std::nullopt));
    REQUIRE(r.status == TemperatureStatus::at_optimum);
    CHECK(r.ci_high / factor == Approx(base.ci_high).epsilon(1e-9));
  }
}

TEST_CASE("near the optimum the reported sets cover the true epsilon at the nominal rate",
          "[slow]") {
  // 100 seeded cases whose epsilon puts 0.3 to 3 expected units off the exact
  // optimum's support, so that many land at the optimum. The reported set is
  // [0, eps_up] at the optimum and the two-sided interval otherwise; both are
  // the likelihood-ratio set at 95%. Issue 14: coverage within 92-98%.
  const double expected_off[] = {0.3, 1.0, 3.0};
  long covered = 0, boundary = 0, boundary_covered = 0, without_interval = 0;
  const int cases = 100;
  for (int seed = 1; seed <= cases; ++seed) {
    const long units = 300 + 100 * (seed % 5);
    const TransportProblem problem =
        lognormal_scenario(seed % 2 ? GainsKind::trait_distance : GainsKind::random, 4 + seed % 3,
                           4 + seed % 4, 100 + seed);
    const double eps = epsilon_for_leak(problem, units, expected_off[seed % 3]);
    const Matrix counts =
        draw_counts(entropic_coupling(problem, eps, 1e-12), units, 7000 + seed, 3);
    const TemperatureResult r =
        estimate_temperature(observe_allocation(counts, problem.gains, std::nullopt));
    INFO("seed " << seed << ": " << r.brief() << " / " << r.message);
    REQUIRE((r.estimated() || r.status == TemperatureStatus::at_optimum));
    // A case whose interval could not be found (its message says why) counts
    // as not covered.
    if (!std::isfinite(r.ci_low)) ++without_interval;
    covered += covers(r, eps);
    if (r.status == TemperatureStatus::at_optimum) {
      ++boundary;
      boundary_covered += covers(r, eps);
    }
  }
  std::cout << "near-optimal coverage: " << covered << " of " << cases << "; at the optimum "
            << boundary << " cases, covered " << boundary_covered << "; without an interval "
            << without_interval << "\n";
  CHECK(without_interval <= 2);
  CHECK(covered >= 92);
  CHECK(covered <= 98);
}

TEST_CASE("near independence the reported sets cover the true epsilon at the nominal rate",
          "[slow]") {
  // 100 seeded cases whose signal beta sqrt(N V(0)) is 0.25 to 1 standard
  // error, so that many land at or below the independent coupling's gain.
  // The reported set is [eps_lo, infinity) there and the two-sided interval
  // otherwise. Issue 14: coverage within 92-98%.
  const double signal[] = {0.25, 0.5, 1.0};
  long covered = 0, boundary = 0, boundary_covered = 0;
  const int cases = 100;
  for (int seed = 1; seed <= cases; ++seed) {
    const long units = 500 + 500 * (seed % 4);
    const TransportProblem problem =
        lognormal_scenario(seed % 2 ? GainsKind::trait_distance : GainsKind::random, 4 + seed % 4,
                           4 + seed % 3, 300 + seed);
    const Matrix flat = entropic_coupling(problem, 1e6 * gain_range(problem), 1e-12);
    const double v0 = conditional_variance(problem.gains, flat);
    const double eps = std::sqrt(units * v0) / signal[seed % 3];
    const Matrix counts =
        draw_counts(entropic_coupling(problem, eps, 1e-12), units, 9000 + seed, 3);
    const TemperatureResult r =
        estimate_temperature(observe_allocation(counts, problem.gains, std::nullopt));
    INFO("seed " << seed << ": " << r.brief());
    REQUIRE((r.estimated() || r.status == TemperatureStatus::not_explained_by_noise));
    REQUIRE(std::isfinite(r.ci_low));
    covered += covers(r, eps);
    if (r.status == TemperatureStatus::not_explained_by_noise) {
      ++boundary;
      boundary_covered += covers(r, eps);
    }
  }
  std::cout << "near-independent coverage: " << covered << " of " << cases << "; without signal "
            << boundary << " cases, covered " << boundary_covered << "\n";
  CHECK(covered >= 92);
  CHECK(covered <= 98);
}
