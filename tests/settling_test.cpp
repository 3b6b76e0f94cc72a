// Settling of a run: capacity error and change of snapshot windows, and the
// verdict on a run at a low temperature with too few and enough rounds.
#include "allocsim/sim/settling.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>

#include "allocsim/sim/engine.hpp"
#include "allocsim/sim/scenario.hpp"

using namespace allocsim;

namespace {

bool contains(const std::vector<std::string>& words, const std::string& word) {
  return std::find(words.begin(), words.end(), word) != words.end();
}

constexpr double kTight = 1e-12;
constexpr std::uint64_t kSeed = 1;

// 20 agents x 30 partners, i.i.d. Uniform(0, 1) gains (range 0.996 at seed 1),
// Zipf capacities: at T = 0.01 (1% of the gain range) the prices need a few
// hundred rounds to meet the capacities.
TransportProblem low_temperature_problem() {
  ScenarioOptions o;
  o.agents = 20;
  o.partners = 30;
  o.gains = GainsKind::random;
  o.capacities = MassKind::zipf;
  o.seed = kSeed;
  return make_scenario(o);
}

DynamicsOptions low_temperature_dynamics(long rounds, long burn_in) {
  DynamicsOptions d;
  d.rule = RuleKind::price;
  d.temperature = 0.01;
  d.rounds = rounds;
  d.burn_in = burn_in;
  d.units = 10000;
  d.window = 50;
  return d;
}

}  // namespace

TEST_CASE("capacity error is the total variation of column shares from capacity shares",
          "[settling]") {
  // Hand computation: column shares (0.5, 0.5) against capacity shares
  // (0.25, 0.75): 1/2 (0.25 + 0.25) = 0.25.
  Matrix window(2, 2);
  window << 1, 3, 4, 2;
  Vector capacities(2);
  capacities << 1, 3;
  CHECK(capacity_error(window, capacities) == Approx(0.25).margin(kTight));
  CHECK(capacity_error(window, Vector::Constant(2, 1.0)) == Approx(0).margin(kTight));
}

TEST_CASE("the change of two windows is the total variation of their shares", "[settling]") {
  Matrix a(1, 2), b(1, 2);
  a << 1, 1;
  b << 3, 1;  // shares (0.75, 0.25) against (0.5, 0.5): 1/2 (0.25 + 0.25)
  CHECK(window_change(a, b) == Approx(0.25).margin(kTight));
  CHECK(window_change(a, 5 * a) == Approx(0).margin(kTight));
}

TEST_CASE("the sampling allowance shrinks as one over the root of the units", "[settling]") {
  const Vector capacities = Vector::Constant(4, 1.0);
  // 1/2 sqrt(2/pi) * 4 * sqrt(0.25 * 0.75 / N), the normal mean absolute deviation.
  const double expected = 0.5 * std::sqrt(2 / M_PI) * 4 * std::sqrt(0.1875 / 10000);
  CHECK(capacity_allowance(capacities, 10000) == Approx(expected).epsilon(1e-12));
  CHECK(capacity_allowance(capacities, 40000) == Approx(expected / 2).epsilon(1e-12));
}

TEST_CASE("a run at T = 1% of the gain range with the default rounds has not settled",
          "[settling]") {
  const TransportProblem problem = low_temperature_problem();
  const RunResult result = run_dynamics(problem, low_temperature_dynamics(500, 100), kSeed, 0);
  INFO(result.settling.brief());
  CHECK_FALSE(result.settling.settled);
  // Capacities are met at the end: the early counted windows and the drift give it away.
  CHECK(result.settling.capacity_error < 0.01);
  CHECK(result.settling.worst_capacity_excess > 0);
  CHECK(result.settling.drift > result.settling.drift_limit);
  CHECK(contains(result.settling.settings_to_change, "burn_in"));
}

TEST_CASE("the same run with enough rounds and burn-in has settled", "[settling]") {
  const TransportProblem problem = low_temperature_problem();
  const RunResult result = run_dynamics(problem, low_temperature_dynamics(3000, 1500), kSeed, 0);
  INFO(result.settling.brief());
  CHECK(result.settling.settled);
  CHECK(result.settling.advice.empty());
  CHECK(result.trace.capacity_errors.size() == 60);
}

TEST_CASE("a run with one window after burn-in cannot be judged", "[settling]") {
  const TransportProblem problem = low_temperature_problem();
  DynamicsOptions d = low_temperature_dynamics(200, 100);
  d.window = 100;
  const RunResult result = run_dynamics(problem, d, kSeed, 0);
  CHECK_FALSE(result.settling.settled);
  CHECK(result.settling.counted_windows == 1);
  CHECK(contains(result.settling.settings_to_change, "window"));
}

TEST_CASE("a mean-field run settles without sampling allowance", "[settling]") {
  const TransportProblem problem = low_temperature_problem();
  DynamicsOptions d = low_temperature_dynamics(400, 200);
  d.temperature = 0.1;
  d.mean_field = true;
  d.price_step = 1;
  const RunResult result = run_dynamics(problem, d, kSeed, 0);
  INFO(result.settling.brief());
  CHECK(result.settling.settled);
  CHECK(result.trace.capacity_allowances.back() == 0);
  CHECK(result.settling.capacity_error < 1e-6);
}
