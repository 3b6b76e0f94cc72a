// Scenarios: how the gains, budgets, capacities and access of a simulated
// market are generated. Every generator is seeded by (seed, run, stream), one
// stream per ingredient, so the same options give the same problem.
//
// Gains (n agents x m partners, "higher is better"), all multiplied by
// gains_scale:
//   rank-product    gains_ij = a_i * b_j, a_i = (i+1)/n, b_j = (j+1)/m: agents and
//                   partners of high rank gain most together (assortative;
//                   supermodular, so the exact optimum pairs ranks in order).
//   trait-distance  gains_ij = -|x_i - y_j|^p, traits x, y ~ Uniform(0,1),
//                   p = gains_exponent: agents prefer partners with a near trait.
//   random          gains_ij ~ Uniform(0,1), independent.
//   features        gains = U V^T / sqrt(k), U (n x k), V (m x k) standard normal,
//                   k = gains_rank: a low-rank model of latent features.
//   file            gains_file, a CSV matrix; must be agents x partners.
// Budgets and capacities (then rescaled to total 1 each, so they balance):
//   uniform         every entry equal.
//   zipf            entry of rank k (from 1) proportional to k^-exponent.
//   lognormal       exp(spread * Z), Z standard normal.
//   file            one value per line (or one row), all > 0.
// Access (which agent may use which partner):
//   full            every pair.
//   threshold       capability a_i and difficulty d_j ~ Uniform(0,1); allowed
//                   when a_i >= d_j. Nested by construction. The most capable
//                   agent gets capability 1; then, hardest partner first, a
//                   difficulty is lowered to the next agent's capability until
//                   the hardest partners' capacities fit within 90% of the
//                   budgets of the agents that reach them (the easiest partner
//                   ends up open to every agent). For a nested mask that is
//                   Gale's supply-demand condition: the problem is feasible.
//   random          each pair allowed with probability access_density; an
//                   agent (partner) left with no pair gets one partner (agent)
//                   drawn uniformly. May be infeasible for unequal masses (no
//                   coupling meets the marginals); the experiment layer warns.
//   file            a 0/1 CSV matrix, agents x partners.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "allocsim/core/matrix.hpp"
#include "allocsim/core/problem.hpp"

namespace allocsim {

enum class GainsKind { rank_product, trait_distance, random, features, file };
enum class MassKind { uniform, zipf, lognormal, file };
enum class AccessKind { full, threshold, random, file };

std::string to_string(GainsKind kind);
std::string to_string(MassKind kind);
std::string to_string(AccessKind kind);
// Throw InputError at `where` (the setting the word came from): "'x' is not
// one of a, b or c".
GainsKind gains_kind_from_string(const std::string& text, const std::string& where = "gains");
MassKind mass_kind_from_string(const std::string& text, const std::string& where = "budgets");
AccessKind access_kind_from_string(const std::string& text, const std::string& where = "access");
// The words of each, in declaration order (for --help and the key table).
std::vector<std::string> gains_kind_words();
std::vector<std::string> mass_kind_words();
std::vector<std::string> access_kind_words();

struct ScenarioOptions {
  long agents = 20;    // n, rows; >= 1
  long partners = 30;  // m, columns; >= 1
  GainsKind gains = GainsKind::trait_distance;
  double gains_scale = 1.0;     // multiplies every generated gain; > 0
  double gains_exponent = 2.0;  // p of trait-distance; > 0
  long gains_rank = 2;          // k of features; >= 1
  std::string gains_file;       // CSV for gains = file
  MassKind budgets = MassKind::uniform;
  double budgets_exponent = 1.0;  // zipf exponent; >= 0
  double budgets_spread = 1.0;    // lognormal sigma; >= 0
  std::string budgets_file;
  MassKind capacities = MassKind::uniform;
  double capacities_exponent = 1.0;
  double capacities_spread = 1.0;
  std::string capacities_file;
  AccessKind access = AccessKind::full;
  double access_density = 0.5;  // random access; in (0, 1]
  std::string access_file;
  std::uint64_t seed = 1;  // experiment seed

  // Throws InputError naming the wrong key (scenario.<field>).
  void validate() const;
};

// The traits the gains of run `run` are made from (the same draws as
// make_scenario): rank-product one trait "rank" (a_i, b_j); trait-distance
// one trait "trait" (x_i, y_j; distance = true); features the k latent
// features "feature 1", ... (U, V). Gains = gains_scale * (sum_c rows(i, c)
// columns(j, c), divided by sqrt(k) for features), or
// -gains_scale |x_i - y_j|^p with distance. Empty (no columns) for random
// and file gains, which come from no traits.
struct ScenarioTraits {
  Matrix rows;                     // agents x traits
  Matrix columns;                  // partners x traits
  std::vector<std::string> names;  // one per trait
  bool distance = false;           // gains from the distance of the traits, not their product
};
ScenarioTraits scenario_traits(const ScenarioOptions& options, std::uint64_t run = 0);

// Builds the problem of run `run`. Budgets and capacities total 1 each.
// Throws InputError for unreadable or mismatched files and for an agent or
// partner without any allowed pair.
TransportProblem make_scenario(const ScenarioOptions& options, std::uint64_t run = 0);

}  // namespace allocsim
