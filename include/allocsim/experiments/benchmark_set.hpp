// Benchmark sets with a known transport temperature, and the scoring of an
// estimator's answers against them (`allocsim synth`, `allocsim score`).
//
// A set holds cases: a generated scenario (gains family, budgets,
// capacities) and an allocation of whole units drawn at a known epsilon,
// either from the entropic model itself (a multinomial sample of `units`
// from the entropic coupling) or from the sandbox's price rule at choice
// temperature T = epsilon. What an estimator may see (the allocation and the
// gains) is written apart from the truth, so a blind test is possible:
//
//   <dir>/inputs/<case>/allocation.csv, gains.csv   one folder per case
//   <dir>/inputs.h5   /cases/<case>/allocation, gains (same content, HDF5)
//   <dir>/truth.csv   case, family, source, true_epsilon, units, agents, partners
//
// Answers are a CSV with columns case, epsilon and optionally ci_low,
// ci_high. Scores: per case the error and whether the interval covers the
// truth; per family and overall the mean relative error (bias), the root
// mean square relative error, the median absolute relative error, the
// interval coverage, and Spearman's rank correlation between truth and
// estimate.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/json.hpp"

namespace allocsim {

struct BenchmarkOptions {
  std::vector<std::string> families = {"trait-distance", "rank-product", "random"};
  std::vector<std::string> epsilons = {"0.02", "0.05", "0.1", "0.2", "0.5"};  // gain units
  long replicates = 4;        // cases per (family, epsilon)
  long agents = 20, partners = 15;
  long units = 5000;          // units in each allocation
  std::string source = "model";  // model | price
  std::uint64_t seed = 1;

  // Throws InputError naming the option.
  void validate() const;
};

// Writes the set into `folder` (which must not exist or be empty); returns
// the number of cases.
long write_benchmark_set(const std::string& folder, const BenchmarkOptions& options);

struct ScoreSummary {
  std::string group;  // a family, or "all"
  long cases = 0, answered = 0, with_interval = 0, covered = 0;
  double mean_relative_error = 0, rms_relative_error = 0, median_abs_relative_error = 0;
  double coverage = 0, rank_correlation = 0;
};

struct ScoreReport {
  CsvTable per_case;                   // one row per case, as written by --out
  std::vector<ScoreSummary> summaries;  // per family, then "all"
  JsonObject json() const;
  std::string text() const;
};

// Scores answers against a set's truth; cases without an answer count as
// unanswered (not as errors).
ScoreReport score_answers(const CsvTable& truth, const CsvTable& answers);

}  // namespace allocsim
