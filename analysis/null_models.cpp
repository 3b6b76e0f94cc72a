#include "allocsim/analysis/null_models.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <condition_variable>
#include <exception>
#include <limits>
#include <map>
#include <mutex>
#include <numeric>
#include <sstream>
#include <thread>

#include "allocsim/core/enum_words.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

using Index = Eigen::Index;

double uniform01(std::mt19937_64& rng) {
  return std::uniform_real_distribution<double>(0.0, 1.0)(rng);
}

// log(k!) for k = 0 .. size-1, by cumulative sums of logs.
std::vector<double> log_factorials(long size) {
  std::vector<double> table(static_cast<std::size_t>(std::max(size, 1L)), 0.0);
  for (std::size_t k = 1; k < table.size(); ++k) table[k] = table[k - 1] + std::log(double(k));
  return table;
}

}  // namespace

// sample_table_with_margins with log(k!) for k = 0 .. total given (the
// sampler keeps it: it costs a log per unit of the total).
Matrix patefield_table(const std::vector<long>& row_totals, const std::vector<long>& column_totals,
                       const std::vector<double>& log_factorial, std::mt19937_64& rng);

namespace {

// Inversion sampling of Hypergeometric(population, successes, draws),
// summing probabilities outward from the mode (as AS 159 does); the mode's
// probability comes from `log_factorial` (covering 0 .. population).
long hypergeometric_from_mode(long population, long successes, long draws,
                              const std::vector<double>& log_factorial, std::mt19937_64& rng) {
  const long failures = population - successes;
  const long low = std::max(0L, draws - failures);
  const long high = std::min(draws, successes);
  if (low == high) return low;
  long mode = static_cast<long>(std::floor((draws + 1.0) * (successes + 1.0) / (population + 2.0)));
  mode = std::clamp(mode, low, high);
  auto log_choose = [&](long n, long k) {
    return log_factorial[n] - log_factorial[k] - log_factorial[n - k];
  };
  const double p_mode = std::exp(log_choose(successes, mode) + log_choose(failures, draws - mode) -
                                 log_choose(population, draws));
  double u = uniform01(rng) - p_mode;
  if (u <= 0) return mode;
  long up = mode, down = mode;
  double p_up = p_mode, p_down = p_mode;
  while (up < high || down > low) {
    if (up < high) {
      p_up *= static_cast<double>(successes - up) * static_cast<double>(draws - up) /
              (static_cast<double>(up + 1) * static_cast<double>(failures - draws + up + 1));
      ++up;
      u -= p_up;
      if (u <= 0) return up;
    }
    if (down > low) {
      p_down *= static_cast<double>(down) * static_cast<double>(failures - draws + down) /
                (static_cast<double>(successes - down + 1) * static_cast<double>(draws - down + 1));
      --down;
      u -= p_down;
      if (u <= 0) return down;
    }
  }
  return mode;  // u exceeded the summed mass by rounding only
}

// ---- BiCM on degree classes ----

// Rows (or columns) grouped by degree: value[c] is shared by count[c] members.
struct DegreeClasses {
  std::vector<double> degree;
  std::vector<double> count;
  std::vector<int> class_of;  // per member; -1 = fixed (no links or all links)
};

DegreeClasses group_by_degree(const std::vector<double>& degree, const std::vector<bool>& free) {
  DegreeClasses classes;
  std::map<double, int> index;
  classes.class_of.assign(degree.size(), -1);
  for (std::size_t k = 0; k < degree.size(); ++k) {
    if (!free[k]) continue;
    auto [it, inserted] = index.emplace(degree[k], static_cast<int>(classes.degree.size()));
    if (inserted) {
      classes.degree.push_back(degree[k]);
      classes.count.push_back(0);
    }
    classes.class_of[k] = it->second;
    classes.count[static_cast<std::size_t>(it->second)] += 1;
  }
  return classes;
}

// Expected degree of each class given the values of both sides.
std::vector<double> expected_degrees(const std::vector<double>& own,
                                     const std::vector<double>& other,
                                     const std::vector<double>& other_count) {
  std::vector<double> expected(own.size(), 0.0);
  for (std::size_t a = 0; a < own.size(); ++a)
    for (std::size_t b = 0; b < other.size(); ++b) {
      const double xy = own[a] * other[b];
      expected[a] += other_count[b] * xy / (1.0 + xy);
    }
  return expected;
}

// One fixed-point update of `own` given `other`.
void update_values(std::vector<double>& own, const std::vector<double>& degree,
                   const std::vector<double>& other, const std::vector<double>& other_count) {
  for (std::size_t a = 0; a < own.size(); ++a) {
    double denominator = 0;
    for (std::size_t b = 0; b < other.size(); ++b)
      denominator += other_count[b] * other[b] / (1.0 + own[a] * other[b]);
    own[a] = degree[a] / denominator;
  }
}

double max_error(const std::vector<double>& expected, const std::vector<double>& degree) {
  double error = 0;
  for (std::size_t a = 0; a < expected.size(); ++a)
    error = std::max(error, std::abs(expected[a] - degree[a]));
  return error;
}

// Marks rows and columns whose links are forced: a row with no free link
// left (degree 0) or every free column linked (full). Removing them changes
// the others' residual degrees, so it repeats until nothing changes.
struct ForcedParts {
  std::vector<bool> row_free, column_free;
  std::vector<double> row_residual, column_residual;  // degrees among free members
  std::vector<double> row_fixed_p, column_fixed_p;    // p of a fixed member's links (0 or 1)
  std::vector<long> row_round, column_round;          // round in which a member was fixed

