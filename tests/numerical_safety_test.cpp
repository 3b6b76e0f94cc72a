// Numerical safety of the transport solvers at the edges of their range:
// extreme transport temperatures, gains spanning many orders of magnitude,
// tiny marginals. The promise (include/allocsim/analysis/*_transport.hpp):
// a result or a clear status, never NaN and never a silent wrong answer.
#include <catch2/catch.hpp>
#include <cmath>
#include <iostream>
#include <random>
#include <string>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/analysis/exact_transport.hpp"

using namespace allocsim;

namespace {

constexpr std::uint64_t kSeed = 20260309;  // printed by every randomised case
constexpr double kTolerance = 1e-9;        // marginal violation asked of the entropic solver
constexpr long kIterationCap = 20000;      // keeps the hardest cases quick; may end not_converged
constexpr double kTinyMassAgreement =
    1e-3;  // relative error allowed on a mass of 1e-12 (~1e-16 absolute)

// n x m problem with gains from `gain`, budgets and capacities in [0.2, 1.2)
// normalised to total 1.
template <typename Gain>
TransportProblem problem_with(int n, int m, std::mt19937_64& rng, Gain gain) {
  std::uniform_real_distribution<double> uniform(0.0, 1.0);
  TransportProblem p;
  p.gains = Matrix::NullaryExpr(n, m, [&] { return gain(rng); });
  p.budgets = Vector::NullaryExpr(n, [&] { return 0.2 + uniform(rng); });
  p.capacities = Vector::NullaryExpr(m, [&] { return 0.2 + uniform(rng); });
  p.budgets /= p.budgets.sum();
  p.capacities /= p.capacities.sum();
  return p;
}

TransportProblem unit_gains_problem(int n, int m, std::mt19937_64& rng) {
  return problem_with(n, m, rng, [](std::mt19937_64& r) {
    return std::uniform_real_distribution<double>(0.0, 1.0)(r);
  });
}

double relative_violation(const TransportProblem& p, const Matrix& pi) {
  return ((pi.rowwise().sum() - p.budgets).lpNorm<1>() +
          (pi.colwise().sum().transpose() - p.capacities).lpNorm<1>()) /
         p.total_mass();
}

EntropicResult solve_at(const TransportProblem& p, double epsilon,
                        long max_iterations = kIterationCap) {
  EntropicOptions options;
  options.epsilon = epsilon;
  options.tolerance = kTolerance;
  options.max_iterations = max_iterations;
  return solve_entropic(p, options);
}

// What every entropic result must satisfy, converged or not: finite numbers,
// a non-negative coupling, a status that tells the truth about the marginals.
void require_sound(const TransportProblem& p, const EntropicResult& r) {
  INFO(r.brief() << " / " << r.message);
  REQUIRE(r.status != EntropicStatus::infeasible);
  REQUIRE(r.coupling.rows() == p.agents());
  REQUIRE(r.coupling.cols() == p.partners());
  REQUIRE(r.coupling.allFinite());
  REQUIRE((r.coupling.array() >= 0).all());
  REQUIRE(std::isfinite(r.total_gain));
  REQUIRE(std::isfinite(r.marginal_error));
  REQUIRE(std::isfinite(r.entropy));
  REQUIRE(r.potentials.agent.allFinite());
  REQUIRE(r.potentials.partner.allFinite());
  // The reported error is the error of the returned coupling.
  CHECK(r.marginal_error == Approx(relative_violation(p, r.coupling)).margin(1e-12));
  if (r.converged()) {
    CHECK(r.marginal_error <= kTolerance);
  } else {
    CHECK(r.marginal_error > kTolerance);
    CHECK_FALSE(r.message.empty());
  }
}

}  // namespace

TEST_CASE("entropic transport at epsilon 1e-6 of the gain range stays finite and near the optimum",
          "[numerical]") {
  std::cout << "numerical_safety seed " << kSeed << "\n";
  std::mt19937_64 rng(kSeed);
  const TransportProblem p = unit_gains_problem(12, 15, rng);
  const EntropicResult r = solve_at(p, 1e-6 * gain_range(p));
  require_sound(p, r);
  // Limit (DESIGN.md section 3): epsilon -> 0 approaches the exact optimum's
  // gain. Even a coupling stopped early by the iteration cap has marginals
  // within 2% here, so its gain lies within 2% of the range of the optimum.
  const ExactResult exact = solve_exact(p);
  REQUIRE(exact.optimal());
  CHECK(r.marginal_error < 0.02);
  CHECK(std::abs(r.total_gain - exact.total_gain) <= 0.02 * gain_range(p));
}

