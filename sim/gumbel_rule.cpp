// The gumbel rule (see rules.hpp): one argmax of noisy utilities per unit.
#include <limits>
#include <vector>

#include "rule_parts.hpp"

namespace allocsim::detail {
namespace {

class GumbelRule : public AllocationRule {
 public:
  GumbelRule(const TransportProblem& problem, const DynamicsOptions& options, std::uint64_t seed,
             std::uint64_t run)
      : problem_(problem),
        options_(options),
        seed_(seed),
        run_(run),
        capacity_(capacity_per_round(problem, options.units)),
        prices_(Vector::Zero(problem.partners())) {}

  void play_round(long round, const std::vector<long>& agent_units, Matrix& flows) override {
    const long n = flows.rows();
    flows.setZero();
    for_row_ranges(n, options_.threads, [&](long begin, long end) {
      for (long i = begin; i < end; ++i) {
        RandomStream rng = agent_stream(seed_, run_, round, i);
        for (long u = 0; u < agent_units[static_cast<std::size_t>(i)]; ++u) {
          flows(i, best_partner(i, rng)) += 1.0;
        }
      }
    });
    const Vector demand = flows.colwise().sum().transpose();
    update_prices(prices_, demand, capacity_, options_.price_step, options_.temperature, 0.5);
  }

  const Vector* prices() const override { return &prices_; }

 private:
  long best_partner(long i, RandomStream& rng) const {
    const long m = problem_.partners();
    const double* gains = problem_.gains.row(i).data();
    const double t = options_.temperature;
    long best = -1;
    double best_utility = -std::numeric_limits<double>::infinity();
    for (long j = 0; j < m; ++j) {
      if (!problem_.allowed(i, j)) continue;
      const double utility = gains[j] - prices_[j] + t * rng.gumbel();
      if (utility > best_utility) {
        best_utility = utility;
        best = j;
      }
    }
    return best;
  }

  const TransportProblem& problem_;
  DynamicsOptions options_;
  std::uint64_t seed_, run_;
  Vector capacity_;
  Vector prices_;
};

}  // namespace

std::unique_ptr<AllocationRule> make_gumbel_rule(const TransportProblem& problem,
                                                 const DynamicsOptions& options, std::uint64_t seed,
                                                 std::uint64_t run) {
  return std::make_unique<GumbelRule>(problem, options, seed, run);
}

}  // namespace allocsim::detail