  // p of a cell with at least one fixed member: the member fixed first
  // decides (members fixed in the same round agree).
  double fixed_probability(Index i, Index j) const {
    if (row_free[i]) return column_fixed_p[j];
    if (column_free[j]) return row_fixed_p[i];
    return row_round[i] <= column_round[j] ? row_fixed_p[i] : column_fixed_p[j];
  }
};

ForcedParts remove_forced(const BinaryMatrix& links) {
  const Index n = links.rows(), m = links.cols();
  ForcedParts f;
  f.row_free.assign(n, true);
  f.column_free.assign(m, true);
  f.row_fixed_p.assign(n, 0.0);
  f.column_fixed_p.assign(m, 0.0);
  f.row_round.assign(n, 0);
  f.column_round.assign(m, 0);
  bool changed = true;
  for (long round = 0; changed; ++round) {
    changed = false;
    f.row_residual.assign(n, 0.0);
    f.column_residual.assign(m, 0.0);
    Index free_rows = 0, free_columns = 0;
    for (Index i = 0; i < n; ++i) free_rows += f.row_free[i];
    for (Index j = 0; j < m; ++j) free_columns += f.column_free[j];
    for (Index i = 0; i < n; ++i)
      for (Index j = 0; j < m; ++j)
        if (f.row_free[i] && f.column_free[j] && links(i, j)) {
          f.row_residual[i] += 1;
          f.column_residual[j] += 1;
        }
    for (Index i = 0; i < n; ++i) {
      if (!f.row_free[i]) continue;
      if (f.row_residual[i] == 0 || f.row_residual[i] == free_columns) {
        f.row_free[i] = false;
        f.row_fixed_p[i] = f.row_residual[i] == 0 ? 0.0 : 1.0;
        f.row_round[i] = round;
        changed = true;
      }
    }
    for (Index j = 0; j < m; ++j) {
      if (!f.column_free[j]) continue;
      if (f.column_residual[j] == 0 || f.column_residual[j] == free_rows) {
        f.column_free[j] = false;
        f.column_fixed_p[j] = f.column_residual[j] == 0 ? 0.0 : 1.0;
        f.column_round[j] = round;
        changed = true;
      }
    }
  }
  return f;
}

std::string sampler_description(const NullOptions& options, bool counts, long trades) {
  std::ostringstream out;
  switch (options.model) {
    case NullModel::fixed_margins:
      if (counts)
        out << "fixed-margins (integer tables with the observed row and column totals, "
               "Patefield 1981)";
      else
        out << "fixed-margins (multinomial of " << options.share_units
            << " units from r c^T / N; margins kept in expectation)";
      break;
    case NullModel::bicm:
      out << "bicm (links independent, degrees kept in expectation, Saracco et al. 2015)";
      break;
    case NullModel::curveball:
      out << "curveball (degrees kept exactly, Strona et al. 2014), " << trades
          << " trades between samples";
      break;
  }
  return out.str();
}

}  // namespace

// ---- names ----

constexpr EnumWord<NullModel> kNullModelWords[] = {{NullModel::curveball, "curveball"},
                                                   {NullModel::bicm, "bicm"},
                                                   {NullModel::fixed_margins, "fixed-margins"}};

