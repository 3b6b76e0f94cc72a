// Where the allocation of a benchmark case comes from: the mechanism that
// spends whole units at a true temperature T (gain units) on a generated
// problem. The truth of a case is T; a source is "misspecified" when the
// entropic coupling at epsilon = T is not the mean allocation it produces,
// so an estimator that assumes the entropic model is tested off its model.
//
//   model        a multinomial sample of `units` from the entropic coupling at
//                epsilon = T (exactly the model the tool's estimator assumes).
//   price        the sandbox's price rule at T (logit choice, congestion
//                prices); its stationary mean is the entropic coupling at T.
//   gumbel       the sandbox's random-utility rule with Gumbel shocks, the
//                same distribution as price (McFadden 1974).
//   queue        the sandbox's queue rule: hard capacities, full partners
//                leave the choice set (misspecified).
//   learn        the sandbox's learning rule: agents learn the gains from
//                rewards with noise sd 2 T (misspecified: the hot-stove
//                effect concentrates the allocation, see sim/rules.hpp).
//   mixed-noise  random utility with normal instead of Gumbel shocks (a
//                probit choice): each unit goes to
//                argmax_j (gains_ij - lambda_j + T * (pi / sqrt(6)) * Z_ij),
//                Z standard normal, scaled so the shocks have the variance
//                of the Gumbel shocks at the same T; congestion prices lambda
//                as in price (misspecified).
//
// The rule sources play 200 burn-in rounds (prices settle, agents learn),
// then record max(1, round(units / u)) rounds of u = max(50, ceil(units / 200))
// units each, so the recorded total is close to `units` (queue may leave
// units unplaced: the truth records the units actually placed).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"

namespace allocsim {

enum class BenchmarkSource { model, price, gumbel, queue, learn, mixed_noise };

// "model", "price", "gumbel", "queue", "learn", "mixed-noise".
std::string to_string(BenchmarkSource source);
// Throws InputError(where, ...) listing the valid words.
BenchmarkSource benchmark_source_from_string(const std::string& text,
                                             const std::string& where = "--source");
std::vector<std::string> benchmark_source_words();
bool is_misspecified(BenchmarkSource source);

// The allocation (whole units, n x m) of case `case_key` drawn at
// temperature T > 0 from `source`; every draw comes from the dynamics stream
// of (seed, case_key). Throws std::runtime_error when the entropic coupling
// of the model source does not converge.
Matrix draw_benchmark_allocation(const TransportProblem& problem, BenchmarkSource source,
                                 double temperature, long units, std::uint64_t seed,
                                 std::uint64_t case_key);

}  // namespace allocsim