TEST_CASE("entropic transport at epsilon 1e6 of the gain range is the independent coupling",
          "[numerical]") {
  std::mt19937_64 rng(kSeed + 1);
  const TransportProblem p = unit_gains_problem(12, 15, rng);
  const EntropicResult r = solve_at(p, 1e6 * gain_range(p));
  require_sound(p, r);
  REQUIRE(r.converged());
  // Limit (DESIGN.md section 3): epsilon -> infinity gives r c^T / sum(r);
  // the distance shrinks like range/epsilon = 1e-6 of the cell masses.
  const Matrix independent = p.budgets * p.capacities.transpose() / p.total_mass();
  CHECK((r.coupling - independent).cwiseAbs().maxCoeff() <= 1e-5 * independent.maxCoeff());
}

TEST_CASE("gains spanning 12 orders of magnitude give finite couplings at every epsilon",
          "[numerical]") {
  std::mt19937_64 rng(kSeed + 2);
  const TransportProblem p = problem_with(10, 14, rng, [](std::mt19937_64& r) {
    return std::pow(10.0, std::uniform_real_distribution<double>(-6.0, 6.0)(r));
  });
  const ExactResult exact = solve_exact(p);
  REQUIRE(exact.optimal());
  CHECK(exact.marginal_error <= 1e-12);
  double previous_gain = HUGE_VAL;
  for (const double share : {1e-6, 1e-3, 1.0, 1e6}) {
    INFO("epsilon " << share << " of the gain range");
    const EntropicResult r = solve_at(p, share * gain_range(p));
    require_sound(p, r);
    if (share >= 1e-3) CHECK(r.converged());
    // <gains, pi_eps> falls as epsilon grows, and a coupling that meets the
    // marginals never beats the exact optimum (a stopped one may, by its error).
    if (r.converged()) {
      CHECK(r.total_gain <= exact.total_gain * (1 + 1e-6));
      CHECK(r.total_gain <= previous_gain * (1 + 1e-9));
    }
    previous_gain = r.total_gain;
  }
}

TEST_CASE("gains offset by 1e12 give the coupling of the unshifted gains", "[numerical]") {
  // Adding a constant to every gain changes no coupling (the constant is a
  // row potential); at 1e12 the doubles keep the differences to ~1e-4.
  std::mt19937_64 rng(kSeed + 3);
  const TransportProblem p = unit_gains_problem(8, 9, rng);
  TransportProblem shifted = p;
  shifted.gains.array() += 1e12;
  const EntropicResult a = solve_at(p, 0.05), b = solve_at(shifted, 0.05);
  require_sound(shifted, b);
  REQUIRE(b.converged());
  CHECK((a.coupling - b.coupling).cwiseAbs().maxCoeff() <= 1e-3 * a.coupling.maxCoeff());
  const ExactResult ea = solve_exact(p), eb = solve_exact(shifted);
  REQUIRE(eb.optimal());
  CHECK((ea.coupling - eb.coupling).cwiseAbs().maxCoeff() <= 1e-12);
}

TEST_CASE("marginals of 1e-12 are met by entropic transport at every epsilon", "[numerical]") {
  std::mt19937_64 rng(kSeed + 4);
  TransportProblem p = unit_gains_problem(6, 7, rng);
  p.budgets(2) = 1e-12;
  p.capacities(4) = 1e-12;
  p.capacities *= p.budgets.sum() / p.capacities.sum();
  for (const double epsilon : {1e-3, 0.1, 10.0}) {
    INFO("epsilon " << epsilon);
    const EntropicResult r = solve_at(p, epsilon);
    require_sound(p, r);
    CHECK(r.converged());
    // The tiny agent and partner get their own mass, not zero and not more.
    CHECK(r.coupling.row(2).sum() == Approx(p.budgets(2)).epsilon(kTinyMassAgreement));
    CHECK(r.coupling.col(4).sum() == Approx(p.capacities(4)).epsilon(kTinyMassAgreement));
  }
}