std::string to_string(NullModel value) { return word_of(value, kNullModelWords); }

NullModel null_model_from_string(const std::string& text) {
  return value_of(text, kNullModelWords, "nulls");
}

std::vector<std::string> null_model_words() { return words_of(kNullModelWords); }

constexpr EnumWord<BicmStatus> kBicmStatusWords[] = {{BicmStatus::converged, "converged"},
                                                     {BicmStatus::not_converged, "not_converged"},
                                                     {BicmStatus::no_links, "no_links"}};

std::string to_string(BicmStatus value) { return word_of(value, kBicmStatusWords); }

BicmStatus bicm_status_from_string(const std::string& text) {
  return value_of(text, kBicmStatusWords, "status");
}

constexpr EnumWord<NullComparisonStatus> kNullComparisonStatusWords[] = {
    {NullComparisonStatus::compared, "compared"},
    {NullComparisonStatus::zero_spread, "zero_spread"},
    {NullComparisonStatus::fit_not_converged, "fit_not_converged"}};

std::string to_string(NullComparisonStatus value) {
  return word_of(value, kNullComparisonStatusWords);
}

NullComparisonStatus null_comparison_status_from_string(const std::string& text) {
  return value_of(text, kNullComparisonStatusWords, "status");
}

// ---- weighted tables ----

bool holds_counts(const Matrix& matrix) {
  return (matrix.array() == matrix.array().round()).all() && (matrix.array() >= 0).all();
}

long sample_hypergeometric(long population, long successes, long draws, std::mt19937_64& rng) {
  assert(population >= 0 && successes >= 0 && draws >= 0);
  assert(successes <= population && draws <= population);
  return hypergeometric_from_mode(population, successes, draws, log_factorials(population + 1),
                                  rng);
}

Matrix sample_table_with_margins(const std::vector<long>& row_totals,
                                 const std::vector<long>& column_totals, std::mt19937_64& rng) {
  return patefield_table(
      row_totals, column_totals,
      log_factorials(std::accumulate(column_totals.begin(), column_totals.end(), 0L) + 1), rng);
}

Matrix patefield_table(const std::vector<long>& row_totals, const std::vector<long>& column_totals,
                       const std::vector<double>& log_factorial, std::mt19937_64& rng) {
  const std::size_t n = row_totals.size(), m = column_totals.size();
  assert(std::accumulate(row_totals.begin(), row_totals.end(), 0L) ==
         std::accumulate(column_totals.begin(), column_totals.end(), 0L));
  Matrix table = Matrix::Zero(static_cast<Index>(n), static_cast<Index>(m));
  if (n == 0 || m == 0) return table;
  std::vector<long> column_left = column_totals;
  for (std::size_t i = 0; i + 1 < n; ++i) {
    long row_left = row_totals[i];
    long pool = std::accumulate(column_left.begin(), column_left.end(), 0L);
    for (std::size_t j = 0; j + 1 < m && row_left > 0; ++j) {
      const long x = hypergeometric_from_mode(pool, column_left[j], row_left, log_factorial, rng);
      table(i, j) = static_cast<double>(x);
      row_left -= x;
      pool -= column_left[j];
      column_left[j] -= x;
    }
    table(i, m - 1) += static_cast<double>(row_left);
    column_left[m - 1] -= row_left;
  }
  for (std::size_t j = 0; j < m; ++j) table(n - 1, j) = static_cast<double>(column_left[j]);
  return table;
}

Matrix sample_multinomial_table(const Vector& row_totals, const Vector& column_totals, long units,
                                std::mt19937_64& rng) {
  const Index n = row_totals.size(), m = column_totals.size();
  const double mass = row_totals.sum() * column_totals.sum();
  Matrix table = Matrix::Zero(n, m);
  long left = units;
  double mass_left = 1.0;
  for (Index i = 0; i < n && left > 0; ++i) {
    for (Index j = 0; j < m && left > 0; ++j) {
      const double p = row_totals(i) * column_totals(j) / mass;
      const double conditional = mass_left > 0 ? std::clamp(p / mass_left, 0.0, 1.0) : 1.0;
      const long x = std::binomial_distribution<long>(left, conditional)(rng);
      table(i, j) = static_cast<double>(x);
      left -= x;
      mass_left -= p;
    }
  }
  if (left > 0) table(n - 1, m - 1) += static_cast<double>(left);  // rounding of mass_left only
  return table;
}

