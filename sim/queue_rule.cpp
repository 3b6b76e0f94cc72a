// The queue rule (see rules.hpp): hard capacities, units in random order.
#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <vector>

#include "rule_parts.hpp"

namespace allocsim::detail {
namespace {

class QueueRule : public AllocationRule {
 public:
  QueueRule(const TransportProblem& problem, const DynamicsOptions& options, std::uint64_t seed,
            std::uint64_t run)
      : problem_(problem),
        temperature_(options.temperature),
        seed_(seed),
        run_(run),
        kernel_(problem.agents(), problem.partners()),
        room_quota_(options.units,
                    std::vector<double>(problem.capacities.data(),
                                        problem.capacities.data() + problem.capacities.size())) {
    const LogitWeights weights(problem.gains, access_of(problem), options.temperature);
    for (long i = 0; i < problem.agents(); ++i) weights.row(i, kernel_.row(i).data());
  }

  void play_round(long round, const std::vector<long>& agent_units, Matrix& flows) override {
    const long n = flows.rows();
    flows.setZero();
    std::vector<long> room = room_quota_.next_round();
    Vector open_weight = kernel_.rowwise().sum();
    RandomStream rng = round_stream(seed_, run_, round);
    std::vector<long> arrivals = arrival_order(agent_units, rng);
    unplaced_ = 0;
    for (const long i : arrivals) {
      const long j = pick_open_partner(i, room, open_weight, rng);
      if (j < 0) {
        ++unplaced_;
        continue;
      }
      flows(i, j) += 1.0;
      if (--room[static_cast<std::size_t>(j)] == 0) {
        for (long a = 0; a < n; ++a) open_weight[a] -= kernel_(a, j);
      }
    }
  }

  long unplaced_units() const override { return unplaced_; }

 private:
  // Agent ids, one per unit, in uniformly random order (Fisher-Yates).
  static std::vector<long> arrival_order(const std::vector<long>& agent_units, RandomStream& rng) {
    std::vector<long> order;
    order.reserve(
        static_cast<std::size_t>(std::accumulate(agent_units.begin(), agent_units.end(), 0L)));
    for (std::size_t i = 0; i < agent_units.size(); ++i) {
      order.insert(order.end(), static_cast<std::size_t>(agent_units[i]), static_cast<long>(i));
    }
    for (std::size_t k = order.size(); k > 1; --k) {
      std::swap(order[k - 1], order[static_cast<std::size_t>(rng.below(k))]);
    }
    return order;
  }

  // Softmax draw among open accessible partners; -1 when none is open.
  long pick_open_partner(long i, const std::vector<long>& room, Vector& open_weight,
                         RandomStream& rng) const {
    for (int attempt = 0; attempt < 2; ++attempt) {
      const double* k = kernel_.row(i).data();
      double target = rng.uniform() * open_weight[i];
      long last_open = -1;
      for (long j = 0; j < kernel_.cols(); ++j) {
        if (room[static_cast<std::size_t>(j)] == 0 || k[j] == 0) continue;
        last_open = j;
        target -= k[j];
        if (target < 0) return j;
      }
      if (last_open >= 0 && attempt == 1) return last_open;
      // Rounding drift of the running sum: recompute it exactly and retry once.
      double exact = 0;
      for (long j = 0; j < kernel_.cols(); ++j) {
        if (room[static_cast<std::size_t>(j)] > 0) exact += k[j];
      }
      open_weight[i] = exact;
      if (exact <= 0) return pick_underflowed_partner(i, room, rng);
    }
    return -1;
  }

  // The open accessible partners all have kernel 0 (underflow): softmax among
  // them in the log domain; -1 when none is open.
  long pick_underflowed_partner(long i, const std::vector<long>& room, RandomStream& rng) const {
    const long m = kernel_.cols();
    double top = -std::numeric_limits<double>::infinity();
    for (long j = 0; j < m; ++j) {
      if (room[static_cast<std::size_t>(j)] > 0 && problem_.allowed(i, j)) {
        top = std::max(top, problem_.gains(i, j));
      }
    }
    if (top == -std::numeric_limits<double>::infinity()) return -1;
    std::vector<double> w(static_cast<std::size_t>(m), 0.0);
    double sum = 0;
    for (long j = 0; j < m; ++j) {
      if (room[static_cast<std::size_t>(j)] > 0 && problem_.allowed(i, j)) {
        w[static_cast<std::size_t>(j)] = std::exp((problem_.gains(i, j) - top) / temperature_);
        sum += w[static_cast<std::size_t>(j)];
      }
    }
    double target = rng.uniform() * sum;
    long last = -1;
    for (long j = 0; j < m; ++j) {
      if (w[static_cast<std::size_t>(j)] <= 0) continue;
      last = j;
      target -= w[static_cast<std::size_t>(j)];
      if (target < 0) return j;
    }
    return last;
  }

  const TransportProblem& problem_;
  double temperature_;
  std::uint64_t seed_, run_;
  Matrix kernel_;  // exp((gains_ij - max_k gains_ik) / T), 0 where not accessible
  RoundQuota room_quota_;
  long unplaced_ = 0;
};

}  // namespace

std::unique_ptr<AllocationRule> make_queue_rule(const TransportProblem& problem,
                                                const DynamicsOptions& options, std::uint64_t seed,
                                                std::uint64_t run) {
  return std::make_unique<QueueRule>(problem, options, seed, run);
}

}  // namespace allocsim::detail
