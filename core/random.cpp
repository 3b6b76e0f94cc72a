#include "allocsim/core/random.hpp"

#include <algorithm>
#include <array>
#include <cassert>
#include <cmath>
#include <numeric>

namespace allocsim {
namespace {

constexpr double kTwoPi = 6.283185307179586476925286766559;

// Multinomials with n <= this times the number of cells use sorted uniforms;
// larger ones conditional binomials (measured crossover at 1000 cells).
constexpr long kSortedUniformFactor = 4;

std::uint64_t rotl(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

std::uint64_t mix(std::uint64_t x) {
  std::uint64_t state = x;
  return splitmix64(state);
}

const std::array<double, 256>& log_factorial_table() {
  static const std::array<double, 256> table = [] {
    std::array<double, 256> t{};
    t[0] = 0;
    for (std::size_t k = 1; k < t.size(); ++k) t[k] = t[k - 1] + std::log(static_cast<double>(k));
    return t;
  }();
  return table;
}

// Sequential-search inversion from 0; for n * p small (no underflow of q^n).
long binomial_from_zero(RandomStream& rng, long n, double p) {
  const double q = 1.0 - p;
  const double ratio = p / q;
  double pk = std::exp(static_cast<double>(n) * std::log1p(-p));
  double u = rng.uniform();
  long k = 0;
  while (u > pk) {
    u -= pk;
    if (k == n) return n;
    ++k;
    pk *= ratio * static_cast<double>(n - k + 1) / static_cast<double>(k);
    if (pk <= 0) return k;  // rounding left a sliver of u in the far tail
  }
  return k;
}

// Inversion over the support ordered mode, mode+1, mode-1, mode+2, ...
long binomial_from_mode(RandomStream& rng, long n, double p) {
  const double q = 1.0 - p;
  const long mode = std::min(n, static_cast<long>(std::floor((n + 1) * p)));
  const double pmode = std::exp(log_factorial(n) - log_factorial(mode) - log_factorial(n - mode) +
                                mode * std::log(p) + (n - mode) * std::log1p(-p));
  double u = rng.uniform() - pmode;
  if (u <= 0) return mode;
  long hi = mode, lo = mode;
  double phi = pmode, plo = pmode;
  const double up = p / q, down = q / p;
  while (true) {
    bool moved = false;
    if (hi < n && phi > 0) {
      phi *= up * static_cast<double>(n - hi) / static_cast<double>(hi + 1);
      ++hi;
      u -= phi;
      if (u <= 0) return hi;
      moved = true;
    }
    if (lo > 0 && plo > 0) {
      plo *= down * static_cast<double>(lo) / static_cast<double>(n - lo + 1);
      --lo;
      u -= plo;
      if (u <= 0) return lo;
      moved = true;
    }
    if (!moved) return mode;  // rounding left a sliver of u beyond both tails
  }
}

}  // namespace

std::uint64_t splitmix64(std::uint64_t& state) {
  std::uint64_t z = (state += 0x9e3779b97f4a7c15ULL);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
  return z ^ (z >> 31);
}

RandomStream::RandomStream(std::uint64_t seed, std::uint64_t run, StreamId stream,
                           std::uint64_t substream) {
  std::uint64_t key = mix(seed);
  key = mix(key ^ mix(run + 0x243f6a8885a308d3ULL));
  key = mix(key ^ mix(static_cast<std::uint64_t>(stream) + 0x13198a2e03707344ULL));
  key = mix(key ^ mix(substream + 0xa4093822299f31d0ULL));
  for (auto& word : s_) word = splitmix64(key);
}

std::uint64_t RandomStream::next() {
  const std::uint64_t result = rotl(s_[1] * 5, 7) * 9;
  const std::uint64_t t = s_[1] << 17;
  s_[2] ^= s_[0];
  s_[3] ^= s_[1];
  s_[1] ^= s_[2];
  s_[0] ^= s_[3];
  s_[2] ^= t;
  s_[3] = rotl(s_[3], 45);
  return result;
}

double RandomStream::uniform() { return static_cast<double>(next() >> 11) * 0x1.0p-53; }

double RandomStream::uniform_open() {
  return (static_cast<double>(next() >> 12) + 0.5) * 0x1.0p-52;
}

std::uint64_t RandomStream::below(std::uint64_t n) {
  assert(n >= 1);
  unsigned __int128 product = static_cast<unsigned __int128>(next()) * n;
  std::uint64_t low = static_cast<std::uint64_t>(product);
  if (low < n) {
    const std::uint64_t threshold = (0 - n) % n;
    while (low < threshold) {
      product = static_cast<unsigned __int128>(next()) * n;
      low = static_cast<std::uint64_t>(product);
    }
  }
  return static_cast<std::uint64_t>(product >> 64);
}

double RandomStream::normal() {
  const double radius = std::sqrt(-2.0 * std::log(uniform_open()));
  return radius * std::cos(kTwoPi * uniform());
}

double RandomStream::gumbel() { return -std::log(-std::log(uniform_open())); }

long RandomStream::binomial(long n, double p) {
  if (n <= 0 || !(p > 0)) return 0;
  if (p >= 1) return n;
  if (p > 0.5) return n - binomial(n, 1.0 - p);
  if (static_cast<double>(n) * p < 30.0) return binomial_from_zero(*this, n, p);
  return binomial_from_mode(*this, n, p);
}

namespace {

// The n units at sorted uniform positions, swept once against the prefix
// sums of the weights. Sorted uniforms come from exponential spacings:
// (S_1, ..., S_n) / S_{n+1} with S_k = E_1 + ... + E_k, E i.i.d. Exp(1), are
// distributed as the order statistics of n uniforms (a standard result, e.g.
// Devroye 1986, ch. V). Cost O(n + size), n logarithms, no branches that
// depend on the data beyond the sweep.
void add_sorted_uniform_draws(RandomStream& rng, long n, const double* weights, long size,
                              double* out) {
  thread_local std::vector<double> spacings;
  spacings.resize(static_cast<std::size_t>(n));
  double running = 0;
  for (long k = 0; k < n; ++k) {
    running -= std::log(rng.uniform_open());
    spacings[static_cast<std::size_t>(k)] = running;
  }
  const double end = running - std::log(rng.uniform_open());  // S_{n+1}
  double total_weight = 0;
  long last = -1;
  for (long j = 0; j < size; ++j) {
    if (weights[j] > 0) {
      total_weight += weights[j];
      last = j;
    }
  }
  const double scale = end / total_weight;
  double prefix = 0;
  long k = 0;
  for (long j = 0; j < last && k < n; ++j) {
    if (!(weights[j] > 0)) continue;
    prefix += weights[j];
    const double bound = prefix * scale;
    const long first = k;
    while (k < n && spacings[static_cast<std::size_t>(k)] < bound) ++k;
    out[j] += static_cast<double>(k - first);
  }
  if (k < n) out[last] += static_cast<double>(n - k);
}

}  // namespace

void add_multinomial(RandomStream& rng, long n, const double* weights, long size, double weight_sum,
                     double* out) {
  if (n <= 0) return;
  if (n <= kSortedUniformFactor * size) {
    add_sorted_uniform_draws(rng, n, weights, size, out);
    return;
  }
  double remaining_weight = weight_sum;
  long last = size - 1;
  while (last >= 0 && weights[last] <= 0) --last;
  for (long j = 0; j <= last && n > 0; ++j) {
    const double w = weights[j];
    if (w <= 0) continue;
    long drawn;
    if (j == last || w >= remaining_weight) {
      drawn = n;
    } else {
      drawn = rng.binomial(n, w / remaining_weight);
    }
    out[j] += static_cast<double>(drawn);
    n -= drawn;
    remaining_weight -= w;
  }
}

double log_factorial(long k) {
  assert(k >= 0);
  const auto& table = log_factorial_table();
  if (k < static_cast<long>(table.size())) return table[static_cast<std::size_t>(k)];
  // Stirling's series for log Gamma(x), x = k + 1.
  const double x = static_cast<double>(k) + 1.0;
  const double inv = 1.0 / x, inv2 = inv * inv;
  return (x - 0.5) * std::log(x) - x + 0.91893853320467274178032973640562 +
         inv * (1.0 / 12 - inv2 * (1.0 / 360 - inv2 * (1.0 / 1260 - inv2 / 1680)));
}

std::vector<long> apportion(long total, const std::vector<double>& shares) {
  const double sum = std::accumulate(shares.begin(), shares.end(), 0.0);
  std::vector<long> parts(shares.size(), 0);
  if (total <= 0 || !(sum > 0)) return parts;
  std::vector<double> remainders(shares.size(), 0.0);
  long given = 0;
  for (std::size_t k = 0; k < shares.size(); ++k) {
    const double exact = static_cast<double>(total) * shares[k] / sum;
    parts[k] = static_cast<long>(std::floor(exact));
    remainders[k] = exact - static_cast<double>(parts[k]);
    given += parts[k];
  }
  std::vector<std::size_t> order(shares.size());
  std::iota(order.begin(), order.end(), 0);
  const long left = std::min<long>(total - given, static_cast<long>(order.size()));
  if (left > 0) {
    std::partial_sort(
        order.begin(), order.begin() + left, order.end(), [&](std::size_t a, std::size_t b) {
          return remainders[a] > remainders[b] || (remainders[a] == remainders[b] && a < b);
        });
    for (long k = 0; k < left; ++k) ++parts[order[static_cast<std::size_t>(k)]];
  }
  return parts;
}

RoundQuota::RoundQuota(long per_round, std::vector<double> shares)
    : per_round_(per_round), shares_(std::move(shares)), handed_out_(shares_.size(), 0) {
  const double sum = std::accumulate(shares_.begin(), shares_.end(), 0.0);
  for (auto& s : shares_) s /= sum;
}

const std::vector<long>& RoundQuota::next_round() {
  ++rounds_;
  std::vector<double> owed(shares_.size());
  const double handed_total = static_cast<double>(per_round_) * static_cast<double>(rounds_);
  for (std::size_t k = 0; k < shares_.size(); ++k) {
    owed[k] = std::max(0.0, handed_total * shares_[k] - static_cast<double>(handed_out_[k]));
  }
  current_ = apportion(per_round_, owed);
  for (std::size_t k = 0; k < shares_.size(); ++k) handed_out_[k] += current_[k];
  return current_;
}

}  // namespace allocsim
