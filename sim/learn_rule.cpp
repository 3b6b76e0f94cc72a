// The learn rule (see rules.hpp): softmax over learned estimates.
#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "rule_parts.hpp"

namespace allocsim::detail {
namespace {

class LearnRule : public AllocationRule {
 public:
  LearnRule(const TransportProblem& problem, const DynamicsOptions& options, std::uint64_t seed,
            std::uint64_t run)
      : problem_(problem),
        options_(options),
        seed_(seed),
        run_(run),
        estimates_(Matrix::Zero(problem.agents(), problem.partners())),
        capacity_(capacity_per_round(problem, options.units)),
        prices_(Vector::Zero(problem.partners())) {}

  void play_round(long round, const std::vector<long>& agent_units, Matrix& flows) override {
    const long n = flows.rows(), m = flows.cols();
    flows.setZero();
    for_row_ranges(n, options_.threads, [&](long begin, long end) {
      std::vector<double> w(static_cast<std::size_t>(m));
      for (long i = begin; i < end; ++i) {
        RandomStream rng = agent_stream(seed_, run_, round, i);
        const double sum = choice_weights(i, w.data());
        add_multinomial(rng, agent_units[static_cast<std::size_t>(i)], w.data(), m, sum,
                        flows.row(i).data());
        learn_from_rewards(i, flows.row(i).data(), rng);
      }
    });
    const Vector demand = flows.colwise().sum().transpose();
    update_prices(prices_, demand, capacity_, options_.price_step, options_.temperature, 0.5);
  }

  const Vector* prices() const override { return &prices_; }

 private:
  double choice_weights(long i, double* out) const {
    const long m = problem_.partners();
    const double* q = estimates_.row(i).data();
    double top = -std::numeric_limits<double>::infinity();
    for (long j = 0; j < m; ++j) {
      if (problem_.allowed(i, j)) top = std::max(top, q[j]);
    }
    double sum = 0;
    for (long j = 0; j < m; ++j) {
      out[j] = problem_.allowed(i, j) ? std::exp((q[j] - top) / options_.temperature) : 0.0;
      sum += out[j];
    }
    return sum;
  }

  // k units sent to j: k sequential updates Q <- Q + a (R - Q) with
  // R = mean + s xi equal in distribution to
  // Q <- d Q + (1 - d) mean + s a sqrt((1 - d^2) / (1 - (1 - a)^2)) xi, d = (1 - a)^k.
  void learn_from_rewards(long i, const double* units, RandomStream& rng) {
    const long m = problem_.partners();
    const double a = options_.learning_step, noise = options_.reward_noise;
    double* q = estimates_.row(i).data();
    for (long j = 0; j < m; ++j) {
      if (units[j] <= 0) continue;
      const double mean_reward = problem_.gains(i, j) - prices_[j];
      const double d = std::pow(1.0 - a, units[j]);
      q[j] = d * q[j] + (1.0 - d) * mean_reward;
      if (noise > 0) {
        const double spread = a * std::sqrt((1.0 - d * d) / (1.0 - (1.0 - a) * (1.0 - a)));
        q[j] += noise * spread * rng.normal();
      }
    }
  }

  const TransportProblem& problem_;
  DynamicsOptions options_;
  std::uint64_t seed_, run_;
  Matrix estimates_;  // Q, n x m
  Vector capacity_;
  Vector prices_;
};

}  // namespace

std::unique_ptr<AllocationRule> make_learn_rule(const TransportProblem& problem,
                                                const DynamicsOptions& options, std::uint64_t seed,
                                                std::uint64_t run) {
  return std::make_unique<LearnRule>(problem, options, seed, run);
}

}  // namespace allocsim::detail
