// Problems and draws that tests share: a seeded scenario with log-normal
// masses, multinomial counts drawn from a coupling, the entropic coupling of
// a problem, and a matrix written as rows.
#pragma once

#include <catch2/catch.hpp>
#include <cstdint>
#include <initializer_list>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim::testing {

// An n x m scenario of `kind` gains with log-normal budgets and capacities
// (sigma 0.5), seeded.
inline TransportProblem lognormal_scenario(GainsKind kind, long n, long m, std::uint64_t seed) {
  ScenarioOptions options;
  options.agents = n;
  options.partners = m;
  options.gains = kind;
  options.budgets = MassKind::lognormal;
  options.capacities = MassKind::lognormal;
  options.budgets_spread = options.capacities_spread = 0.5;
  options.seed = seed;
  return make_scenario(options);
}

// `units` whole counts drawn from the shares of `coupling` (one multinomial
// draw on the stream (seed, substream)).
inline Matrix draw_counts(const Matrix& coupling, long units, std::uint64_t seed,
                          std::uint64_t substream) {
  RandomStream rng(seed, substream, StreamId::dynamics);
  Matrix counts = Matrix::Zero(coupling.rows(), coupling.cols());
  add_multinomial(rng, units, coupling.data(), static_cast<long>(coupling.size()), coupling.sum(),
                  counts.data());
  return counts;
}

// The converged entropic coupling at `epsilon` (the test fails otherwise).
inline Matrix entropic_coupling(const TransportProblem& problem, double epsilon, double tolerance) {
  EntropicOptions options;
  options.epsilon = epsilon;
  options.tolerance = tolerance;
  const EntropicResult result = solve_entropic(problem, options);
  REQUIRE(result.converged());
  return result.coupling;
}

// A matrix from its rows: matrix_of({{1, 2}, {3, 4}}).
inline Matrix matrix_of(std::initializer_list<std::initializer_list<double>> rows) {
  Matrix m(rows.size(), rows.begin()->size());
  Eigen::Index i = 0;
  for (auto row : rows) {
    Eigen::Index j = 0;
    for (double v : row) m(i, j++) = v;
    ++i;
  }
  return m;
}

}  // namespace allocsim::testing
