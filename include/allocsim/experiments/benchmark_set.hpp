// Benchmark sets with a known transport temperature (`allocsim synth`),
// written blind: what an estimator may see apart from the truth.
//
// A set holds cases. Each case has a gains family, a source (how its
// allocation is made, benchmark_sources.hpp), a true temperature epsilon
// (gain units), a number of units, a shape (agents x partners) and marginal
// laws for its budgets and capacities (benchmark_draws.hpp). The design:
// families, sources and the listed epsilons (when epsilon is a grid) form
// cells, family varying fastest; case k of the design takes cell k modulo
// the number of cells, so every cell gets cases in turn; numbers written as
// laws are drawn per case. `cases` = 0 means one case per cell and
// replicate. Then a seeded random permutation gives each case its name
// (case-0000, case-0001, ... in the permuted order): the names and their
// order carry nothing of the design.
//
// Files (folder = the set; truth_folder = where truth.csv goes, by default
// the set's folder):
//   README.txt                  every file and column, and the answer format
//   inputs.h5                   a results file, one run group per case
//                               (/runs/<case>/scenario/gains, budgets,
//                               capacities; /runs/<case>/allocation/total;
//                               attributes status, scenario.agents,
//                               scenario.partners, units_after_burn_in):
//                               `allocsim analyze inputs.h5` reads it
//   inputs/<case>/allocation.csv, gains.csv, budgets.csv, capacities.csv
//   truth.csv                   case, family, source, misspecified,
//                               true_epsilon, units, agents, partners,
//                               budgets, capacities (one row per case, in
//                               name order)
// Every random draw comes from (seed, design index k): the same options
// give byte-identical files. Files appear complete or not at all, truth.csv
// last.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "allocsim/experiments/benchmark_draws.hpp"
#include "allocsim/experiments/benchmark_sources.hpp"

namespace allocsim {

struct BenchmarkOptions {
  std::vector<std::string> families = {"trait-distance", "rank-product", "random"};
  std::vector<BenchmarkSource> sources = {BenchmarkSource::model};
  NumberLaw epsilon = parse_number_law("loguniform(0.01, 1)", "--epsilon");  // gain units
  NumberLaw units = parse_number_law("5000", "--units");  // whole units per allocation (rounded)
  ShapeLaw shape;                                         // default 20 x 15
  std::vector<MarginalLaw> budgets = {MarginalLaw{}};     // lognormal(0.5)
  std::vector<MarginalLaw> capacities = {MarginalLaw{}};
  long cases = 0;       // 0: one per design cell and replicate
  long replicates = 4;  // used when cases = 0
  std::uint64_t seed = 1;
  std::string tool_version = "unknown";  // written into inputs.h5

  // Throws InputError naming the option.
  void validate() const;
};

struct BenchmarkCase {
  std::string name;  // "case-0042"
  long design_index = 0;
  std::string family;
  BenchmarkSource source = BenchmarkSource::model;
  double epsilon = 0;
  long units = 0;  // requested; the truth holds the units placed
  long agents = 0, partners = 0;
  MarginalLaw budgets, capacities;
};

// The cases of the set in name order (no allocation drawn).
std::vector<BenchmarkCase> plan_benchmark_set(const BenchmarkOptions& options);

// Writes the set into `folder` (and truth.csv into `truth_folder`; empty:
// `folder`), which must not exist or be empty. Returns the number of cases.
// `progress` (may be null) is called after each case with (done, total).
long write_benchmark_set(const std::string& folder, const std::string& truth_folder,
                         const BenchmarkOptions& options,
                         void (*progress)(long done, long total) = nullptr);

}  // namespace allocsim
