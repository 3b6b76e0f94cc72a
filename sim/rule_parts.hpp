// Pieces shared by the rules (private to the sim layer).
#pragma once

#include <cstdint>
#include <functional>
#include <memory>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"
#include "allocsim/core/random.hpp"
#include "allocsim/sim/rules.hpp"

namespace allocsim::detail {

// Logit choice weights exp((gains_ij - lambda_j) / T) over accessible cells,
// computed as K_ij * mu_j with the precomputed kernel
// K_ij = exp((gains_ij - max_k gains_ik) / T) (0 where not accessible) and
// mu_j = exp(-(lambda_j - min lambda) / T), both in [0, 1]: no exp per cell
// and round. A row whose weights all underflow (sum < 1e-200) is recomputed
// in the log domain; elsewhere a weight lost to underflow is below 1e-57 of
// its row's total.
class LogitWeights {
 public:
  LogitWeights(const Matrix& gains, const AccessMask* access, double temperature);

  // Sets the prices for the next rows() calls.
  void set_prices(const Vector& prices);
  // Writes the row's weights into out[0..m) and returns their sum (> 0).
  double row(long i, double* out) const;

 private:
  const Matrix& gains_;
  const AccessMask* access_;
  double temperature_;
  Matrix kernel_;
  Vector prices_;
  Vector column_factor_;
};

// lambda_j += step * T * log(max(D_j, demand_floor) / C_j).
void update_prices(Vector& prices, const Vector& demand, const Vector& capacity_per_round,
                   double step, double temperature, double demand_floor);

// units * c / sum(c).
Vector capacity_per_round(const TransportProblem& problem, long units);

// Calls body(begin, end) on disjoint row ranges covering [0, rows), on up to
// `threads` threads. Each row must depend only on itself.
void for_row_ranges(long rows, int threads, const std::function<void(long, long)>& body);

// The random stream of agent i in round `round` (deterministic per pair, so
// the thread count does not matter).
inline RandomStream agent_stream(std::uint64_t seed, std::uint64_t run, long round, long agent) {
  return RandomStream(
      seed, run, StreamId::dynamics,
      (static_cast<std::uint64_t>(round) << 32) ^ static_cast<std::uint64_t>(agent));
}
// The one stream of round `round` for sequential rules.
inline RandomStream round_stream(std::uint64_t seed, std::uint64_t run, long round) {
  return RandomStream(seed, run, StreamId::dynamics,
                      (static_cast<std::uint64_t>(round) << 32) ^ 0xffffffffULL);
}

const AccessMask* access_of(const TransportProblem& problem);

std::unique_ptr<AllocationRule> make_price_rule(const TransportProblem&, const DynamicsOptions&,
                                                std::uint64_t seed, std::uint64_t run);
std::unique_ptr<AllocationRule> make_mean_field_rule(const TransportProblem&,
                                                     const DynamicsOptions&);
std::unique_ptr<AllocationRule> make_gumbel_rule(const TransportProblem&, const DynamicsOptions&,
                                                 std::uint64_t seed, std::uint64_t run);
std::unique_ptr<AllocationRule> make_queue_rule(const TransportProblem&, const DynamicsOptions&,
                                                std::uint64_t seed, std::uint64_t run);
std::unique_ptr<AllocationRule> make_learn_rule(const TransportProblem&, const DynamicsOptions&,
                                                std::uint64_t seed, std::uint64_t run);

}  // namespace allocsim::detail
