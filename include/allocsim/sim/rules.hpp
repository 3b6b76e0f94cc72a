// Rules: how agents choose partners and how capacity is enforced, one round
// at a time. Each round every agent spends its budget as whole units (the
// engine hands them out, see engine.hpp); a rule turns them into flows.
//
// T is the choice temperature (gain units). lambda_j is partner j's price.
//   price   each unit of agent i goes to j with probability
//           exp((gains_ij - lambda_j)/T) / sum_k exp((gains_ik - lambda_k)/T)
//           over accessible partners (McFadden's logit), drawn per agent as one
//           multinomial. After the round every partner updates
//             lambda_j <- lambda_j + eta * T * log(D_j / C_j)
//           from its realised demand D_j and its capacity per round
//           C_j = units * c_j / sum(c) (eta = price_step). A partner with no
//           demand counts as D_j = 1/2 unit, which keeps its price finite.
//           Measured (docs/rules-measured.md): fitted epsilon / T within 0.1%
//           of 1 and TV 0.001-0.002 (sampling) at T = 1%, 5% and 20% of the
//           gain range, settled after 50-150 rounds at eta = 0.5.
//   gumbel  each unit goes to argmax_j (gains_ij - lambda_j + T * G_ij) with
//           i.i.d. standard Gumbel G_ij; prices as in price. Same distribution
//           as price (McFadden 1974), a different mechanism and cost.
//   queue   hard capacities, no prices: each round the partners have
//           whole-unit room C_j (largest remainder of units * c_j / sum(c));
//           the round's units arrive in uniformly random order and each picks
//           by softmax(gains_i / T) among the accessible partners that still
//           have room; a full partner leaves every choice set. A unit whose
//           accessible partners are all full stays unplaced (counted).
//           Not an entropic coupling: measured TV 0.30, 0.16, 0.07 (trait-
//           distance gains) and 0.50, 0.37, 0.15 (random gains) from the
//           coupling at epsilon = T at T = 1%, 5% and 20% of the gain range;
//           fitted epsilon / T 6.2-14 at 1% (docs/rules-measured.md).
//   learn   agents do not know the gains. Agent i keeps estimates Q_ij
//           (starting at 0), sends its units by softmax(Q_i / T) as one
//           multinomial, and every unit sent to j earns the reward
//           gains_ij - lambda_j + reward_noise * xi, xi standard normal,
//           where lambda_j is the partner's price (its congestion, updated as
//           in price). Each unit updates Q_ij <- Q_ij + alpha (reward - Q_ij),
//           alpha = learning_step; the k units of a round are applied at once
//           with the exactly equivalent mean and noise.
//           What it converges to depends on whether every partner gets
//           tried. The estimates start at 0: when every gain lies below 0
//           (trait-distance gains) each untried partner looks best and gets
//           tried, and with reward_noise = 0 the allocation settles on the
//           entropic coupling at epsilon = T like price (measured in
//           docs/rules-measured.md: TV 0.002, fitted epsilon / T 0.997-0.999
//           at T = 1%, 5% and 20% of the gain range). When the gains lie
//           above 0 (random gains), a partner never tried keeps the estimate
//           0 and at low T is never chosen: the allocation does NOT settle on
//           the entropic coupling at epsilon = T (measured TV 0.73, fitted
//           epsilon / T 6.5, capacities missed after 4000 rounds at T = 1% of
//           the gain range; TV 0.013 after 2700 rounds to settle at 5%; 0.002
//           at 20%): it agrees at high T only. Reward noise does
//           NOT act as extra choice noise: an estimate that drew a bad reward
//           is rarely chosen and so rarely corrected (the "hot stove" effect,
//           Denrell & March 2001), so the allocation concentrates and leaves
//           the entropic family: the best-fitting epsilon drops below T and
//           the fit worsens as reward_noise / T grows (measured at T = 0.1,
//           alpha = 0.1: reward_noise 0.5 fits epsilon 0.098, 1.0 fits 0.05
//           with total variation 0.8 from the coupling at T).
//   mean_field (price and gumbel) no sampling: the flows are the expected
//           ones, units * r_i / sum(r) * choice probability (for gumbel these
//           are the logit probabilities too, by McFadden's result). With eta = 1
//           one round is exactly one Sinkhorn step on the partner potentials
//           g = -lambda, so the flows / units converge to the entropic coupling
//           at epsilon = T (Sinkhorn 1964; Cuturi 2013).
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"

namespace allocsim {

enum class RuleKind { price, gumbel, queue, learn };
std::string to_string(RuleKind rule);
// Throws InputError at "rule" listing the valid words.
RuleKind rule_kind_from_string(const std::string& text);
// The words of RuleKind, in declaration order.
std::vector<std::string> rule_kind_words();

struct DynamicsOptions {
  RuleKind rule = RuleKind::price;
  double temperature = 0.1;    // T, gain units; > 0
  long rounds = 500;           // rounds to play; >= 1
  long units = 10000;          // units spent per round by all agents together; >= 1
  long burn_in = 100;          // rounds left out of the cumulative allocation; in [0, rounds)
  long window = 50;            // rounds per snapshot; >= 1
  double price_step = 0.5;     // eta of the price update; in [0, 1] (0 = fixed prices)
  bool mean_field = false;     // expected flows, no sampling (price and gumbel only)
  double learning_step = 0.1;  // alpha of learn; in (0, 1]
  double reward_noise = 0.0;   // sigma of learn's rewards, gain units; >= 0
  int threads = 1;             // worker threads; results are identical for any count; >= 1

  // Throws InputError naming the wrong key (dynamics.<field>).
  void validate() const;
};

class AllocationRule {
 public:
  virtual ~AllocationRule() = default;
  // Plays round `round` (counted from 1). agent_units[i] is agent i's whole
  // units this round (sampled rules; the mean-field mode uses the exact
  // shares instead). Writes the round's flows into `flows` (n x m, overwritten).
  virtual void play_round(long round, const std::vector<long>& agent_units, Matrix& flows) = 0;
  // Partner prices after the last round, or nullptr for rules without prices.
  virtual const Vector* prices() const { return nullptr; }
  // Units of the last round that found no partner with room (queue only).
  virtual long unplaced_units() const { return 0; }
};

// The rule of `options` on `problem`; its random draws come from the
// dynamics stream of (seed, run). Throws InputError for options that do not
// fit the rule (e.g. mean_field with queue).
std::unique_ptr<AllocationRule> make_rule(const TransportProblem& problem,
                                          const DynamicsOptions& options, std::uint64_t seed,
                                          std::uint64_t run);

}  // namespace allocsim
