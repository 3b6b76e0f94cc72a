#include "allocsim/analysis/entropic_transport.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <random>

#include "allocsim/analysis/exact_transport.hpp"

using namespace allocsim;

namespace {

constexpr double kTolerance = 1e-10;         // marginal violation asked of the solver
constexpr double kCouplingAgreement = 1e-8;  // max |pi - reference| for unit mass
constexpr std::uint64_t kSeed = 20261201;    // printed by the randomised tests

TransportProblem random_problem(int n, int m, std::mt19937_64& rng, bool unit_mass = true) {
  std::uniform_real_distribution<double> uniform(0.0, 1.0);
  TransportProblem p;
  p.gains = Matrix::NullaryExpr(n, m, [&] { return uniform(rng); });
  p.budgets = Vector::NullaryExpr(n, [&] { return 0.2 + uniform(rng); });
  p.capacities = Vector::NullaryExpr(m, [&] { return 0.2 + uniform(rng); });
  const double total = unit_mass ? 1.0 : 37.0;
  p.budgets *= total / p.budgets.sum();
  p.capacities *= total / p.capacities.sum();
  return p;
}

EntropicResult solve_at(const TransportProblem& p, double eps) {
  EntropicOptions options;
  options.epsilon = eps;
  options.tolerance = kTolerance;
  return solve_entropic(p, options);
}

double marginal_violation(const TransportProblem& p, const Matrix& pi) {
  return ((pi.rowwise().sum() - p.budgets).array().abs().sum() +
          (pi.colwise().sum().transpose() - p.capacities).array().abs().sum()) /
         p.total_mass();
}

}  // namespace

TEST_CASE("a 2x2 problem matches its closed form") {
  // Closed form (common practice): a 2x2 coupling with fixed marginals has one
  // free cell x = pi_11, and entropic optimality fixes the cross ratio
  // pi_11 pi_22 / (pi_12 pi_21) = exp((g11 + g22 - g12 - g21) / eps), so x is
  // the root in (max(0, c1 - r2), min(r1, c1)) of
  // (1 - k) x^2 + (r2 - c1 + k (r1 + c1)) x - k r1 c1 = 0.
  TransportProblem p;
  p.gains.resize(2, 2);
  p.gains << 1.0, 0.2, 0.3, 0.9;
  p.budgets = Eigen::Vector2d(0.6, 0.4);
  p.capacities = Eigen::Vector2d(0.3, 0.7);
  for (const double eps : {0.05, 0.3, 1.0, 5.0}) {
    const double r1 = 0.6, r2 = 0.4, c1 = 0.3;
    const double k = std::exp((1.0 + 0.9 - 0.2 - 0.3) / eps);
    const double a = 1 - k, b = r2 - c1 + k * (r1 + c1), c = -k * r1 * c1;
    const double disc = std::sqrt(b * b - 4 * a * c);
    double x = (-b + disc) / (2 * a);
    if (!(x > 0 && x < std::min(r1, c1))) x = (-b - disc) / (2 * a);
    const EntropicResult result = solve_at(p, eps);
    INFO("epsilon " << eps);
    REQUIRE(result.converged());
    CHECK(result.coupling(0, 0) == Approx(x).margin(1e-10));
    CHECK(result.coupling(1, 1) == Approx(r2 - c1 + x).margin(1e-10));
  }
}

TEST_CASE("a very large epsilon gives the independent coupling r c^T / sum r") {
  std::mt19937_64 rng(kSeed);
  const TransportProblem p = random_problem(7, 5, rng, false);
  const EntropicResult result = solve_at(p, 1e7);
  REQUIRE(result.converged());
  const Matrix independent = p.budgets * p.capacities.transpose() / p.total_mass();
  // Deviation is of order range / eps relative to each cell (first-order expansion).
  CHECK((result.coupling - independent).cwiseAbs().maxCoeff() < 1e-6 * p.total_mass());
}

TEST_CASE("a small epsilon comes within epsilon log(min(n,m)) of the exact optimum") {
  // gain(exact) - gain(eps) <= eps (H(pi_eps) - H(pi_exact)) <= eps * mass * log(min(n, m))
  // for Shannon entropies of normalised couplings (common practice).
  std::mt19937_64 rng(kSeed + 1);
  for (int trial = 0; trial < 5; ++trial) {
    const TransportProblem p = random_problem(20 + trial, 15, rng, trial % 2 == 0);
    const ExactResult exact = solve_exact(p);
    REQUIRE(exact.optimal());
    for (const double eps : {0.1, 0.01, 0.001}) {
      const EntropicResult result = solve_at(p, eps);
      INFO("seed " << kSeed + 1 << " trial " << trial << " epsilon " << eps);
      REQUIRE(result.converged());
      const double gap = exact.total_gain - result.total_gain;
      CHECK(gap >= -1e-9 * p.total_mass());
      CHECK(gap <= eps * p.total_mass() * std::log(15.0) + 1e-9);
    }
  }
}

TEST_CASE("total gain falls monotonically as epsilon grows") {
  std::mt19937_64 rng(kSeed + 2);
  const TransportProblem p = random_problem(30, 40, rng);
  double previous = std::numeric_limits<double>::infinity();
  for (double eps = 1e-3; eps < 1e2; eps *= 1.6) {
    const EntropicResult result = solve_at(p, eps);
    REQUIRE(result.converged());
    INFO("epsilon " << eps);
    CHECK(result.total_gain <= previous + 1e-12);
    previous = result.total_gain;
  }
}

