#include "allocsim/experiments/benchmark_sources.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "allocsim/analysis/entropic_transport.hpp"
#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/sim/engine.hpp"

namespace allocsim {
namespace {

constexpr long kBurnInRounds = 200;
constexpr long kLeastUnitsPerRound = 50;
constexpr long kRecordedRounds = 200;
constexpr double kLearnNoisePerTemperature = 2.0;
constexpr double kPriceStep = 0.5;
const double kGumbelSd = 3.14159265358979323846 / std::sqrt(6.0);

struct RoundPlan {
  long units_per_round = 0, recorded_rounds = 0;
};

RoundPlan round_plan(long units) {
  RoundPlan plan;
  plan.units_per_round =
      std::max(kLeastUnitsPerRound, (units + kRecordedRounds - 1) / kRecordedRounds);
  plan.recorded_rounds = std::max(
      1L, std::lround(static_cast<double>(units) / static_cast<double>(plan.units_per_round)));
  return plan;
}

Matrix model_allocation(const TransportProblem& problem, double temperature, long units,
                        std::uint64_t seed, std::uint64_t case_key) {
  EntropicOptions options;
  options.epsilon = temperature;
  const EntropicResult coupling = solve_entropic(problem, options);
  if (!coupling.converged()) {
    throw std::runtime_error("the entropic coupling at epsilon " + std::to_string(temperature) +
                             " did not converge (" + coupling.message + ")");
  }
  Matrix counts = Matrix::Zero(problem.agents(), problem.partners());
  RandomStream rng(seed, case_key, StreamId::dynamics);
  add_multinomial(rng, units, coupling.coupling.data(), coupling.coupling.size(),
                  coupling.coupling.sum(), counts.data());
  return counts;
}

Matrix rule_allocation(const TransportProblem& problem, RuleKind rule, double temperature,
                       long units, std::uint64_t seed, std::uint64_t case_key) {
  const RoundPlan plan = round_plan(units);
  DynamicsOptions dynamics;
  dynamics.rule = rule;
  dynamics.temperature = temperature;
  dynamics.units = plan.units_per_round;
  dynamics.burn_in = kBurnInRounds;
  dynamics.rounds = kBurnInRounds + plan.recorded_rounds;
  dynamics.window = dynamics.rounds;
  dynamics.price_step = kPriceStep;
  if (rule == RuleKind::learn) dynamics.reward_noise = kLearnNoisePerTemperature * temperature;
  return run_dynamics(problem, dynamics, seed, case_key).total;
}

// Random utility with normal shocks and congestion prices (see the header).
Matrix probit_allocation(const TransportProblem& problem, double temperature, long units,
                         std::uint64_t seed, std::uint64_t case_key) {
  const RoundPlan plan = round_plan(units);
  const long n = problem.agents(), m = problem.partners();
  const double shock_scale = temperature * kGumbelSd;
  const Vector capacity =
      problem.capacities * (static_cast<double>(plan.units_per_round) / problem.capacities.sum());
  RoundQuota quota(plan.units_per_round,
                   std::vector<double>(problem.budgets.data(), problem.budgets.data() + n));
  Vector prices = Vector::Zero(m);
  Matrix total = Matrix::Zero(n, m);
  Matrix flows(n, m);
  for (long round = 1; round <= kBurnInRounds + plan.recorded_rounds; ++round) {
    const std::vector<long>& agent_units = quota.next_round();
    RandomStream rng(seed, case_key, StreamId::dynamics, static_cast<std::uint64_t>(round));
    flows.setZero();
    for (long i = 0; i < n; ++i) {
      for (long u = 0; u < agent_units[static_cast<std::size_t>(i)]; ++u) {
        long best = 0;
        double best_utility = -std::numeric_limits<double>::infinity();
        for (long j = 0; j < m; ++j) {
          const double utility = problem.gains(i, j) - prices[j] + shock_scale * rng.normal();
          if (utility > best_utility) {
            best_utility = utility;
            best = j;
          }
        }
        flows(i, best) += 1.0;
      }
    }
    for (long j = 0; j < m; ++j) {
      const double demand = std::max(flows.col(j).sum(), 0.5);
      prices[j] += kPriceStep * temperature * std::log(demand / capacity[j]);
    }
    if (round > kBurnInRounds) total += flows;
  }
  return total;
}

}  // namespace

constexpr EnumWord<BenchmarkSource> kBenchmarkSourceWords[] = {
    {BenchmarkSource::model, "model"},   {BenchmarkSource::price, "price"},
    {BenchmarkSource::gumbel, "gumbel"}, {BenchmarkSource::queue, "queue"},
    {BenchmarkSource::learn, "learn"},   {BenchmarkSource::mixed_noise, "mixed-noise"}};

std::string to_string(BenchmarkSource value) { return word_of(value, kBenchmarkSourceWords); }

BenchmarkSource benchmark_source_from_string(const std::string& text, const std::string& where) {
  return value_of(text, kBenchmarkSourceWords, where);
}

std::vector<std::string> benchmark_source_words() { return words_of(kBenchmarkSourceWords); }

bool is_misspecified(BenchmarkSource source) {
  return source == BenchmarkSource::queue || source == BenchmarkSource::learn ||
         source == BenchmarkSource::mixed_noise;
}

Matrix draw_benchmark_allocation(const TransportProblem& problem, BenchmarkSource source,
                                 double temperature, long units, std::uint64_t seed,
                                 std::uint64_t case_key) {
  switch (source) {
    case BenchmarkSource::model:
      return model_allocation(problem, temperature, units, seed, case_key);
    case BenchmarkSource::price:
      return rule_allocation(problem, RuleKind::price, temperature, units, seed, case_key);
    case BenchmarkSource::gumbel:
      return rule_allocation(problem, RuleKind::gumbel, temperature, units, seed, case_key);
    case BenchmarkSource::queue:
      return rule_allocation(problem, RuleKind::queue, temperature, units, seed, case_key);
    case BenchmarkSource::learn:
      return rule_allocation(problem, RuleKind::learn, temperature, units, seed, case_key);
    case BenchmarkSource::mixed_noise:
      return probit_allocation(problem, temperature, units, seed, case_key);
  }
  return {};
}

}  // namespace allocsim
