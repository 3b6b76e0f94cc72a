// How the cases of a benchmark set vary (`allocsim synth`): the written
// forms of the numbers, shapes and marginal laws a case takes or draws.
//
// A number (the true epsilon, the units of an allocation) is one of
//   0.1                       one value for every case
//   0.05, 0.1, 0.2            a grid: the cases cycle through the values
//   log(a, b, n)              a grid of n log-spaced values from a to b
//   linear(a, b, n)           a grid of n evenly spaced values
//   loguniform(a, b)          drawn per case: log X ~ Uniform(log a, log b), 0 < a < b
//   uniform(a, b)             drawn per case: X ~ Uniform(a, b), a < b
// A shape is "agents=10..60, partners=10..80": agents and partners drawn per
// case, independently and uniformly among the whole numbers of each range
// (both ends included); "agents=20, partners=15" fixes them.
// A marginal law list is "uniform, zipf(1), lognormal(0.5)": each case
// draws one entry uniformly, for its budgets and (separately) for its
// capacities; the number in brackets is the Zipf exponent (>= 0) or the
// log-normal spread sigma (>= 0); "zipf" alone means zipf(1), "lognormal"
// alone lognormal(0.5).
//
// Errors: InputError(where, ...) quoting the text that cannot be read.
#pragma once

#include <string>
#include <vector>

#include "allocsim/core/random.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim {

struct NumberLaw {
  enum class Kind { grid, uniform, loguniform };
  Kind kind = Kind::grid;
  std::vector<double> values;  // grid: the values in the order given (one value: fixed)
  double low = 0, high = 0;    // uniform and loguniform: the range
  std::string text;            // as written, for messages and the set's description

  bool drawn() const { return kind != Kind::grid; }
  // Grid: values[index % size]; otherwise a draw from `rng` (index unused).
  double value(long index, RandomStream& rng) const;
};

// `positive`: every value (and both ends of a range) must be > 0.
NumberLaw parse_number_law(const std::string& text, const std::string& where, bool positive = true);

struct WholeRange {
  long low = 0, high = 0;  // both included
  long draw(RandomStream& rng) const;
};

struct ShapeLaw {
  WholeRange agents{20, 20}, partners{15, 15};
  std::string text;
  std::string where = "--shape";  // the option it came from, for messages
};

// Each end is a whole number from 2 to 1e9; whether the largest case fits
// in memory is checked by BenchmarkOptions::validate (with the estimate).
ShapeLaw parse_shape_law(const std::string& text, const std::string& where);

struct MarginalLaw {
  MassKind kind = MassKind::lognormal;
  double parameter = 0.5;    // zipf exponent or lognormal sigma; unused for uniform
  std::string text() const;  // "uniform", "zipf(1)", "lognormal(0.5)"
};

// A non-empty list; "file" is refused (a set generates its marginals).
std::vector<MarginalLaw> parse_marginal_laws(const std::string& text, const std::string& where);

}  // namespace allocsim