// ---- BiCM ----

void BicmOptions::validate() const {
  if (!(tolerance > 0)) throw InputError("bicm.tolerance", "must be positive");
  if (max_iterations < 1) throw InputError("bicm.max_iterations", "must be at least 1");
}

std::string BicmFit::brief() const {
  std::ostringstream out;
  out << "bicm fit: " << to_string(status) << " after " << iterations
      << " iterations, max degree error " << max_degree_error;
  return out.str();
}

BicmFit fit_bicm(const BinaryMatrix& links, const BicmOptions& options) {
  options.validate();
  const Index n = links.rows(), m = links.cols();
  BicmFit fit;
  const double infinity = std::numeric_limits<double>::infinity();
  const ForcedParts forced = remove_forced(links);
  const DegreeClasses rows = group_by_degree(forced.row_residual, forced.row_free);
  const DegreeClasses columns = group_by_degree(forced.column_residual, forced.column_free);

  double total = 0;
  for (double d : rows.degree) total += d;
  std::vector<double> x(rows.degree.size()), y(columns.degree.size());
  for (std::size_t a = 0; a < x.size(); ++a)
    x[a] = rows.degree[a] / std::sqrt(std::max(total, 1.0));
  for (std::size_t b = 0; b < y.size(); ++b)
    y[b] = columns.degree[b] / std::sqrt(std::max(total, 1.0));

  double error = 0;
  long sweeps = 0;
  if (!x.empty() && !y.empty()) {
    error = infinity;
    while (sweeps < options.max_iterations) {
      update_values(x, rows.degree, y, columns.count);
      update_values(y, columns.degree, x, rows.count);
      ++sweeps;
      error = std::max(max_error(expected_degrees(x, y, columns.count), rows.degree),
                       max_error(expected_degrees(y, x, rows.count), columns.degree));
      if (error <= options.tolerance) break;
    }
  }

  fit.row_values = Vector::Zero(n);
  fit.column_values = Vector::Zero(m);
  for (Index i = 0; i < n; ++i)
    fit.row_values(i) =
        forced.row_free[i] ? x[rows.class_of[i]] : (forced.row_fixed_p[i] > 0 ? infinity : 0.0);
  for (Index j = 0; j < m; ++j)
    fit.column_values(j) = forced.column_free[j] ? y[columns.class_of[j]]
                                                 : (forced.column_fixed_p[j] > 0 ? infinity : 0.0);
  fit.probabilities = Matrix::Zero(n, m);
  for (Index i = 0; i < n; ++i)
    for (Index j = 0; j < m; ++j) {
      if (forced.row_free[i] && forced.column_free[j]) {
        const double xy = fit.row_values(i) * fit.column_values(j);
        fit.probabilities(i, j) = xy / (1.0 + xy);
      } else {
        fit.probabilities(i, j) = forced.fixed_probability(i, j);
      }
    }
  const Vector expected_rows = fit.probabilities.rowwise().sum();
  const Vector expected_columns = fit.probabilities.colwise().sum().transpose();
  const Eigen::VectorXd observed_rows = row_degrees(links).cast<double>();
  const Eigen::VectorXd observed_columns = column_degrees(links).cast<double>();
  fit.max_degree_error = 0;
  if (n > 0) fit.max_degree_error = (expected_rows - observed_rows).cwiseAbs().maxCoeff();
  if (m > 0)
    fit.max_degree_error =
        std::max(fit.max_degree_error, (expected_columns - observed_columns).cwiseAbs().maxCoeff());
  fit.iterations = sweeps;

  std::ostringstream message;
  if (observed_rows.sum() == 0) {
    fit.status = BicmStatus::no_links;
    message << "the matrix has no link; every p is 0";
  } else if (fit.max_degree_error <= options.tolerance) {
    fit.status = BicmStatus::converged;
    message << "expected degrees match to " << fit.max_degree_error;
  } else {
    fit.status = BicmStatus::not_converged;
    message
        << "max degree error " << fit.max_degree_error << " after " << sweeps
        << " sweeps (the degrees may admit no interior solution, e.g. a perfectly nested matrix)";
  }
  fit.message = message.str();
  return fit;
}

