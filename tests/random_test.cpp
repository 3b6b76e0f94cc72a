#include "allocsim/core/random.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <numeric>

using namespace allocsim;

namespace {

constexpr std::uint64_t kSeed = 4242;  // every randomised check below uses it
constexpr long kDraws = 100000;

// Binomial pmf by its closed form C(n,k) p^k (1-p)^(n-k), in logs.
double binomial_pmf(long n, double p, long k) {
  return std::exp(std::lgamma(n + 1.0) - std::lgamma(k + 1.0) - std::lgamma(n - k + 1.0) +
                  k * std::log(p) + (n - k) * std::log1p(-p));
}

// Pearson's statistic of binomial draws in bins [0..low], low+1 .. high-1, [high..n].
double binomial_chi_square(long n, double p, long low, long high, std::uint64_t stream) {
  RandomStream rng(kSeed, 0, StreamId::dynamics, stream);
  std::vector<double> observed(static_cast<std::size_t>(high - low + 1), 0.0);
  auto bin = [&](long k) { return static_cast<std::size_t>(std::clamp(k, low, high) - low); };
  for (long d = 0; d < kDraws; ++d) observed[bin(rng.binomial(n, p))] += 1;
  std::vector<double> expected(observed.size(), 0.0);
  for (long k = 0; k <= n; ++k) expected[bin(k)] += kDraws * binomial_pmf(n, p, k);
  double statistic = 0;
  for (std::size_t b = 0; b < observed.size(); ++b) {
    statistic += (observed[b] - expected[b]) * (observed[b] - expected[b]) / expected[b];
  }
  return statistic;
}

}  // namespace

TEST_CASE("the same key gives the same numbers and different keys differ") {
  RandomStream a(1, 2, StreamId::gains, 3), b(1, 2, StreamId::gains, 3),
      c(1, 2, StreamId::gains, 4);
  for (int k = 0; k < 100; ++k) {
    const auto x = a.next();
    CHECK(x == b.next());
    CHECK(x != c.next());  // a collision has probability 2^-64 per draw
  }
}

TEST_CASE("uniform draws stay in their intervals and have mean one half") {
  RandomStream rng(kSeed, 0, StreamId::dynamics);
  double sum = 0;
  for (long d = 0; d < kDraws; ++d) {
    const double u = rng.uniform(), v = rng.uniform_open();
    REQUIRE(u >= 0.0);
    REQUIRE(u < 1.0);
    REQUIRE(v > 0.0);
    REQUIRE(v < 1.0);
    sum += u;
  }
  // Closed form: the mean of kDraws uniforms has sd sqrt(1/12/kDraws) = 9.1e-4; 5 sd.
  CHECK(std::abs(sum / kDraws - 0.5) < 5 * 9.1e-4);
}

TEST_CASE("below(n) never reaches n") {
  RandomStream rng(kSeed, 0, StreamId::dynamics);
  for (std::uint64_t n : {1ULL, 2ULL, 3ULL, 7ULL, 1000ULL}) {
    for (int d = 0; d < 1000; ++d) REQUIRE(rng.below(n) < n);
  }
}

TEST_CASE("binomial draws follow the binomial pmf (chi-square)", "[statistical]") {
  // Quantiles chi2.ppf(0.999, df) from scipy.stats 1.10: a false alarm has
  // probability 1e-3 per check.
  SECTION("small mean, inversion from zero: n = 50, p = 0.3, 18 bins (df 17)") {
    CHECK(binomial_chi_square(50, 0.3, 7, 24, 1) < 40.79021670690253);
  }
  SECTION("large mean, search from the mode: n = 1000, p = 0.4, 82 bins (df 81)") {
    CHECK(binomial_chi_square(1000, 0.4, 360, 441, 2) < 126.08255833316952);
  }
  SECTION("p above one half is mirrored: n = 1000, p = 0.6, 82 bins (df 81)") {
    CHECK(binomial_chi_square(1000, 0.6, 559, 640, 3) < 126.08255833316952);
  }
}

