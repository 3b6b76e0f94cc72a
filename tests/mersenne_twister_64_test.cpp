#include "allocsim/analysis/mersenne_twister_64.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <numeric>
#include <random>
#include <vector>

using namespace allocsim;

// The reference is the standard library's std::mt19937_64 (C++11
// [rand.predef]: its 10000th output from the default seed is
// 9981545732273789042), which the samplers used before.
TEST_CASE("MersenneTwister64 gives the numbers of std::mt19937_64") {
  MersenneTwister64 fresh;
  for (int k = 1; k < 10000; ++k) fresh();
  CHECK(fresh() == 9981545732273789042ULL);  // the standard's check value
  for (std::uint64_t seed : {0ULL, 1ULL, 5489ULL, 0x8000000000000007ULL}) {
    INFO("seed " << seed);
    std::mt19937_64 reference(seed);
    MersenneTwister64 ours(seed);
    std::vector<std::uint64_t> block(1000);
    std::vector<double> units(777);
    for (int round = 0; round < 5; ++round) {
      for (int k = 0; k < 101; ++k) REQUIRE(ours() == reference());
      ours.fill(block.data(), block.size());
      for (std::uint64_t x : block) REQUIRE(x == reference());
      ours.fill_unit(units.data(), units.size());
      std::uniform_real_distribution<double> unit(0.0, 1.0);
      for (double u : units) REQUIRE(u == unit(reference));
    }
  }
}

TEST_CASE("MersenneTwister64 shuffles and draws integers as std::mt19937_64 does") {
  std::mt19937_64 reference(42);
  MersenneTwister64 ours(42);
  for (int size : {1, 2, 7, 500, 1001}) {
    std::vector<int> a(static_cast<std::size_t>(size)), b;
    std::iota(a.begin(), a.end(), 0);
    b = a;
    std::shuffle(a.begin(), a.end(), reference);
    std::shuffle(b.begin(), b.end(), ours);
    CHECK(a == b);
    CHECK(std::uniform_int_distribution<long>(0, size)(reference) ==
          std::uniform_int_distribution<long>(0, size)(ours));
  }
}

TEST_CASE("MersenneTwister64::unit maps the largest outputs below 1") {
  CHECK(MersenneTwister64::unit(0) == 0.0);
  CHECK(MersenneTwister64::unit(~std::uint64_t{0}) < 1.0);
  CHECK(MersenneTwister64::unit(std::uint64_t{1} << 63) == 0.5);
}

TEST_CASE("MersenneTwister64's own shuffle and bounded draws equal the standard ones") {
  std::mt19937_64 reference(7);
  MersenneTwister64 ours(7);
  for (int size = 0; size <= 1200; size += (size < 40 ? 1 : 97)) {
    INFO("size " << size);
    std::vector<int> a(static_cast<std::size_t>(size)), b;
    std::iota(a.begin(), a.end(), 0);
    b = a;
    std::shuffle(a.begin(), a.end(), reference);
    ours.shuffle(b.data(), b.size());
    REQUIRE(a == b);
    const std::uint64_t range = static_cast<std::uint64_t>(size) + 1;
    REQUIRE(ours.below(range) ==
            std::uniform_int_distribution<std::uint64_t>(0, range - 1)(reference));
  }
  // Ranges near 2^64, where rejections happen.
  const std::uint64_t huge = (std::uint64_t{1} << 63) + 12345;
  for (int k = 0; k < 200; ++k)
    REQUIRE(ours.below(huge) ==
            std::uniform_int_distribution<std::uint64_t>(0, huge - 1)(reference));
}