TEST_CASE("a problem of total mass 1e-12 scales like the unit problem", "[numerical]") {
  std::mt19937_64 rng(kSeed + 5);
  const TransportProblem p = unit_gains_problem(6, 7, rng);
  TransportProblem tiny = p;
  tiny.budgets *= 1e-12;
  tiny.capacities *= 1e-12;
  const EntropicResult a = solve_at(p, 0.1), b = solve_at(tiny, 0.1);
  require_sound(tiny, b);
  REQUIRE(b.converged());
  CHECK((b.coupling * 1e12 - a.coupling).cwiseAbs().maxCoeff() <= 1e-8);
  const ExactResult ea = solve_exact(p), eb = solve_exact(tiny);
  REQUIRE(eb.optimal());
  CHECK((eb.coupling * 1e12 - ea.coupling).cwiseAbs().maxCoeff() <= 1e-9);
}

TEST_CASE("exact transport meets marginals down to total/mass_units", "[numerical]") {
  std::mt19937_64 rng(kSeed + 6);
  TransportProblem p = unit_gains_problem(6, 7, rng);
  for (const double tiny : {1e-9, 1e-12}) {
    INFO("tiny mass " << tiny);
    TransportProblem q = p;
    q.budgets(2) = tiny;
    q.capacities(4) = tiny;
    q.capacities *= q.budgets.sum() / q.capacities.sum();
    const ExactResult e = solve_exact(q);  // mass_units 1e12: 1e-12 is one unit
    REQUIRE(e.optimal());
    CHECK(e.message.empty());
    CHECK(e.coupling.row(2).sum() == Approx(q.budgets(2)).epsilon(kTinyMassAgreement));
    CHECK(e.coupling.col(4).sum() == Approx(q.capacities(4)).epsilon(kTinyMassAgreement));
  }
}

TEST_CASE("exact transport says which masses below total/mass_units it left unshipped",
          "[numerical]") {
  // A mass below total/mass_units rounds to zero integer units (the network
  // simplex needs integer supplies) and gets no flow: the coupling stays
  // optimal for the rounded masses, the marginal error reports the loss,
  // and the message names the agents and partners affected.
  std::mt19937_64 rng(kSeed + 6);
  TransportProblem q = unit_gains_problem(6, 7, rng);
  q.budgets(2) = 1e-14;
  q.capacities(4) = 1e-14;
  q.capacities *= q.budgets.sum() / q.capacities.sum();
  const ExactResult e = solve_exact(q);
  REQUIRE(e.optimal());
  CHECK(e.coupling.row(2).sum() == 0);
  CHECK(e.marginal_error > 0);
  CHECK(e.marginal_error <= 3e-14);
  CHECK(e.message.find("agents 3") != std::string::npos);
  CHECK(e.message.find("partners 5") != std::string::npos);
  CHECK(e.message.find("mass_units") != std::string::npos);
  ExactOptions finer;
  finer.mass_units = 1e15;  // 1e-14 is then 10 units: shipped
  const ExactResult f = solve_exact(q, finer);
  CHECK(f.message.empty());
  // Shipped, to about the double rounding of the unit masses (~1e-17 absolute).
  CHECK(f.coupling.row(2).sum() == Approx(q.budgets(2)).epsilon(0.05));
}

TEST_CASE("exact transport with gains up to 1e300 keeps finite potentials and a certificate",
          "[numerical]") {
  std::mt19937_64 rng(kSeed + 7);
  for (const double scale : {1e12, 1e100, 1e300}) {
    INFO("gains scaled by " << scale);
    TransportProblem p = unit_gains_problem(5, 6, rng);
    p.gains *= scale;
    const ExactResult e = solve_exact(p);
    REQUIRE(e.optimal());
    REQUIRE(std::isfinite(e.total_gain));
    REQUIRE(e.agent_potential.allFinite());
    REQUIRE(e.partner_potential.allFinite());
    // Strong duality (exact_transport.hpp): sum r f + sum c g = total gain.
    const double dual = p.budgets.dot(e.agent_potential) + p.capacities.dot(e.partner_potential);
    CHECK(dual == Approx(e.total_gain).epsilon(1e-9));
    const EntropicResult r = solve_at(p, 0.1 * gain_range(p));
    require_sound(p, r);
    CHECK(r.converged());
  }
}

TEST_CASE("epsilon far outside the gain scale ends finite or says not converged", "[numerical]") {
  std::mt19937_64 rng(kSeed + 8);
  const TransportProblem p = unit_gains_problem(7, 8, rng);
  for (const double epsilon : {1e-300, 1e-12, 1e300}) {
    INFO("epsilon " << epsilon);
    require_sound(p, solve_at(p, epsilon, 5000));
  }
}
