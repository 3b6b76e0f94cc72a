#include "allocsim/analysis/null_models.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <iostream>
#include <map>
#include <mutex>
#include <random>
#include <string>
#include <vector>

#include "allocsim/analysis/nestedness.hpp"
#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"

using namespace allocsim;
using Catch::Matchers::WithinAbs;

namespace {

// Sample means within this many standard errors of the exact mean.
constexpr double kStandardErrors = 5.0;
// Upper 0.1% points of the chi-square distribution (scipy.stats.chi2.ppf(0.999, df)).
constexpr double kChiSquare999Df2 = 13.815510557964274;
constexpr double kChiSquare999Df11 = 31.264133620239985;

BinaryMatrix read_links(const std::string& name) {
  return read_matrix_csv(std::string(ALLOCSIM_TEST_DATA) + "/" + name).values.cast<std::uint8_t>();
}

BinaryMatrix staircase(int n) {
  BinaryMatrix m = BinaryMatrix::Zero(n, n);
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < n - i; ++j) m(i, j) = 1;
  return m;
}

double chi_square(const std::vector<double>& observed, const std::vector<double>& expected) {
  double sum = 0;
  for (std::size_t k = 0; k < observed.size(); ++k)
    sum += (observed[k] - expected[k]) * (observed[k] - expected[k]) / expected[k];
  return sum;
}

std::string key_of(const BinaryMatrix& m) {
  std::string key;
  for (Eigen::Index i = 0; i < m.rows(); ++i)
    for (Eigen::Index j = 0; j < m.cols(); ++j) key += m(i, j) ? '1' : '0';
  return key;
}

// Every 0/1 matrix with these row and column sums, by brute force.
std::vector<std::string> all_matrices(const std::vector<int>& rows, const std::vector<int>& cols) {
  const int n = static_cast<int>(rows.size()), m = static_cast<int>(cols.size());
  std::vector<std::string> found;
  for (long bits = 0; bits < (1L << (n * m)); ++bits) {
    BinaryMatrix a(n, m);
    for (int c = 0; c < n * m; ++c) a(c / m, c % m) = (bits >> c) & 1;
    bool ok = true;
    for (int i = 0; i < n; ++i) ok = ok && a.row(i).cast<int>().sum() == rows[i];
    for (int j = 0; j < m; ++j) ok = ok && a.col(j).cast<int>().sum() == cols[j];
    if (ok) found.push_back(key_of(a));
  }
  return found;
}

}  // namespace

TEST_CASE("hypergeometric draws have the closed-form mean and variance") {
  // Hypergeometric(N = 50, K = 20, n = 15): mean nK/N = 6,
  // variance n (K/N) (1 - K/N) (N - n)/(N - 1) = 2.5714 (closed form).
  std::mt19937_64 rng(5);
  const int samples = 40000;
  double sum = 0, squares = 0;
  for (int s = 0; s < samples; ++s) {
    const long x = sample_hypergeometric(50, 20, 15, rng);
    REQUIRE(x >= 0);
    REQUIRE(x <= 15);
    sum += x;
    squares += static_cast<double>(x) * x;
  }
  const double mean = sum / samples;
  const double variance = squares / samples - mean * mean;
  const double exact_variance = 15.0 * 0.4 * 0.6 * 35.0 / 49.0;
  CHECK(std::abs(mean - 6.0) < kStandardErrors * std::sqrt(exact_variance / samples));
  CHECK(std::abs(variance - exact_variance) < 0.05 * exact_variance);
  CHECK(sample_hypergeometric(10, 10, 4, rng) == 4);  // every ball a success
  CHECK(sample_hypergeometric(10, 0, 4, rng) == 0);
}

TEST_CASE("Patefield tables keep both margins exactly") {
  std::mt19937_64 rng(17);
  const std::vector<long> rows{12, 0, 7, 30, 1}, cols{20, 5, 0, 25};
  for (int s = 0; s < 300; ++s) {
    const Matrix t = sample_table_with_margins(rows, cols, rng);
    REQUIRE((t.array() >= 0).all());
    for (std::size_t i = 0; i < rows.size(); ++i) REQUIRE(t.row(i).sum() == rows[i]);
    for (std::size_t j = 0; j < cols.size(); ++j) REQUIRE(t.col(j).sum() == cols[j]);
  }
}