TEST_CASE("binomial draws of a huge count have the right mean and spread") {
  RandomStream rng(kSeed, 0, StreamId::dynamics, 9);
  const long n = 1000000000;
  const double p = 0.3;
  double sum = 0, sum2 = 0;
  const int draws = 2000;
  for (int d = 0; d < draws; ++d) {
    const double x = static_cast<double>(rng.binomial(n, p));
    sum += x;
    sum2 += x * x;
  }
  const double mean = sum / draws, variance = sum2 / draws - mean * mean;
  // Closed forms: mean n p, variance n p (1 - p) = 2.1e8 (sd of the mean 324).
  CHECK(std::abs(mean - n * p) < 5 * std::sqrt(n * p * (1 - p) / draws));
  CHECK(variance == Approx(n * p * (1 - p)).epsilon(0.15));
}

TEST_CASE("a multinomial places every unit and only on positive weights") {
  RandomStream rng(kSeed, 0, StreamId::dynamics);
  const double weights[] = {0.0, 2.0, 0.0, 1.0, 0.5, 0.0};
  for (long n : {0L, 1L, 7L, 1000L, 123456789L}) {
    double out[6] = {0, 0, 0, 0, 0, 0};
    add_multinomial(rng, n, weights, 6, 3.5, out);
    CHECK(std::accumulate(out, out + 6, 0.0) == static_cast<double>(n));
    CHECK(out[0] == 0);
    CHECK(out[2] == 0);
    CHECK(out[5] == 0);
  }
}

TEST_CASE("multinomial draws follow the weights (chi-square)", "[statistical]") {
  // Summed over D draws, multinomial(n) counts are multinomial(n D), so
  // Pearson's statistic has 5 degrees of freedom; chi2.ppf(0.999, 5) = 20.515
  // from scipy.stats 1.10. n = 1, 4 and 20 use sorted uniforms, n = 50 the
  // conditional binomials.
  const double weights[] = {0.1, 0.2, 0.3, 0.15, 0.05, 0.2};
  for (const long n : {1L, 4L, 20L, 50L}) {
    RandomStream rng(kSeed, 0, StreamId::dynamics, 5 + static_cast<std::uint64_t>(n));
    double counts[6] = {0, 0, 0, 0, 0, 0};
    const long draws = kDraws / n;
    for (long d = 0; d < draws; ++d) add_multinomial(rng, n, weights, 6, 1.0, counts);
    double statistic = 0;
    for (int j = 0; j < 6; ++j) {
      const double expected = static_cast<double>(draws * n) * weights[j];
      statistic += (counts[j] - expected) * (counts[j] - expected) / expected;
    }
    INFO("n = " << n);
    CHECK(statistic < 20.515005652432873);
  }
}

TEST_CASE("log_factorial matches the sum of logs") {
  double exact = 0;
  for (long k = 1; k <= 2000; ++k) {
    exact += std::log(static_cast<double>(k));
    if (k % 97 == 0 || k == 255 || k == 256)
      REQUIRE(log_factorial(k) == Approx(exact).epsilon(1e-13));
  }
}

TEST_CASE("apportion gives whole parts that sum to the total, within 1 of each share") {
  const std::vector<double> shares = {0.5, 0.3, 0.2, 1e-3, 0.0};
  for (long total : {0L, 1L, 2L, 3L, 7L, 1001L}) {
    const auto parts = apportion(total, shares);
    CHECK(std::accumulate(parts.begin(), parts.end(), 0L) == total);
    const double sum = std::accumulate(shares.begin(), shares.end(), 0.0);
    for (std::size_t k = 0; k < shares.size(); ++k) {
      CHECK(std::abs(parts[k] - total * shares[k] / sum) < 1.0);
    }
  }
}

TEST_CASE("round quotas spend every unit each round and stay within 1 of the shares") {
  const std::vector<double> shares = {3.0, 1.0, 1.0, 0.5, 0.25};
  RoundQuota quota(3, shares);  // fewer units per round than holders
  std::vector<long> handed(shares.size(), 0);
  const double sum = std::accumulate(shares.begin(), shares.end(), 0.0);
  for (long round = 1; round <= 500; ++round) {
    const auto& parts = quota.next_round();
    REQUIRE(std::accumulate(parts.begin(), parts.end(), 0L) == 3);
    for (std::size_t k = 0; k < shares.size(); ++k) {
      handed[k] += parts[k];
      REQUIRE(std::abs(handed[k] - 3.0 * round * shares[k] / sum) < 1.0 + 1e-9);
    }
  }
}