BinaryMatrix sample_links(const Matrix& probabilities, std::mt19937_64& rng) {
  BinaryMatrix links(probabilities.rows(), probabilities.cols());
  for (Index i = 0; i < probabilities.rows(); ++i)
    for (Index j = 0; j < probabilities.cols(); ++j)
      links(i, j) = uniform01(rng) < probabilities(i, j) ? 1 : 0;
  return links;
}

// ---- curveball ----

CurveballChain::CurveballChain(const BinaryMatrix& start, std::uint64_t seed)
    : rows_(static_cast<std::size_t>(start.rows())),
      columns_(start.cols()),
      rng_(seed),
      marks_(static_cast<std::size_t>(start.cols()), 0) {
  for (Index i = 0; i < start.rows(); ++i)
    for (Index j = 0; j < start.cols(); ++j)
      if (start(i, j)) rows_[i].push_back(static_cast<int>(j));
}

void CurveballChain::trade(long count) {
  if (rows_.size() < 2) return;
  for (long t = 0; t < count; ++t) trade_once();
}

void CurveballChain::trade_once() {
  const std::size_t n = rows_.size();
  std::uniform_int_distribution<std::size_t> pick(0, n - 1);
  const std::size_t a = pick(rng_);
  std::size_t b = std::uniform_int_distribution<std::size_t>(0, n - 2)(rng_);
  if (b >= a) ++b;
  ++trades_done_;
  std::vector<int>& first = rows_[a];
  std::vector<int>& second = rows_[b];
  for (int j : first) marks_[j] = 1;
  shared_.clear();
  only_second_.clear();
  for (int j : second) (marks_[j] ? shared_ : only_second_).push_back(j);
  for (int j : second) marks_[j] = 0;
  for (int j : shared_) marks_[j] = 2;
  only_first_.clear();
  for (int j : first) {
    if (marks_[j] != 2) only_first_.push_back(j);
    marks_[j] = 0;
  }
  for (int j : shared_) marks_[j] = 0;
  if (only_first_.empty() || only_second_.empty()) return;
  const std::size_t keep = only_first_.size();
  only_first_.insert(only_first_.end(), only_second_.begin(), only_second_.end());
  std::shuffle(only_first_.begin(), only_first_.end(), rng_);
  first = shared_;
  first.insert(first.end(), only_first_.begin(), only_first_.begin() + keep);
  second = shared_;
  second.insert(second.end(), only_first_.begin() + keep, only_first_.end());
}

BinaryMatrix CurveballChain::matrix() const {
  BinaryMatrix links = BinaryMatrix::Zero(static_cast<Index>(rows_.size()), columns_);
  for (std::size_t i = 0; i < rows_.size(); ++i)
    for (int j : rows_[i]) links(static_cast<Index>(i), j) = 1;
  return links;
}

// ---- sampler ----

void NullOptions::validate() const {
  if (samples < 2) throw InputError("samples", "must be at least 2");
  if (curveball_trades < 0) throw InputError("curveball_trades", "must be >= 0 (0 = automatic)");
  if (share_units < 1) throw InputError("share_units", "must be at least 1");
  if (threads < 0) throw InputError("threads", "must be >= 0 (0 = the hardware's)");
  bicm.validate();
}

NullSampler::NullSampler(const Matrix& observed, const NullOptions& options)
    : options_(options), rng_(options.seed) {
  options_.validate();
  for (Index i = 0; i < observed.rows(); ++i)
    for (Index j = 0; j < observed.cols(); ++j)
      if (!std::isfinite(observed(i, j)) || observed(i, j) < 0)
        throw InputError("allocation", "entry at row " + std::to_string(i + 1) + ", column " +
                                           std::to_string(j + 1) +
                                           " must be finite and non-negative");
  switch (options_.model) {
    case NullModel::fixed_margins: {
      reference_ = observed;
      counts_ = holds_counts(observed);
      row_totals_ = observed.rowwise().sum();
      column_totals_ = observed.colwise().sum().transpose();
      if (counts_) {
        for (Index i = 0; i < observed.rows(); ++i)
          row_counts_.push_back(std::lround(row_totals_(i)));
        for (Index j = 0; j < observed.cols(); ++j)
          column_counts_.push_back(std::lround(column_totals_(j)));
        log_factorial_ =
            log_factorials(std::accumulate(column_counts_.begin(), column_counts_.end(), 0L) + 1);
      }
      break;
    }
    case NullModel::bicm: {
      const BinaryMatrix links = binarize(observed);
      reference_ = to_matrix(links);
      bicm_fit_ = fit_bicm(links, options_.bicm);
      break;
    }
    case NullModel::curveball: {
      const BinaryMatrix links = binarize(observed);
      reference_ = to_matrix(links);
      trades_between_ = options_.curveball_trades > 0
                            ? options_.curveball_trades
                            : std::max<long>(100, 5 * static_cast<long>(observed.rows()));
      chain_.emplace(links, options_.seed);
      break;
    }
  }
  description_ = sampler_description(options_, counts_, trades_between_);
}

