#include "allocsim/analysis/mersenne_twister_64.hpp"

#include <algorithm>

namespace allocsim {
namespace {

constexpr std::size_t kN = MersenneTwister64::kStateWords;
constexpr std::size_t kM = 156;
constexpr std::uint64_t kMatrix = 0xB5026F5AA96619E9ULL;
constexpr std::uint64_t kUpper = 0xFFFFFFFF80000000ULL;  // most significant 33 bits
constexpr std::uint64_t kLower = 0x7FFFFFFFULL;          // least significant 31 bits

inline std::uint64_t twist(std::uint64_t current, std::uint64_t next, std::uint64_t far) {
  const std::uint64_t x = (current & kUpper) | (next & kLower);
  return far ^ (x >> 1) ^ ((x & 1) * kMatrix);
}

}  // namespace

MersenneTwister64::MersenneTwister64(std::uint64_t seed) {
  state_[0] = seed;
  for (std::size_t i = 1; i < kN; ++i)
    state_[i] = 6364136223846793005ULL * (state_[i - 1] ^ (state_[i - 1] >> 62)) + i;
}

void MersenneTwister64::regenerate() {
  std::uint64_t* s = state_.data();
  for (std::size_t i = 0; i < kN - kM; ++i) s[i] = twist(s[i], s[i + 1], s[i + kM]);
  for (std::size_t i = kN - kM; i < kN - 1; ++i) s[i] = twist(s[i], s[i + 1], s[i + kM - kN]);
  s[kN - 1] = twist(s[kN - 1], s[0], s[kM - 1]);
  next_ = 0;
}

void MersenneTwister64::fill(std::uint64_t* out, std::size_t count) {
  while (count > 0) {
    if (next_ == kN) regenerate();
    const std::size_t take = std::min(count, kN - next_);
    const std::uint64_t* s = state_.data() + next_;
    for (std::size_t k = 0; k < take; ++k) out[k] = temper(s[k]);
    next_ += take;
    out += take;
    count -= take;
  }
}

void MersenneTwister64::fill_unit(double* out, std::size_t count) {
  while (count > 0) {
    if (next_ == kN) regenerate();
    const std::size_t take = std::min(count, kN - next_);
    const std::uint64_t* s = state_.data() + next_;
    for (std::size_t k = 0; k < take; ++k) out[k] = unit(temper(s[k]));
    next_ += take;
    out += take;
    count -= take;
  }
}

}  // namespace allocsim
