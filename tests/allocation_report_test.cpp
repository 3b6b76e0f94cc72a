// The report of one allocation (analysis/allocation_report): its parts
// against closed forms and published values, and its options refused in one
// place.
#include "allocsim/analysis/allocation_report.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "allocsim/core/error.hpp"
#include "test_problems.hpp"

using namespace allocsim;
using namespace allocsim::testing;

namespace {

AllocationInput counts_with_gains(const Matrix& counts, const Matrix& gains) {
  AllocationInput input;
  input.allocation = counts;
  input.gains = gains;
  input.sources = {"counts", "gains", ""};
  return input;
}

std::string place_of_error(const AllocationAnalysisOptions& options) {
  try {
    options.validate();
  } catch (const InputError& e) {
    return e.where();
  }
  return "no error";
}

}  // namespace

TEST_CASE("a 2x2 table's report holds the closed-form temperature and exact optimum") {
  // Saturated log-linear model: 1/epsilon = log(n11 n22 / (n12 n21)) / contrast
  // (the log odds ratio; Agresti, Categorical Data Analysis, ch. 3 - common
  // practice). With a positive contrast the exact optimum fills the diagonal
  // as far as the masses allow (common practice for 2 x 2 transport).
  const Matrix gains = matrix_of({{1.0, 0.2}, {0.1, 0.7}});
  const Matrix counts = matrix_of({{420, 95}, {130, 355}});
  const AllocationReport report = analyze_allocation(counts_with_gains(counts, gains), {});
  const double contrast = 1.0 + 0.7 - 0.2 - 0.1;
  const double log_odds = std::log(420.0 * 355.0 / (95.0 * 130.0));
  REQUIRE(report.temperature.estimated());
  CHECK(report.temperature.epsilon == Approx(contrast / log_odds).epsilon(1e-9));

  REQUIRE(report.exact.optimal());
  const Vector& r = report.observed.problem.budgets;
  const Vector& c = report.observed.problem.capacities;
  const double x11 = std::min(r(0), c(0));
  const Matrix expected = matrix_of({{x11, r(0) - x11}, {c(0) - x11, r(1) - (c(0) - x11)}});
  CHECK((report.exact.coupling - expected).cwiseAbs().maxCoeff() < 1e-12 * r.sum());
  // Total variation between the shares and the exact optimum (its definition).
  const double tv = 0.5 * (counts / counts.sum() - expected / expected.sum()).cwiseAbs().sum();
  CHECK(report.versus_exact.total_variation == Approx(tv).epsilon(1e-12));
  CHECK(report.has_entropic);
}

TEST_CASE("without gains the report has structure but no temperature") {
  // Almeida-Neto et al. 2008 worked NODF example (values from memory, see
  // nestedness_test): NODF 175/3, connectance 14/25.
  AllocationInput input;
  input.allocation = matrix_of(
      {{1, 0, 1, 1, 1}, {1, 1, 1, 0, 0}, {0, 1, 1, 1, 0}, {1, 1, 0, 0, 0}, {1, 1, 0, 0, 0}});
  input.sources = {"links", "", ""};
  const AllocationReport report = analyze_allocation(input, {});
  CHECK(report.temperature.status == TemperatureStatus::no_gains);
  CHECK_FALSE(report.exact.optimal());
  CHECK_FALSE(report.has_entropic);
  CHECK(report.structure.nodf.total == Approx(175.0 / 3.0).epsilon(1e-12));
  CHECK(report.structure.connectance == Approx(14.0 / 25.0).epsilon(1e-12));
}

TEST_CASE("the options of a report are validated once, naming the field") {
  AllocationAnalysisOptions options;
  CHECK(place_of_error(options) == "no error");
  options.temperature.confidence = 1.5;
  CHECK(place_of_error(options) == "confidence");
  options = AllocationAnalysisOptions();
  options.nulls = NullOptions();
  options.nulls->samples = 1;
  CHECK(place_of_error(options) == "samples");
  options.nulls->samples = 10;
  options.binarize.rule = BinarizeRule::row_share;
  options.binarize.threshold = 2;
  CHECK(place_of_error(options) == "threshold");
  const Matrix gains = matrix_of({{1.0, 0.2}, {0.1, 0.7}});
  const Matrix counts = matrix_of({{420, 95}, {130, 355}});
  CHECK_THROWS_AS(analyze_allocation(counts_with_gains(counts, gains), options), InputError);
}
