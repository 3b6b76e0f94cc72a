// Scoring an estimator's answers against a benchmark set's truth
// (`allocsim score`), by condition.
//
// Truth: truth.csv of `allocsim synth` (columns case and true_epsilon
// required; family, source, misspecified, units, agents, partners used when
// present). Answers: a CSV with columns case and epsilon, optionally ci_low
// and ci_high (both or neither). Per row:
//   epsilon  a number >= 0, or inf (no finite temperature explains the
//            allocation), or empty: the case is declined;
//   ci_low, ci_high  both empty (no interval) or ci_low a number >= 0 and
//            ci_high a number >= ci_low or inf.
// A case of the truth without a row counts as unanswered, like a declined
// one. Refused (InputError naming file, line and case): a case the truth
// does not hold, a case twice, a negative or non-numeric estimate,
// ci_low > ci_high, a negative ci_low, half an interval, an interval on a
// declined case.
//
// Per case: relative error (epsilon_hat - epsilon) / epsilon, and whether
// the interval covers the truth (ci_low <= epsilon <= ci_high). Per group:
//   cases, answered, infinite (answers of inf), with_interval, covered;
//   mean_relative_error (bias) and rms_relative_error over the finite
//   answers; median_relative_error and median_abs_relative_error over all
//   answers (inf sorts last); coverage = covered / with_interval; Spearman's
//   rank correlation between truth and estimate over the answers (ties by
//   mean rank). Not-computable values (no answers, no intervals, fewer than
//   3 answers for Spearman, constant truth) are NaN here, null in JSON and
//   never printed as nan.
// Groups: "all"; each family; each source; "model": the cases whose source
// is the entropic model or has it as its mean ("entropic model true") and the
// misspecified ones; temperature bands (quintiles of
// the true epsilon over all cases of the truth: band k holds the cases above
// the (k-1)th and up to the kth quintile); units bands (the same for units).
// Bands that hold no case are left out.
#pragma once

#include <limits>
#include <string>
#include <vector>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/json.hpp"

namespace allocsim {

enum class AnswerKind { answered, declined, missing };
std::string to_string(AnswerKind kind);  // "answered", "declined", "missing"

struct ScoredCase {
  static constexpr double kNone = std::numeric_limits<double>::quiet_NaN();
  std::string name, family = "-", source = "-";
  bool misspecified = false;
  double truth = 0, units = kNone;
  long agents = 0, partners = 0;
  int epsilon_band = 0, units_band = 0;  // 1..5; 0 when units are unknown
  AnswerKind answer = AnswerKind::missing;
  double estimate = kNone, ci_low = kNone, ci_high = kNone, relative_error = kNone;
  bool has_interval = false, covered = false;
};

struct ScoreGroup {
  std::string grouping;  // "all", "family", "source", "model", "epsilon band", "units band"
  std::string group;     // "all", a family, a source, a band ("q1: 0.0101 to 0.0249")
  long cases = 0, answered = 0, infinite = 0, with_interval = 0, covered = 0;
  double mean_relative_error = ScoredCase::kNone, rms_relative_error = ScoredCase::kNone;
  double median_relative_error = ScoredCase::kNone, median_abs_relative_error = ScoredCase::kNone;
  double coverage = ScoredCase::kNone, rank_correlation = ScoredCase::kNone;
};

struct ScoreReport {
  std::vector<ScoredCase> cases;   // in the truth's order
  std::vector<ScoreGroup> groups;  // all, families, sources, epsilon bands, units bands

  // {"all": {...}, "family": {"trait-distance": {...}}, "source": {...}, "model": {...},
  //  "epsilon_band": {...}, "units_band": {...}, "declined": n, "missing": n}
  JsonObject json() const;
  // One table per grouping; "no answers" for a group without answers.
  std::string text() const;
  // One row per case (the columns of the per-case CSV).
  CsvTable per_case_table() const;
  // One row per group.
  CsvTable group_table() const;
};

ScoreReport score_answers(const CsvTable& truth, const CsvTable& answers);

// Writes the scores as a results file without runs: /summary holds one row
// per case (the columns of per_case_table() under the names of
// results/layout.hpp: ci_low and ci_high as epsilon_ci_low and
// epsilon_ci_high; case, family, source and answer as text, the others as
// numbers: misspecified and covered 1/0, NaN where empty, inf for an
// estimate of infinity). `description` goes into the root attribute
// experiment. Appears complete or not at all.
void write_score_file(const std::string& path, const ScoreReport& report,
                      const std::string& description, const std::string& tool_version);

}  // namespace allocsim
