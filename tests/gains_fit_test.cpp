#include "allocsim/analysis/gains_fit.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <iostream>

#include "allocsim/analysis/marginal_newton.hpp"
#include "allocsim/analysis/temperature.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/sim/scenario.hpp"
#include "test_problems.hpp"

using namespace allocsim;
using namespace allocsim::testing;

namespace {

constexpr double kNoiseFreeAccuracy = 1e-6;

struct Case {
  TransportProblem problem;
  std::vector<Matrix> features;
  Matrix coupling;
};

// Two features: a trait-distance gain and an independent random matrix;
// coupling = exp(lambda_1 F_1 + lambda_2 F_2 + a + b) with the scenario's marginals.
Case make_case(std::uint64_t seed, const Vector& lambda) {
  ScenarioOptions options;
  options.agents = 7;
  options.partners = 9;
  options.budgets = options.capacities = MassKind::lognormal;
  options.budgets_spread = options.capacities_spread = 0.5;
  options.seed = seed;
  Case c;
  c.problem = make_scenario(options);
  options.gains = GainsKind::random;
  c.features = {c.problem.gains, make_scenario(options).gains};
  const Matrix x = lambda(0) * c.features[0] + lambda(1) * c.features[1];
  const MarginalFit fit = match_marginals(x, Matrix::Ones(7, 9), c.problem.budgets,
                                          c.problem.capacities, c.problem.budgets.array().log(),
                                          c.problem.capacities.array().log(), 1e-13, 200);
  REQUIRE(fit.converged);
  c.coupling = fit.coupling;
  return c;
}

}  // namespace

TEST_CASE("a noise-free coupling gives back theta/epsilon") {
  Vector lambda(2);
  lambda << 8.0, -3.0;
  const Case c = make_case(4, lambda);
  const GainsFitResult r =
      fit_gains(observe_allocation(c.coupling, c.problem.gains, std::nullopt), c.features);
  INFO(r.brief());
  REQUIRE(r.converged());
  CHECK((r.theta_over_epsilon - lambda).cwiseAbs().maxCoeff() < kNoiseFreeAccuracy * 8);
  CHECK(std::isnan(r.standard_errors(0)));
}

TEST_CASE("with the gains as the only feature the fit is 1 / the temperature estimate") {
  // Two algorithms (Newton in lambda here, a 1-D root in beta there) on one likelihood.
  Vector lambda(2);
  lambda << 12.0, 0.0;
  const Case c = make_case(9, lambda);
  const ObservedAllocation o =
      observe_allocation(draw_counts(c.coupling, 5000, 9, 2), c.problem.gains, std::nullopt);
  const GainsFitResult fit = fit_gains(o, {c.features[0]});
  const TemperatureResult t = estimate_temperature(o);
  REQUIRE(fit.converged());
  REQUIRE(t.estimated());
  CHECK(fit.theta_over_epsilon(0) == Approx(1 / t.epsilon).epsilon(1e-7));
  CHECK(fit.standard_errors(0) == Approx(t.standard_error / (t.epsilon * t.epsilon)).epsilon(1e-6));
}

TEST_CASE("the fit recovers theta/epsilon within its standard errors") {
  // 150 seeded draws; |lambda_hat - lambda| <= 1.96 se should hold in about
  // 95% of the 300 coefficient checks, and the standardised errors should
  // spread like a standard normal.
  Vector lambda(2);
  lambda << 8.0, -3.0;
  long checks = 0, within = 0;
  double z_sq = 0;
  for (std::uint64_t seed = 1; seed <= 150; ++seed) {
    const Case c = make_case(seed, lambda);
    const ObservedAllocation o =
        observe_allocation(draw_counts(c.coupling, 4000, seed, 2), c.problem.gains, std::nullopt);
    const GainsFitResult r = fit_gains(o, c.features);
    INFO("seed " << seed << ": " << r.brief());
    REQUIRE(r.converged());
    for (int k = 0; k < 2; ++k) {
      const double z = (r.theta_over_epsilon(k) - lambda(k)) / r.standard_errors(k);
      within += std::abs(z) <= 1.96;
      z_sq += z * z;
      ++checks;
    }
  }
  const double rate = static_cast<double>(within) / checks;
  const double spread = std::sqrt(z_sq / checks);
  std::cout << "gains fit: " << within << " of " << checks << " within 1.96 se (" << 100 * rate
            << "%), standardised error spread " << spread << "\n";
  CHECK(rate >= 0.90);
  CHECK(rate <= 0.99);
  CHECK(spread > 0.8);
  CHECK(spread < 1.2);
}

TEST_CASE("features that cannot be identified are refused, naming them") {
  Vector lambda(2);
  lambda << 5.0, 1.0;
  const Case c = make_case(3, lambda);
  const ObservedAllocation o = observe_allocation(c.coupling, c.problem.gains, std::nullopt);
  Matrix additive(7, 9);
  for (int i = 0; i < 7; ++i)
    for (int j = 0; j < 9; ++j) additive(i, j) = 0.5 * i + 0.1 * j * j;
  CHECK_THROWS_WITH(fit_gains(o, {c.features[0], additive}, {"distance.csv", "sizes.csv"}),
                    Catch::Contains("sizes.csv") && Catch::Contains("additive"));
  // A multiple of a feature plus row and column constants is collinear with it.
  const Matrix shifted = 2.0 * c.features[0] + additive;
  CHECK_THROWS_WITH(fit_gains(o, {c.features[0], shifted}),
                    Catch::Contains("feature 1, feature 2") && Catch::Contains("collinear"));
  CHECK_THROWS_WITH(fit_gains(o, {Matrix::Ones(7, 8)}, {"wrong.csv"}),
                    Catch::Contains("wrong.csv") && Catch::Contains("7 x 8"));
  CHECK_THROWS_AS(fit_gains(o, {}), InputError);
}

TEST_CASE("fit statuses read back from their words") {
  CHECK(gains_fit_status_from_string(to_string(GainsFitStatus::converged)) ==
        GainsFitStatus::converged);
  CHECK_THROWS_AS(gains_fit_status_from_string("done"), InputError);
}