Matrix NullSampler::next() {
  switch (options_.model) {
    case NullModel::fixed_margins: {
      if (counts_) return patefield_table(row_counts_, column_counts_, log_factorial_, rng_);
      const double total = reference_.sum();
      if (!(total > 0)) return reference_;
      Matrix table =
          sample_multinomial_table(row_totals_, column_totals_, options_.share_units, rng_);
      return table * (total / static_cast<double>(options_.share_units));
    }
    case NullModel::bicm:
      return to_matrix(sample_links(bicm_fit_.probabilities, rng_));
    case NullModel::curveball:
      chain_->trade(trades_between_);
      return to_matrix(chain_->matrix());
  }
  return reference_;
}

// ---- comparison ----

std::string NullComparison::brief() const {
  std::ostringstream out;
  out << to_string(model) << ": observed " << observed << ", null " << null_mean << " +- "
      << null_sd << ", z " << z_score << ", p(upper) " << p_upper << ", p(two-sided) "
      << p_two_sided << " (" << samples << " samples, seed " << seed << ")";
  return out.str();
}

namespace {

int resolve_threads(int threads) {
  if (threads > 0) return threads;
  return static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
}

// The metrics of `count` samples drawn in order from `sampler`:
// values[k][s] = metrics[k](sample s). Any free thread draws the next sample
// when no other is drawing and a slot is free (so the draws stay in order),
// and otherwise evaluates the oldest drawn sample not yet taken. Waiting
// threads block on a condition variable: nothing spins, so a loaded machine
// only slows the threads down, it does not stall them on each other.
class EnsembleEvaluation {
 public:
  EnsembleEvaluation(NullSampler& sampler, const std::vector<MetricFunction>& metrics, long count,
                     int threads)
      : sampler_(sampler),
        metrics_(metrics),
        count_(count),
        slots_(static_cast<std::size_t>(2 * threads + 2)),
        evaluated_(static_cast<std::size_t>(count), 0),
        values_(metrics.size(), std::vector<double>(static_cast<std::size_t>(count))) {}

  std::vector<std::vector<double>> run(int threads) {
    std::vector<std::thread> helpers;
    for (int t = 1; t < threads; ++t) helpers.emplace_back([this] { work(); });
    work();
    for (auto& h : helpers) h.join();
    if (error_) std::rethrow_exception(error_);
    return std::move(values_);
  }

 private:
  void work() {
    std::unique_lock<std::mutex> lock(mutex_);
    while (!error_ && finished_ < count_) {
      if (can_draw()) {
        drawing_ = true;
        const long s = drawn_;
        lock.unlock();
        const bool ok = attempt([&] { slot(s) = sampler_.next(); });
        lock.lock();
        drawing_ = false;
        if (ok) ++drawn_;
        changed_.notify_all();
      } else if (taken_ < drawn_) {
        const long s = taken_++;
        lock.unlock();
        attempt([&] {
          for (std::size_t k = 0; k < metrics_.size(); ++k)
            values_[k][static_cast<std::size_t>(s)] = metrics_[k](slot(s));
        });
        lock.lock();
        evaluated_[static_cast<std::size_t>(s)] = 1;
        ++finished_;
        changed_.notify_all();
      } else {
        changed_.wait(lock);
      }
    }
  }

  // Whether this thread may draw sample drawn_: nobody else draws, and its
  // slot is free (the sample that held it has been evaluated).
  bool can_draw() const {
    const long reuse = drawn_ - static_cast<long>(slots_.size());
    return !drawing_ && drawn_ < count_ &&
           (reuse < 0 || evaluated_[static_cast<std::size_t>(reuse)]);
  }

  Matrix& slot(long sample) { return slots_[static_cast<std::size_t>(sample) % slots_.size()]; }

