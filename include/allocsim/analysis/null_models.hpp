// Null models that keep an allocation's margins, and the comparison of any
// structure metric against them.
//
// fixed-margins (weighted). When the matrix holds counts (whole numbers),
//   tables with exactly the observed row and column totals, drawn from the
//   distribution of independent units conditioned on both margins (the
//   multiple hypergeometric), by the sequential conditional-hypergeometric
//   construction of Patefield (1981, Applied Statistics 30:91-97, algorithm
//   AS 159): row by row, cell by cell, x_ij ~ Hypergeometric(units left in
//   columns j.., column j's units left, row i's units left), each draw by
//   inversion searching outward from the mode. Cell means are r_i c_j / N.
//   Otherwise (shares), a multinomial table of `share_units` units with cell
//   probabilities r_i c_j / (sum r)^2, rescaled to the observed total: the
//   margins hold in expectation only.
// bicm (binary). The bipartite configuration model (Saracco et al. 2015,
//   Scientific Reports 5:10595): independent links with
//   p_ij = x_i y_j / (1 + x_i y_j), the x and y fitted so that expected
//   degrees equal the observed ones, by the fixed-point iteration
//     x_i = k_i / sum_j y_j / (1 + x_i y_j),  y_j = h_j / sum_i x_i / (1 + x_i y_j)
//   (rows and columns of equal degree share a value, so one iteration costs
//   (distinct row degrees) x (distinct column degrees)). Rows or columns
//   with no links or all links are fixed at p = 0 or 1 first. Degree
//   sequences with no interior solution (e.g. a perfectly nested matrix)
//   leave the fit not converged, with its error reported.
// curveball (binary). Degrees kept exactly (Strona et al. 2014, Nature
//   Communications 5:4114): a trade picks two rows at random and reshuffles
//   the columns that only one of them links to, keeping each row's count.
//   Samples are states of one chain started at the observation and spaced by
//   `curveball_trades` trades (default max(100, 5 n), our choice); the chain
//   is uniform over all matrices with the observed degrees at stationarity
//   (Carstens 2015, Phys. Rev. E 91:042812, from memory).
//
// Randomness: every sampler takes an explicit std::uint64_t seed for a
// std::mt19937_64; the same seed gives the same ensemble (with the same
// standard library, whose distributions are used for binomial draws).
#pragma once

#include <cstdint>
#include <functional>
#include <optional>
#include <random>
#include <string>
#include <vector>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/core/matrix.hpp"

namespace allocsim {

enum class NullModel { fixed_margins, bicm, curveball };
// Words: "curveball", "bicm", "fixed-margins".
std::string to_string(NullModel model);
// Throws InputError("nulls", ...) listing the valid words.
NullModel null_model_from_string(const std::string& text);
std::vector<std::string> null_model_words();

// True when every entry is a whole number (then the matrix is read as counts).
bool holds_counts(const Matrix& matrix);

// A table with exactly these integer margins (Patefield 1981, AS 159); the
// totals must be >= 0 with equal sums (asserted).
Matrix sample_table_with_margins(const std::vector<long>& row_totals,
                                 const std::vector<long>& column_totals, std::mt19937_64& rng);

// `units` units placed independently in cell (i, j) with probability
// r_i c_j / (sum r * sum c); r, c >= 0 with positive sums.
Matrix sample_multinomial_table(const Vector& row_totals, const Vector& column_totals, long units,
                                std::mt19937_64& rng);

// One Hypergeometric(population, successes, draws) variate: the number of
// successes among `draws` taken without replacement.
long sample_hypergeometric(long population, long successes, long draws, std::mt19937_64& rng);

struct BicmOptions {
  double tolerance = 1e-10;      // stop when max |expected - observed degree| <= this; > 0
  long max_iterations = 100000;  // fixed-point sweeps at most; >= 1

  void validate() const;
};

enum class BicmStatus { converged, not_converged, no_links };
// Words: "converged", "not_converged", "no_links".
std::string to_string(BicmStatus status);
BicmStatus bicm_status_from_string(const std::string& text);

struct BicmFit {
  BicmStatus status = BicmStatus::not_converged;
  std::string message;
  Vector row_values;            // x, n (0 for rows without links, +inf for full rows)
  Vector column_values;         // y, m
  Matrix probabilities;         // p_ij, n x m
  double max_degree_error = 0;  // max over rows and columns of |expected - observed degree|
  long iterations = 0;

  std::string brief() const;
};

BicmFit fit_bicm(const BinaryMatrix& links, const BicmOptions& options = {});

// Independent links with the given probabilities.
BinaryMatrix sample_links(const Matrix& probabilities, std::mt19937_64& rng);

// A curveball Markov chain on binary matrices with fixed row and column sums.
class CurveballChain {
 public:
  CurveballChain(const BinaryMatrix& start, std::uint64_t seed);