TEST_CASE("Patefield cell means approach r_i c_j / N") {
  // Under the multiple hypergeometric distribution each cell is
  // Hypergeometric(N, c_j, r_i): mean r_i c_j / N, variance
  // r_i c_j (N - r_i)(N - c_j) / (N^2 (N - 1)) (closed form).
  std::mt19937_64 rng(23);
  const std::vector<long> rows{9, 4, 15, 2}, cols{6, 10, 3, 11};
  const double total = 30;
  const int samples = 20000;
  Matrix sum = Matrix::Zero(4, 4);
  for (int s = 0; s < samples; ++s) sum += sample_table_with_margins(rows, cols, rng);
  for (int i = 0; i < 4; ++i)
    for (int j = 0; j < 4; ++j) {
      const double r = rows[i], c = cols[j];
      const double mean = r * c / total;
      const double variance = r * c * (total - r) * (total - c) / (total * total * (total - 1));
      INFO("cell " << i << "," << j);
      CHECK(std::abs(sum(i, j) / samples - mean) < kStandardErrors * std::sqrt(variance / samples));
    }
}

TEST_CASE("a 2x2 Patefield table follows the hypergeometric distribution") {
  // Margins (3, 2) and (3, 2): x_11 ~ Hypergeometric(5, 3, 3) with
  // P(1) = 3/10, P(2) = 6/10, P(3) = 1/10 (closed form).
  std::mt19937_64 rng(29);
  const int samples = 20000;
  std::vector<double> counts(3, 0.0);
  for (int s = 0; s < samples; ++s) {
    const Matrix t = sample_table_with_margins({3, 2}, {3, 2}, rng);
    counts[static_cast<std::size_t>(t(0, 0)) - 1] += 1;
  }
  const std::vector<double> expected{0.3 * samples, 0.6 * samples, 0.1 * samples};
  CHECK(chi_square(counts, expected) < kChiSquare999Df2);
}

TEST_CASE("multinomial tables place every unit and their mean approaches r c^T / N") {
  std::mt19937_64 rng(31);
  Vector r(3), c(4);
  r << 0.5, 0.3, 0.2;
  c << 0.1, 0.4, 0.25, 0.25;
  const long units = 200;
  const int samples = 5000;
  Matrix sum = Matrix::Zero(3, 4);
  for (int s = 0; s < samples; ++s) {
    const Matrix t = sample_multinomial_table(r, c, units, rng);
    REQUIRE(t.sum() == units);
    sum += t;
  }
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 4; ++j) {
      const double p = r(i) * c(j);  // sums are 1
      const double sd = std::sqrt(units * p * (1 - p) / samples);
      CHECK(std::abs(sum(i, j) / samples - units * p) < kStandardErrors * sd);
    }
}

TEST_CASE("BiCM expected degrees equal the observed degrees") {
  for (const std::string name :
       {"structure_random_30x40.csv", "structure_nested_25x20.csv", "structure_tall_40x6.csv"}) {
    INFO(name);
    const BinaryMatrix links = read_links(name);
    const BicmFit fit = fit_bicm(links);
    CHECK(fit.status == BicmStatus::converged);
    const Vector expected_rows = fit.probabilities.rowwise().sum();
    const Vector expected_cols = fit.probabilities.colwise().sum().transpose();
    CHECK((expected_rows - row_degrees(links).cast<double>()).cwiseAbs().maxCoeff() < 1e-8);
    CHECK((expected_cols - column_degrees(links).cast<double>()).cwiseAbs().maxCoeff() < 1e-8);
    CHECK((fit.probabilities.array() >= 0).all());
    CHECK((fit.probabilities.array() <= 1).all());
  }
}

