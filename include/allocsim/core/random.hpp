// Seeded random streams and the sampling helpers of the simulation.
//
// Every random draw of allocsim comes from a RandomStream keyed by
// (experiment seed, run index, stream, substream). The key is hashed with
// splitmix64 (Steele, Lea & Flood 2014) into the state of a xoshiro256**
// generator (Blackman & Vigna 2018). Streams with different keys are
// statistically independent for practical purposes, so a computation that
// gives each agent and round its own substream produces bit-identical
// results on any number of threads.
//
// All distributions are implemented here rather than taken from <random>,
// whose distributions differ between standard libraries: the same seed must
// give the same numbers everywhere.
#pragma once

#include <cstdint>
#include <vector>

namespace allocsim {

// Named streams, so that changing how one thing is drawn never changes the
// draws of another (e.g. a new budget generator does not move the gains).
enum class StreamId : std::uint64_t {
  gains = 1,
  budgets = 2,
  capacities = 3,
  access = 4,
  dynamics = 5,
  design =
      6,  // benchmark sets: what each case draws (temperature, units, shape, laws) and their order
  trend = 7,  // permutations and bootstrap draws of experiments/trend.hpp
};

// One step of splitmix64: advances `state` and returns the mixed output.
std::uint64_t splitmix64(std::uint64_t& state);

class RandomStream {
 public:
  using result_type = std::uint64_t;

  RandomStream(std::uint64_t seed, std::uint64_t run, StreamId stream, std::uint64_t substream = 0);

  std::uint64_t next();
  result_type operator()() { return next(); }
  static constexpr result_type min() { return 0; }
  static constexpr result_type max() { return ~result_type(0); }

  double uniform();       // [0, 1), 53 random bits
  double uniform_open();  // (0, 1), never exactly 0 or 1
  // Uniform integer in [0, n); n >= 1. Unbiased (Lemire 2019, multiply and reject).
  std::uint64_t below(std::uint64_t n);
  double normal();  // standard normal, Box-Muller
  double gumbel();  // standard Gumbel: -log(-log U)

  // Binomial(n, p) by inversion: sequential search from 0 when n*p is small,
  // search outward from the mode otherwise (expected cost O(1 + sd)).
  // Exact up to floating-point rounding of the probabilities.
  long binomial(long n, double p);

 private:
  std::uint64_t s_[4];
};

// Draws a multinomial(n, weights / weight_sum) sample and ADDS the counts to
// out[0..size). Weights are >= 0 and sum to weight_sum > 0 (up to rounding).
// For n <= 4 size: n sorted uniforms (from exponential spacings) swept once
// against the prefix sums, O(size + n). Otherwise conditional binomials,
// x_j ~ Binomial(n - placed, w_j / remaining weight), which stop as soon as
// all n units are placed; O(size + sum_j sd_j).
void add_multinomial(RandomStream& rng, long n, const double* weights, long size, double weight_sum,
                     double* out);

// log(k!) for k >= 0 (a table up to 255, Stirling's series beyond; relative
// error below 1e-15). Thread-safe, unlike std::lgamma on some platforms.
double log_factorial(long k);

// Splits `total` whole units in proportion to `shares` (>= 0, not all zero)
// by largest remainder (Hamilton's method; ties go to the lower index), so
// the parts sum to `total` exactly and each part is within 1 of its exact
// share.
std::vector<long> apportion(long total, const std::vector<double>& shares);

// Hands out `per_round` units every round in proportion to fixed shares so
// that after t rounds each holder's cumulative units are within 1 of
// t * per_round * share: each round apportions (by largest remainder) the
// difference between the exact cumulative entitlement and what was handed
// out so far. Every round hands out exactly per_round units.
class RoundQuota {
 public:
  RoundQuota(long per_round, std::vector<double> shares);
  // The quota of the next round.
  const std::vector<long>& next_round();

 private:
  long per_round_;
  std::vector<double> shares_;  // normalised to sum 1
  std::vector<long> handed_out_;
  std::vector<long> current_;
  long rounds_ = 0;
};

}  // namespace allocsim
