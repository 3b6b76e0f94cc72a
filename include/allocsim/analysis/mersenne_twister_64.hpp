// The 64-bit Mersenne Twister MT19937-64 (Matsumoto & Nishimura 1998;
// Nishimura 2000), with the seeding of std::mt19937_64: for a given seed it
// gives exactly the numbers std::mt19937_64 gives, so the null ensembles
// drawn before keep their values. It adds fill(), which produces a block of
// numbers at once (the state is regenerated 312 words at a time in loops the
// compiler vectorises), and unit(), the number std::uniform_real_distribution
// <double>(0, 1) makes of one output with the GNU library: x / 2^64, or the
// largest double below 1 when that rounds to 1. A UniformRandomBitGenerator,
// so the <random> distributions and std::shuffle take it as they take
// std::mt19937_64, with the same results.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <utility>

namespace allocsim {

class MersenneTwister64 {
 public:
  using result_type = std::uint64_t;
  static constexpr std::size_t kStateWords = 312;

  explicit MersenneTwister64(std::uint64_t seed = 5489u);

  static constexpr result_type min() { return 0; }
  static constexpr result_type max() { return ~result_type(0); }
  result_type operator()() {
    if (next_ == kStateWords) regenerate();
    return temper(state_[next_++]);
  }
  // The next `count` outputs, in order.
  void fill(std::uint64_t* out, std::size_t count);
  // The next `count` outputs as unit() values, in order.
  void fill_unit(double* out, std::size_t count);

  // What std::uniform_int_distribution<std::uint64_t>(0, range - 1) gives
  // with the GNU library (Lemire's multiply-and-reject): range >= 1.
  std::uint64_t below(std::uint64_t range) {
    unsigned __int128 product = static_cast<unsigned __int128>((*this)()) * range;
    std::uint64_t low = static_cast<std::uint64_t>(product);
    if (low < range) {
      const std::uint64_t threshold = -range % range;
      while (low < threshold) {
        product = static_cast<unsigned __int128>((*this)()) * range;
        low = static_cast<std::uint64_t>(product);
      }
    }
    return static_cast<std::uint64_t>(product >> 64);
  }
  // The permutation std::shuffle(first, first + count, *this) makes with
  // the GNU library (two positions per draw), for count < 2^31.
  template <class T>
  void shuffle(T* first, std::size_t count);

  static double unit(std::uint64_t x) {
    const double u = static_cast<double>(x) * 0x1p-64;
    return u < 1.0 ? u : 0x1.fffffffffffffp-1;
  }

 private:
  static std::uint64_t temper(std::uint64_t y) {
    y ^= (y >> 29) & 0x5555555555555555ULL;
    y ^= (y << 17) & 0x71D67FFFEDA60000ULL;
    y ^= (y << 37) & 0xFFF7EEE000000000ULL;
    y ^= y >> 43;
    return y;
  }
  void regenerate();

  std::array<std::uint64_t, kStateWords> state_;
  std::size_t next_ = kStateWords;
};

template <class T>
void MersenneTwister64::shuffle(T* first, std::size_t count) {
  if (count < 2) return;
  std::size_t i = 1;
  if (count % 2 == 0) std::swap(first[i++], first[below(2)]);
  while (i != count) {
    const std::uint64_t range = i + 1;  // positions 0 .. i for element i, 0 .. i + 1 for i + 1
    const std::uint64_t both = below(range * (range + 1));
    // both < 2^62: the quotient and remainder fit the 32-bit division when small.
    std::uint64_t first_position, second_position;
    if (both <= 0xFFFFFFFFULL) {
      const auto x = static_cast<std::uint32_t>(both), r = static_cast<std::uint32_t>(range + 1);
      first_position = x / r;
      second_position = x % r;
    } else {
      first_position = both / (range + 1);
      second_position = both % (range + 1);
    }
    std::swap(first[i++], first[first_position]);
    std::swap(first[i++], first[second_position]);
  }
}

}  // namespace allocsim