TEST_CASE("BiCM fixes full and empty rows and columns before fitting") {
  // Row 0 is full and column 3 empty: their cells are certain. Removing
  // row 0 leaves column 0 full among the other rows, so it is fixed next.
  BinaryMatrix links(4, 4);
  links << 1, 1, 1, 0,  //
      1, 1, 0, 0,       //
      1, 0, 1, 0,       //
      1, 0, 0, 0;
  const BicmFit fit = fit_bicm(links);
  CHECK(fit.status == BicmStatus::converged);
  CHECK(fit.probabilities.row(0).head(3).isOnes());
  CHECK(fit.probabilities.col(3).isZero());
  CHECK(fit.probabilities.col(0).isOnes());
  CHECK(fit.max_degree_error < 1e-10);
}

TEST_CASE("BiCM on a perfectly nested matrix puts all weight on the matrix itself") {
  // A staircase is the only matrix with its degrees: peeling its full row
  // and empty column repeatedly fixes every cell, and p is the staircase.
  const BinaryMatrix nested = staircase(6);
  const BicmFit fit = fit_bicm(nested);
  CHECK(fit.status == BicmStatus::converged);
  CHECK(fit.probabilities == to_matrix(nested));
}

TEST_CASE("BiCM says so when the degrees admit no interior fit") {
  // Rows (3, 3, 1, 1), columns (3, 3, 1, 1): the Gale-Ryser inequality for
  // the two top rows is tight (3 + 3 = min(3,2) + min(3,2) + 1 + 1), so
  // rows 3 and 4 can never link to columns 3 and 4; no p strictly inside
  // (0, 1) reproduces the degrees, and no row or column is full or empty.
  BinaryMatrix links(4, 4);
  links << 1, 1, 1, 0,  //
      1, 1, 0, 1,       //
      1, 0, 0, 0,       //
      0, 1, 0, 0;
  BicmOptions options;
  options.max_iterations = 2000;
  const BicmFit fit = fit_bicm(links, options);
  CHECK(fit.status == BicmStatus::not_converged);
  CHECK(fit.max_degree_error > options.tolerance);
  CHECK(fit.message.find("max degree error") != std::string::npos);
}

TEST_CASE("BiCM sample degrees average to the fitted expectation") {
  const BinaryMatrix links = read_links("structure_random_30x40.csv");
  const BicmFit fit = fit_bicm(links);
  std::mt19937_64 rng(37);
  const int samples = 3000;
  Vector degree_sum = Vector::Zero(links.rows());
  for (int s = 0; s < samples; ++s)
    degree_sum += row_degrees(sample_links(fit.probabilities, rng)).cast<double>();
  const Vector variance =
      (fit.probabilities.array() * (1 - fit.probabilities.array())).rowwise().sum();
  for (Eigen::Index i = 0; i < links.rows(); ++i) {
    INFO("row " << i);
    CHECK(std::abs(degree_sum(i) / samples - row_degrees(links)(i)) <
          kStandardErrors * std::sqrt(variance(i) / samples));
  }
}

TEST_CASE("curveball keeps every row and column sum and moves") {
  const BinaryMatrix start = read_links("structure_random_30x40.csv");
  CurveballChain chain(start, 41);
  BinaryMatrix previous = start;
  int moves = 0;
  for (int s = 0; s < 50; ++s) {
    chain.trade(30);
    const BinaryMatrix now = chain.matrix();
    REQUIRE(row_degrees(now) == row_degrees(start));
    REQUIRE(column_degrees(now) == column_degrees(start));
    moves += now != previous ? 1 : 0;
    previous = now;
  }
  CHECK(moves == 50);
  CHECK(chain.trades_done() == 1500);
}