  // Runs `work`; on an exception records the first one and returns false.
  template <typename Work>
  bool attempt(Work work) {
    try {
      work();
      return true;
    } catch (...) {
      std::lock_guard<std::mutex> guard(mutex_);  // called unlocked
      if (!error_) error_ = std::current_exception();
      return false;
    }
  }

  NullSampler& sampler_;
  const std::vector<MetricFunction>& metrics_;
  const long count_;
  std::vector<Matrix> slots_;
  std::vector<char> evaluated_;
  std::vector<std::vector<double>> values_;
  std::mutex mutex_;
  std::condition_variable changed_;
  long drawn_ = 0, taken_ = 0, finished_ = 0;
  bool drawing_ = false;
  std::exception_ptr error_;
};

std::vector<std::vector<double>> evaluate_ensemble(NullSampler& sampler,
                                                   const std::vector<MetricFunction>& metrics,
                                                   long count, int threads) {
  if (threads <= 1) {
    std::vector<std::vector<double>> values(metrics.size());
    for (auto& v : values) v.reserve(static_cast<std::size_t>(count));
    for (long s = 0; s < count; ++s) {
      const Matrix sample = sampler.next();
      for (std::size_t k = 0; k < metrics.size(); ++k) values[k].push_back(metrics[k](sample));
    }
    return values;
  }
  return EnsembleEvaluation(sampler, metrics, count, threads).run(threads);
}

// The figures of one metric from its observed and null values.
NullComparison summarise(const NullSampler& sampler, const NullOptions& options, double observed,
                         std::vector<double> null_values) {
  NullComparison result;
  result.model = options.model;
  result.model_description = sampler.description();
  result.samples = options.samples;
  result.seed = options.seed;
  result.observed = observed;
  result.null_values = std::move(null_values);

  const double count = static_cast<double>(options.samples);
  const double mean =
      std::accumulate(result.null_values.begin(), result.null_values.end(), 0.0) / count;
  double squares = 0;
  for (double v : result.null_values) squares += (v - mean) * (v - mean);
  result.null_mean = mean;
  result.null_sd = std::sqrt(squares / (count - 1));

  const double slack = 1e-12 * std::max(1.0, std::abs(result.observed));
  const double distance = std::abs(result.observed - mean);
  long upper = 0, extreme = 0;
  for (double v : result.null_values) {
    upper += v >= result.observed - slack ? 1 : 0;
    extreme += std::abs(v - mean) >= distance - slack ? 1 : 0;
  }
  result.p_upper = (1.0 + upper) / (1.0 + count);
  result.p_two_sided = (1.0 + extreme) / (1.0 + count);

  std::ostringstream message;
  if (result.null_sd <= 1e-12 * std::max(1.0, std::abs(mean))) {
    result.status = NullComparisonStatus::zero_spread;
    result.z_score = std::numeric_limits<double>::quiet_NaN();
    message << "every null value equals " << mean << "; the z-score is undefined";
  } else {
    result.z_score = (result.observed - mean) / result.null_sd;
    message << result.model_description;
  }
  if (options.model == NullModel::bicm && sampler.bicm_fit().status == BicmStatus::not_converged) {
    if (result.status == NullComparisonStatus::compared)
      result.status = NullComparisonStatus::fit_not_converged;
    message << "; " << sampler.bicm_fit().message;
  }
  result.message = message.str();
  return result;
}

}  // namespace

std::vector<NullComparison> compare_metrics_with_null(const std::vector<MetricFunction>& metrics,
                                                      const Matrix& observed,
                                                      const NullOptions& options) {
  NullSampler sampler(observed, options);
  std::vector<double> observed_values;
  for (const auto& metric : metrics) observed_values.push_back(metric(sampler.reference()));
  std::vector<std::vector<double>> null_values =
      evaluate_ensemble(sampler, metrics, options.samples, resolve_threads(options.threads));
  std::vector<NullComparison> results;
  for (std::size_t k = 0; k < metrics.size(); ++k)
    results.push_back(summarise(sampler, options, observed_values[k], std::move(null_values[k])));
  return results;
}

NullComparison compare_with_null(const MetricFunction& metric, const Matrix& observed,
                                 const NullOptions& options) {
  return compare_metrics_with_null({metric}, observed, options).front();
}

}  // namespace allocsim