  // Performs `count` trades, each between two distinct rows drawn uniformly.
  void trade(long count);
  BinaryMatrix matrix() const;
  long trades_done() const { return trades_done_; }

 private:
  void trade_once();

  std::vector<std::vector<int>> rows_;  // the columns each row links to
  Eigen::Index columns_ = 0;
  std::mt19937_64 rng_;
  std::vector<int> marks_;  // scratch, one per column
  std::vector<int> only_first_, only_second_, shared_;
  long trades_done_ = 0;
};

struct NullOptions {
  NullModel model = NullModel::curveball;  // which null model
  long samples = 1000;                     // ensemble size; >= 2
  std::uint64_t seed = 1;                  // seed of every random draw
  long curveball_trades = 0;  // trades between curveball samples; 0 = max(100, 5 * rows); >= 0
  long share_units = 10000;   // units of the multinomial table for a matrix of shares; >= 1
  BicmOptions bicm;           // fit of the BiCM
  int threads = 0;            // threads evaluating metrics on samples; 0 = the hardware's; >= 0.
                              // The values do not depend on it (samples are drawn in order).

  // Throws InputError naming the wrong field.
  void validate() const;
};

// Draws null matrices for one observed matrix. Binary models work on the
// observation binarised by cell > 0 (binarise with another rule first if
// needed); the weighted model keeps the observed values.
class NullSampler {
 public:
  NullSampler(const Matrix& observed, const NullOptions& options);

  // The matrix a metric is evaluated on as the observation: the 0/1 matrix
  // for binary models, the observed matrix itself otherwise.
  const Matrix& reference() const { return reference_; }
  Matrix next();
  // One line, e.g. "curveball (degrees fixed exactly), 500 trades between samples".
  const std::string& description() const { return description_; }
  // Set for bicm: the fit used.
  const BicmFit& bicm_fit() const { return bicm_fit_; }

 private:
  NullOptions options_;
  Matrix reference_;
  std::string description_;
  std::mt19937_64 rng_;
  bool counts_ = false;
  std::vector<long> row_counts_, column_counts_;
  std::vector<double> log_factorial_;  // log(k!) up to the total count
  Vector row_totals_, column_totals_;
  BicmFit bicm_fit_;
  std::optional<CurveballChain> chain_;  // set for curveball
  long trades_between_ = 0;
};

using MetricFunction = std::function<double(const Matrix&)>;

enum class NullComparisonStatus {
  compared,          // z-score and p-values computed
  zero_spread,       // every null value is equal: z-score undefined (NaN), p-values still valid
  fit_not_converged  // bicm fit did not reach its tolerance; values use the fit reached
};
// Words: "compared", "zero_spread", "fit_not_converged".
std::string to_string(NullComparisonStatus status);
NullComparisonStatus null_comparison_status_from_string(const std::string& text);

struct NullComparison {
  NullComparisonStatus status = NullComparisonStatus::compared;
  std::string message;
  NullModel model = NullModel::curveball;
  std::string model_description;
  long samples = 0;
  std::uint64_t seed = 0;
  double observed = 0;  // metric of NullSampler::reference()
  double null_mean = 0;
  double null_sd = 0;               // sample standard deviation (divisor N - 1)
  double z_score = 0;               // (observed - null_mean) / null_sd
  double p_upper = 0;               // (1 + #{null >= observed}) / (1 + N)
  double p_two_sided = 0;           // (1 + #{|null - mean| >= |observed - mean|}) / (1 + N)
  std::vector<double> null_values;  // the N metric values, in sampling order

  std::string brief() const;
};

// Evaluates `metric` on the observation and on `options.samples` null
// matrices. Ties are counted as ">=" within a relative 1e-12, so a metric
// that takes few values (NODF on small matrices) is not biased by rounding.
// The samples are drawn one after another from the seed; with
// options.threads != 1 the metric runs on several samples at once (it must
// be safe to call concurrently), while one thread at a time draws the next
// sample, so the values are the same for any number of threads.
NullComparison compare_with_null(const MetricFunction& metric, const Matrix& observed,
                                 const NullOptions& options);

// The same for several metrics on one ensemble: result k is what
// compare_with_null(metrics[k], observed, options) gives, each sample drawn
// once.
std::vector<NullComparison> compare_metrics_with_null(const std::vector<MetricFunction>& metrics,
                                                      const Matrix& observed,
                                                      const NullOptions& options);

}  // namespace allocsim