// The curveball trade written plainly (two rows as column lists, the
// columns only one row links to pooled in row order and shuffled): the
// chain must take exactly these steps, draw for draw.
class PlainCurveball {
 public:
  PlainCurveball(const BinaryMatrix& start, std::uint64_t seed) : rows_(start.rows()), rng_(seed) {
    for (Eigen::Index i = 0; i < start.rows(); ++i)
      for (Eigen::Index j = 0; j < start.cols(); ++j)
        if (start(i, j)) rows_[i].push_back(static_cast<int>(j));
    columns_ = start.cols();
  }
  void trade() {
    const std::size_t n = rows_.size();
    const std::size_t a = std::uniform_int_distribution<std::size_t>(0, n - 1)(rng_);
    std::size_t b = std::uniform_int_distribution<std::size_t>(0, n - 2)(rng_);
    if (b >= a) ++b;
    std::vector<int>&first = rows_[a], &second = rows_[b];
    std::vector<int> shared, only_first, only_second;
    for (int j : second)
      (std::find(first.begin(), first.end(), j) != first.end() ? shared : only_second).push_back(j);
    for (int j : first)
      if (std::find(second.begin(), second.end(), j) == second.end()) only_first.push_back(j);
    if (only_first.empty() || only_second.empty()) return;
    const std::size_t keep = only_first.size();
    only_first.insert(only_first.end(), only_second.begin(), only_second.end());
    std::shuffle(only_first.begin(), only_first.end(), rng_);
    first = shared;
    first.insert(first.end(), only_first.begin(), only_first.begin() + keep);
    second = shared;
    second.insert(second.end(), only_first.begin() + keep, only_first.end());
  }
  BinaryMatrix matrix() const {
    BinaryMatrix m = BinaryMatrix::Zero(static_cast<Eigen::Index>(rows_.size()), columns_);
    for (std::size_t i = 0; i < rows_.size(); ++i)
      for (int j : rows_[i]) m(static_cast<Eigen::Index>(i), j) = 1;
    return m;
  }

 private:
  std::vector<std::vector<int>> rows_;
  Eigen::Index columns_ = 0;
  std::mt19937_64 rng_;
};

TEST_CASE("curveball trades are those of the plain trade, draw for draw") {
  for (const char* name : {"structure_random_30x40.csv", "structure_nested_25x20.csv"}) {
    INFO(name);
    const BinaryMatrix start = read_links(name);
    CurveballChain chain(start, 97);
    PlainCurveball plain(start, 97);
    for (int s = 0; s < 40; ++s) {
      chain.trade(25);
      for (int t = 0; t < 25; ++t) plain.trade();
      REQUIRE(chain.matrix() == plain.matrix());
    }
  }
}

TEST_CASE("curveball on a perfectly nested matrix can only return it") {
  // A staircase is the only matrix with its degrees: exact degree
  // preservation means every trade leaves it unchanged.
  const BinaryMatrix nested = staircase(7);
  CurveballChain chain(nested, 43);
  chain.trade(1000);
  CHECK(chain.matrix() == nested);
}

TEST_CASE("curveball samples are uniform over the matrices with the given sums") {
  // Row sums (2, 2, 1), column sums (2, 1, 1, 1): 12 matrices, enumerated
  // here by brute force; a uniform chain visits each equally often.
  const std::vector<std::string> all = all_matrices({2, 2, 1}, {2, 1, 1, 1});
  REQUIRE(all.size() == 12);
  BinaryMatrix start(3, 4);
  start << 1, 1, 0, 0,  //
      1, 0, 1, 0,       //
      0, 0, 0, 1;
  CurveballChain chain(start, 47);
  std::map<std::string, double> visits;
  const int samples = 24000;
  for (int s = 0; s < samples; ++s) {
    chain.trade(10);
    visits[key_of(chain.matrix())] += 1;
  }
  std::vector<double> observed;
  for (const auto& key : all) observed.push_back(visits[key]);
  CHECK(visits.size() == all.size());  // nothing outside the set
  const std::vector<double> expected(all.size(), samples / 12.0);
  CHECK(chi_square(observed, expected) < kChiSquare999Df11);
}

