#include "allocsim/sim/rules.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <thread>
#include <vector>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"
#include "rule_parts.hpp"

namespace allocsim {
namespace {

void require(bool ok, const char* key, const std::string& what) {
  if (!ok) throw InputError(key, what);
}

}  // namespace

constexpr EnumWord<RuleKind> kRuleKindWords[] = {{RuleKind::price, "price"},
                                                 {RuleKind::gumbel, "gumbel"},
                                                 {RuleKind::queue, "queue"},
                                                 {RuleKind::learn, "learn"}};

std::string to_string(RuleKind value) { return word_of(value, kRuleKindWords); }

RuleKind rule_kind_from_string(const std::string& text) {
  return value_of(text, kRuleKindWords, "rule");
}

std::vector<std::string> rule_kind_words() { return words_of(kRuleKindWords); }

void DynamicsOptions::validate() const {
  require(temperature > 0 && std::isfinite(temperature), "temperature",
          "must be a number > 0 (the choice temperature, in gain units)");
  require(rounds >= 1, "rounds", "must be at least 1");
  require(units >= 1, "units", "must be at least 1");
  require(burn_in >= 0 && burn_in < rounds, "burn_in",
          "must be in [0, rounds) so that some rounds are recorded in the total");
  require(window >= 1, "window", "must be at least 1");
  require(price_step >= 0 && price_step <= 1, "price_step", "must be in [0, 1]");
  require(learning_step > 0 && learning_step <= 1, "learning_step", "must be in (0, 1]");
  require(reward_noise >= 0 && std::isfinite(reward_noise), "reward_noise", "must be >= 0");
  require(threads >= 1, "threads", "must be at least 1");
  require(!mean_field || rule == RuleKind::price || rule == RuleKind::gumbel, "mean_field",
          "applies to the price and gumbel rules only");
}

std::unique_ptr<AllocationRule> make_rule(const TransportProblem& problem,
                                          const DynamicsOptions& options, std::uint64_t seed,
                                          std::uint64_t run) {
  options.validate();
  if (options.mean_field) return detail::make_mean_field_rule(problem, options);
  switch (options.rule) {
    case RuleKind::price:
      return detail::make_price_rule(problem, options, seed, run);
    case RuleKind::gumbel:
      return detail::make_gumbel_rule(problem, options, seed, run);
    case RuleKind::queue:
      return detail::make_queue_rule(problem, options, seed, run);
    case RuleKind::learn:
      return detail::make_learn_rule(problem, options, seed, run);
  }
  return nullptr;
}

namespace detail {

const AccessMask* access_of(const TransportProblem& problem) {
  return problem.access ? &*problem.access : nullptr;
}

LogitWeights::LogitWeights(const Matrix& gains, const AccessMask* access, double temperature)
    : gains_(gains), access_(access), temperature_(temperature) {
  const long n = gains.rows(), m = gains.cols();
  kernel_.resize(n, m);
  for (long i = 0; i < n; ++i) {
    double row_max = -std::numeric_limits<double>::infinity();
    for (long j = 0; j < m; ++j) {
      if (!access || (*access)(i, j)) row_max = std::max(row_max, gains(i, j));
    }
    for (long j = 0; j < m; ++j) {
      const bool allowed = !access || (*access)(i, j);
      kernel_(i, j) = allowed ? std::exp((gains(i, j) - row_max) / temperature) : 0.0;
    }
  }
  set_prices(Vector::Zero(m));
}

void LogitWeights::set_prices(const Vector& prices) {
  prices_ = prices;
  const double lowest = prices.minCoeff();
  column_factor_ = (-(prices.array() - lowest) / temperature_).exp().matrix();
}

double LogitWeights::row(long i, double* out) const {
  const long m = kernel_.cols();
  const double* k = kernel_.row(i).data();
  const double* mu = column_factor_.data();
  double sum = 0;
  for (long j = 0; j < m; ++j) {
    out[j] = k[j] * mu[j];
    sum += out[j];
  }
  if (sum >= 1e-200) return sum;
  // Log domain: every weight relative to the row's largest.
  double top = -std::numeric_limits<double>::infinity();
  for (long j = 0; j < m; ++j) {
    if (!access_ || (*access_)(i, j))
      top = std::max(top, (gains_(i, j) - prices_[j]) / temperature_);
  }
  sum = 0;
  for (long j = 0; j < m; ++j) {
    const bool allowed = !access_ || (*access_)(i, j);
    out[j] = allowed ? std::exp((gains_(i, j) - prices_[j]) / temperature_ - top) : 0.0;
    sum += out[j];
  }
  return sum;
}

void update_prices(Vector& prices, const Vector& demand, const Vector& capacity_per_round,
                   double step, double temperature, double demand_floor) {
  if (step == 0) return;
  for (long j = 0; j < prices.size(); ++j) {
    prices[j] +=
        step * temperature * std::log(std::max(demand[j], demand_floor) / capacity_per_round[j]);
  }
}

Vector capacity_per_round(const TransportProblem& problem, long units) {
  return problem.capacities * (static_cast<double>(units) / problem.capacities.sum());
}

void for_row_ranges(long rows, int threads, const std::function<void(long, long)>& body) {
  const long workers = std::max<long>(1, std::min<long>(threads, rows));
  if (workers == 1) {
    body(0, rows);
    return;
  }
  std::vector<std::thread> pool;
  pool.reserve(static_cast<std::size_t>(workers - 1));
  const long chunk = (rows + workers - 1) / workers;
  for (long w = 1; w < workers; ++w) {
    const long begin = std::min(rows, w * chunk), end = std::min(rows, (w + 1) * chunk);
    pool.emplace_back(body, begin, end);
  }
  body(0, std::min(rows, chunk));
  for (auto& t : pool) t.join();
}

}  // namespace detail
}  // namespace allocsim