TEST_CASE("primal value equals dual value and the marginals are met") {
  std::mt19937_64 rng(kSeed + 3);
  for (const double eps : {1e-3, 1e-2, 0.1, 1.0, 10.0}) {
    const TransportProblem p = random_problem(25, 35, rng, false);
    const EntropicResult result = solve_at(p, eps);
    INFO("seed " << kSeed + 3 << " epsilon " << eps);
    REQUIRE(result.converged());
    CHECK(marginal_violation(p, result.coupling) <= 2 * kTolerance);
    CHECK(result.primal_value == Approx(result.dual_value).epsilon(1e-8).margin(1e-9));
    // The coupling has the Gibbs form of the stated potentials.
    const Matrix gibbs = (((p.gains.array().colwise() + result.potentials.agent.array()).rowwise() +
                           result.potentials.partner.transpose().array()) /
                          eps)
                             .exp();
    CHECK((gibbs - result.coupling).cwiseAbs().maxCoeff() <= 1e-10 * p.total_mass());
  }
}

TEST_CASE("epsilon down to 1e-4 of the gain range converges without NaN") {
  std::mt19937_64 rng(kSeed + 4);
  TransportProblem p = random_problem(60, 50, rng);
  p.gains *= 1e3;  // range about 1000: scale must not matter
  p.gains.array() += 5e6;
  const double range = gain_range(p);
  const EntropicResult result_small = solve_at(p, 1e-4 * range);
  INFO(result_small.brief());
  CHECK(result_small.coupling.allFinite());
  CHECK(result_small.converged());
  EntropicOptions tiny;
  tiny.epsilon = 1e-6 * range;
  tiny.max_iterations = 2000;
  const EntropicResult result = solve_entropic(p, tiny);
  CHECK(result.coupling.allFinite());  // converged or not, never NaN
}

TEST_CASE("cells without access stay empty, and an impossible mask is reported") {
  std::mt19937_64 rng(kSeed + 5);
  TransportProblem p = random_problem(6, 6, rng);
  p.access = AccessMask::Ones(6, 6);
  for (int k = 0; k < 6; ++k) (*p.access)(k, (k + 1) % 6) = 0;
  const EntropicResult result = solve_at(p, 0.05);
  REQUIRE(result.converged());
  for (int k = 0; k < 6; ++k) CHECK(result.coupling(k, (k + 1) % 6) == 0.0);
  CHECK(marginal_violation(p, result.coupling) <= 2 * kTolerance);

  p.access->row(2).setZero();
  const EntropicResult impossible = solve_at(p, 0.05);
  CHECK(impossible.status == EntropicStatus::infeasible);
  CHECK_THAT(impossible.message, Catch::Contains("3"));
}

TEST_CASE("a warm start from a nearby epsilon needs fewer iterations") {
  std::mt19937_64 rng(kSeed + 6);
  const TransportProblem p = random_problem(80, 70, rng);
  const EntropicResult coarse = solve_at(p, 0.02);
  EntropicOptions options;
  options.epsilon = 0.018;
  options.tolerance = kTolerance;
  const EntropicResult cold = solve_entropic(p, options);
  const EntropicResult warm = solve_entropic(p, options, &coarse.potentials, 0.02);
  REQUIRE(cold.converged());
  REQUIRE(warm.converged());
  CHECK(warm.iterations < cold.iterations);
  CHECK((warm.coupling - cold.coupling).cwiseAbs().maxCoeff() < kCouplingAgreement);
}

TEST_CASE("options out of range name the field") {
  EntropicOptions options;
  options.epsilon = -1;
  CHECK_THROWS_WITH(options.validate(), Catch::Contains("epsilon"));
  options.epsilon = 1;
  options.tolerance = 0;
  CHECK_THROWS_WITH(options.validate(), Catch::Contains("tolerance"));
}

TEST_CASE("two threads give the same coupling as one") {
  std::mt19937_64 rng(kSeed + 7);
  const TransportProblem p = random_problem(101, 67, rng);
  EntropicOptions options;
  options.epsilon = 0.01;
  options.tolerance = kTolerance;
  const EntropicResult one = solve_entropic(p, options);
  options.threads = 2;
  const EntropicResult two = solve_entropic(p, options);
  REQUIRE(one.converged());
  REQUIRE(two.converged());
  CHECK(two.iterations == one.iterations);
  CHECK((two.coupling - one.coupling).cwiseAbs().maxCoeff() < 1e-14);
}

TEST_CASE("the coupling is bit-identical for 1, 2 and 3 threads") {
  // Rows are split in the same chunks whatever the threads, and every sum
  // is taken in chunk order, so the threads change nothing, not even the
  // last bit; 203 rows leave a remainder below the blocks of four rows.
  std::mt19937_64 rng(kSeed + 8);
  const TransportProblem p = random_problem(203, 75, rng);
  EntropicOptions options;
  options.epsilon = 0.003;
  options.tolerance = kTolerance;
  options.parallel_cells = 0;  // threads even for a small problem
  const EntropicResult one = solve_entropic(p, options);
  REQUIRE(one.converged());
  for (int threads : {2, 3}) {
    INFO(threads << " threads");
    options.threads = threads;
    const EntropicResult many = solve_entropic(p, options);
    CHECK(many.iterations == one.iterations);
    CHECK(many.coupling == one.coupling);
    CHECK(many.potentials.agent == one.potentials.agent);
    CHECK(many.total_gain == one.total_gain);
  }
  options.parallel_cells = -1;
  CHECK_THROWS_WITH(options.validate(), Catch::Contains("parallel_cells"));
}