TEST_CASE("null comparison p-values and z-score follow a known null distribution") {
  // Counts [[3, 0], [0, 2]] under fixed margins: the metric "cell (1,1)" is
  // Hypergeometric(5, 3, 3) with mean 1.8 and sd 0.6 (closed form), and
  // P(X >= 3) = 0.1; the observation sits at z = (3 - 1.8) / 0.6 = 2.
  Matrix observed(2, 2);
  observed << 3, 0, 0, 2;
  NullOptions options;
  options.model = NullModel::fixed_margins;
  options.samples = 4000;
  options.seed = 53;
  const NullComparison result =
      compare_with_null([](const Matrix& m) { return m(0, 0); }, observed, options);
  CHECK(result.status == NullComparisonStatus::compared);
  CHECK(result.observed == 3.0);
  CHECK_THAT(result.null_mean, WithinAbs(1.8, kStandardErrors * 0.6 / std::sqrt(4000.0)));
  CHECK_THAT(result.z_score, WithinAbs(2.0, 0.1));
  const double p_se = std::sqrt(0.1 * 0.9 / 4000);
  CHECK_THAT(result.p_upper, WithinAbs(0.1, kStandardErrors * p_se));
  // Two-sided: |x - 1.8| >= 1.2 only at x = 3.
  CHECK_THAT(result.p_two_sided, WithinAbs(0.1, kStandardErrors * p_se));
  CHECK(result.null_values.size() == 4000);
}

TEST_CASE("null ensembles are reproducible from their seed") {
  const Matrix observed =
      read_matrix_csv(std::string(ALLOCSIM_TEST_DATA) + "/structure_nested_25x20.csv").values;
  const MetricFunction metric = [](const Matrix& m) { return nodf(m.cast<std::uint8_t>()).total; };
  for (NullModel model : {NullModel::fixed_margins, NullModel::bicm, NullModel::curveball}) {
    INFO(to_string(model));
    NullOptions options;
    options.model = model;
    options.samples = 20;
    options.seed = 99;
    const NullComparison first = compare_with_null(metric, observed, options);
    const NullComparison again = compare_with_null(metric, observed, options);
    CHECK(first.null_values == again.null_values);
    options.seed = 100;
    const NullComparison other = compare_with_null(metric, observed, options);
    CHECK(first.null_values != other.null_values);
  }
}

TEST_CASE("a null that cannot move reports zero spread, not a z-score") {
  // Curveball on a staircase returns the staircase every time.
  const Matrix nested = to_matrix(staircase(6));
  NullOptions options;
  options.samples = 10;
  const NullComparison result = compare_with_null(
      [](const Matrix& m) { return nodf(m.cast<std::uint8_t>()).total; }, nested, options);
  CHECK(result.status == NullComparisonStatus::zero_spread);
  CHECK(std::isnan(result.z_score));
  CHECK(result.p_upper == 1.0);
  CHECK(result.null_mean == 100.0);
}

TEST_CASE("fixed-margins on shares keeps the observed total and scale") {
  Matrix shares(2, 3);
  shares << 0.1, 0.2, 0.05, 0.3, 0.25, 0.1;
  NullOptions options;
  options.model = NullModel::fixed_margins;
  options.samples = 5;
  NullSampler sampler(shares, options);
  CHECK(sampler.description().find("multinomial") != std::string::npos);
  for (int s = 0; s < 5; ++s) CHECK_THAT(sampler.next().sum(), WithinAbs(1.0, 1e-12));
}

TEST_CASE("null model words and options are checked") {
  for (NullModel model : {NullModel::fixed_margins, NullModel::bicm, NullModel::curveball})
    CHECK(null_model_from_string(to_string(model)) == model);
  CHECK_THROWS_WITH(null_model_from_string("swap"), Catch::Contains("curveball"));
  for (auto s : {NullComparisonStatus::compared, NullComparisonStatus::zero_spread,
                 NullComparisonStatus::fit_not_converged})
    CHECK(null_comparison_status_from_string(to_string(s)) == s);
  NullOptions options;
  options.samples = 1;
  CHECK_THROWS_WITH(NullSampler(Matrix::Ones(2, 2), options), Catch::Contains("samples"));
  CHECK(holds_counts(Matrix::Ones(2, 2)));
  CHECK_FALSE(holds_counts(Matrix::Constant(2, 2, 0.5)));
}

