// The price rule, sampled and mean-field (see rules.hpp).
#include <vector>

#include "rule_parts.hpp"

namespace allocsim::detail {
namespace {

// Column sums of a row-major matrix of whole numbers, streamed row by row
// (a column-wise sum strides across rows and reads n*m cache lines). The
// counts are exact in doubles, so the order of the additions is immaterial.
Vector demand_of(const Matrix& flows) {
  Vector demand = Vector::Zero(flows.cols());
  for (Eigen::Index i = 0; i < flows.rows(); ++i) demand += flows.row(i).transpose();
  return demand;
}

class PriceRule : public AllocationRule {
 public:
  PriceRule(const TransportProblem& problem, const DynamicsOptions& options, std::uint64_t seed,
            std::uint64_t run)
      : options_(options),
        seed_(seed),
        run_(run),
        weights_(problem.gains, access_of(problem), options.temperature),
        capacity_(capacity_per_round(problem, options.units)),
        prices_(Vector::Zero(problem.partners())) {}

  void play_round(long round, const std::vector<long>& agent_units, Matrix& flows) override {
    const long n = flows.rows(), m = flows.cols();
    weights_.set_prices(prices_);
    for_row_ranges(n, options_.threads, [&](long begin, long end) {
      std::vector<double> w(static_cast<std::size_t>(m));
      for (long i = begin; i < end; ++i) {
        const double sum = weights_.row(i, w.data());
        RandomStream rng = agent_stream(seed_, run_, round, i);
        flows.row(i).setZero();  // here, while the row is in cache, not in a pass of its own
        add_multinomial(rng, agent_units[static_cast<std::size_t>(i)], w.data(), m, sum,
                        flows.row(i).data());
      }
    });
    update_prices(prices_, demand_of(flows), capacity_, options_.price_step, options_.temperature,
                  0.5);
  }

  const Vector* prices() const override { return &prices_; }

 private:
  DynamicsOptions options_;
  std::uint64_t seed_, run_;
  LogitWeights weights_;
  Vector capacity_;
  Vector prices_;
};

// Expected flows; with price_step = 1 one round is one Sinkhorn step.
class MeanFieldRule : public AllocationRule {
 public:
  MeanFieldRule(const TransportProblem& problem, const DynamicsOptions& options)
      : options_(options),
        weights_(problem.gains, access_of(problem), options.temperature),
        agent_units_(problem.budgets *
                     (static_cast<double>(options.units) / problem.budgets.sum())),
        capacity_(capacity_per_round(problem, options.units)),
        prices_(Vector::Zero(problem.partners())) {}

  void play_round(long, const std::vector<long>&, Matrix& flows) override {
    const long n = flows.rows(), m = flows.cols();
    weights_.set_prices(prices_);
    for_row_ranges(n, options_.threads, [&](long begin, long end) {
      for (long i = begin; i < end; ++i) {
        double* row = flows.row(i).data();
        const double sum = weights_.row(i, row);
        const double scale = agent_units_[i] / sum;
        for (long j = 0; j < m; ++j) row[j] *= scale;
      }
    });
    const Vector demand = flows.colwise().sum().transpose();
    update_prices(prices_, demand, capacity_, options_.price_step, options_.temperature, 1e-300);
  }

  const Vector* prices() const override { return &prices_; }

 private:
  DynamicsOptions options_;
  LogitWeights weights_;
  Vector agent_units_;
  Vector capacity_;
  Vector prices_;
};

}  // namespace

std::unique_ptr<AllocationRule> make_price_rule(const TransportProblem& problem,
                                                const DynamicsOptions& options, std::uint64_t seed,
                                                std::uint64_t run) {
  return std::make_unique<PriceRule>(problem, options, seed, run);
}

std::unique_ptr<AllocationRule> make_mean_field_rule(const TransportProblem& problem,
                                                     const DynamicsOptions& options) {
  return std::make_unique<MeanFieldRule>(problem, options);
}

}  // namespace allocsim::detail