TEST_CASE("null sampler speed on 100 x 100", "[.][timing]") {
  std::mt19937_64 rng(3);
  Matrix counts(100, 100);
  std::poisson_distribution<int> units(0.8);
  for (Eigen::Index i = 0; i < 100; ++i)
    for (Eigen::Index j = 0; j < 100; ++j) counts(i, j) = units(rng);
  for (NullModel model : {NullModel::fixed_margins, NullModel::bicm, NullModel::curveball}) {
    NullOptions options;
    options.model = model;
    NullSampler sampler(counts, options);
    const int samples = 200;
    const auto start = std::chrono::steady_clock::now();
    double guard = 0;
    for (int s = 0; s < samples; ++s) guard += sampler.next()(0, 0);
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    std::cout << to_string(model) << ": " << samples / seconds << " samples/s ("
              << sampler.description() << ")\n";
    CHECK(guard >= 0);
  }
}

TEST_CASE("null values are the same for 1, 2 and 3 threads, and with several metrics at once") {
  // The samples are drawn in order from the seed whatever the threads do, so
  // every metric value must be bit-identical (not merely close).
  const Matrix observed =
      read_matrix_csv(std::string(ALLOCSIM_TEST_DATA) + "/structure_nested_25x20.csv").values;
  const MetricFunction nodf_metric = [](const Matrix& m) {
    return nodf(m.cast<std::uint8_t>()).total;
  };
  const MetricFunction wnodf_metric = [](const Matrix& m) { return wnodf(m).total; };
  const MetricFunction sample_sum = [](const Matrix& m) {
    double weighted = 0;  // position-weighted: tells samples apart
    for (Eigen::Index k = 0; k < m.size(); ++k) weighted += m.data()[k] * static_cast<double>(k);
    return weighted;
  };
  for (NullModel model : {NullModel::fixed_margins, NullModel::bicm, NullModel::curveball}) {
    INFO(to_string(model));
    NullOptions options;
    options.model = model;
    options.samples = 37;
    options.seed = 5;
    options.threads = 1;
    const NullComparison one = compare_with_null(sample_sum, observed, options);
    std::vector<double> drawn;  // the same samples drawn by hand
    NullSampler sampler(observed, options);
    for (long s = 0; s < options.samples; ++s) drawn.push_back(sample_sum(sampler.next()));
    CHECK(one.null_values == drawn);
    for (int threads : {2, 3}) {
      INFO(threads << " threads");
      options.threads = threads;
      const auto several =
          compare_metrics_with_null({sample_sum, nodf_metric, wnodf_metric}, observed, options);
      REQUIRE(several.size() == 3);
      CHECK(several[0].null_values == one.null_values);
      options.threads = 1;
      CHECK(several[1].null_values ==
            compare_with_null(nodf_metric, observed, options).null_values);
      CHECK(several[2].null_values ==
            compare_with_null(wnodf_metric, observed, options).null_values);
      CHECK(several[1].z_score == compare_with_null(nodf_metric, observed, options).z_score);
    }
  }
}

TEST_CASE("a metric that throws on a null sample stops the ensemble with its error") {
  const Matrix observed =
      read_matrix_csv(std::string(ALLOCSIM_TEST_DATA) + "/structure_nested_25x20.csv").values;
  NullOptions options;
  options.model = NullModel::bicm;
  options.samples = 50;
  options.threads = 2;
  int calls = 0;
  std::mutex guard;
  const MetricFunction failing = [&](const Matrix&) -> double {
    std::lock_guard<std::mutex> lock(guard);
    if (++calls == 10) throw InputError("metric", "failed on purpose");
    return 1.0;
  };
  CHECK_THROWS_WITH(compare_with_null(failing, observed, options), Catch::Contains("on purpose"));
  options.threads = -1;
  CHECK_THROWS_WITH(NullSampler(observed, options), Catch::Contains("threads"));
}
