// Trait features, the latent association model and the model table.
#include "allocsim/analysis/gains_reconstruction.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <sstream>

#include "allocsim/analysis/additive_residual.hpp"
#include "allocsim/analysis/trait_features.hpp"
#include "allocsim/core/error.hpp"

using namespace allocsim;

namespace {

Matrix counts_from(const Matrix& log_mean) {
  // Expected counts rounded: a table close to its model without sampling noise.
  return (log_mean.array().exp() * 1000).round().matrix();
}

ObservedAllocation observe(const Matrix& counts) {
  return observe_allocation(counts, Matrix::Zero(counts.rows(), counts.cols()), std::nullopt);
}

}  // namespace

TEST_CASE("trait features are named after their traits and paired by name") {
  TraitTable rows{Matrix(3, 2), {"depth", "width"}, "rows.csv"};
  rows.values << 1, 5, 2, 6, 3, 7;
  TraitTable columns{Matrix(2, 1), {"depth"}, "cols.csv"};
  columns.values << 1.5, 2.5;
  const TraitFeatures distance = build_trait_features(rows, columns);
  REQUIRE(distance.names == std::vector<std::string>{"-(depth)^2"});
  CHECK(distance.features[0](2, 1) == Approx(-0.25));
  columns.names = {"length"};
  const TraitFeatures product = build_trait_features(rows, columns, TraitFeatureForm::product);
  CHECK(product.names == std::vector<std::string>{"depth*length", "width*length"});
  CHECK(product.features[1](0, 1) == Approx(12.5));
  // The two forms differ only by row and column constants (and a factor 2).
  const Matrix allowed = Matrix::Ones(3, 2);
  const Matrix d = additive_residual(build_trait_features(rows, columns).features[0], allowed);
  const Matrix p = additive_residual(product.features[0], allowed);
  CHECK((d - 2 * p).cwiseAbs().maxCoeff() < 1e-12);
  rows.values(1, 0) = std::nan("");
  CHECK_THROWS_WITH(build_trait_features(rows, columns), Catch::Contains("rows.csv"));
}

TEST_CASE("a noise-free rank-one table gives back its strength and scores") {
  // log mu = row + column + sigma a b^T with a, b normalised by the margins.
  const Eigen::Index n = 6, m = 7;
  Vector x(n), y(m);
  for (Eigen::Index i = 0; i < n; ++i) x(i) = std::sin(1.0 + i);
  for (Eigen::Index j = 0; j < m; ++j) y(j) = std::cos(0.5 * j);
  Matrix log_mean = 0.8 * x * y.transpose();
  const ObservedAllocation o = observe(counts_from(log_mean));
  LatentAssociationOptions options;
  options.rank = 1;
  const LatentAssociationResult r = fit_latent_association(o, options);
  INFO(r.brief());
  REQUIRE(r.converged());
  // The fitted association, double-centred, equals the generating one up to rounding of counts.
  const Matrix allowed = Matrix::Ones(n, m);
  const Matrix truth = additive_residual(log_mean, allowed);
  const Matrix fitted = additive_residual(r.association, allowed);
  CHECK((truth - fitted).cwiseAbs().maxCoeff() < 2e-3);
  // Normalisation: zero weighted mean, unit weighted variance.
  const Vector rows = o.shares.rowwise().sum();
  CHECK(std::abs(rows.dot(r.row_scores.col(0))) < 1e-10);
  CHECK(rows.dot(r.row_scores.col(0).cwiseAbs2()) == Approx(1).epsilon(1e-10));
  CHECK(std::isfinite(r.strength_errors(0)));
}

TEST_CASE("the latent rank at or above the saturated rank is refused") {
  const ObservedAllocation o = observe(counts_from(Matrix::Random(4, 5)));
  LatentAssociationOptions options;
  options.rank = 3;
  CHECK_THROWS_WITH(fit_latent_association(o, options), Catch::Contains("saturated"));
  options.rank = 2;
  CHECK_NOTHROW(fit_latent_association(o, options));
}

TEST_CASE("an independent table chooses rank 0 and says so in plain words") {
  Vector r(5), c(6);
  r << 1, 2, 3, 4, 5;
  c << 3, 1, 4, 1, 5, 9;
  const Matrix counts = (r * c.transpose()).array().round().matrix();
  GainsReconstructionOptions options;
  options.latent.emplace();
  const GainsReconstructionReport report = reconstruct_gains(observe(counts), {}, options);
  REQUIRE(report.latent);
  CHECK(report.latent->rank == 0);
  CHECK_THAT(strength_sentence(*report.latent), Catch::Contains("no association"));
  // The table: independence, ranks 1..3 (min(5, 6) - 2), saturated.
  REQUIRE(report.models.size() == 5);
  CHECK(report.models.front().deviance == Approx(0).margin(1e-9));
  CHECK(report.models.back().model == "saturated");
  CHECK(report.models[1].degrees_of_freedom == (5 - 2) * (6 - 2));
  std::ostringstream text;
  print_gains_reconstruction(text, report);
  CHECK_THAT(text.str(), Catch::Contains("lowest BIC"));
}

TEST_CASE("the correlation after row and column effects ignores additive parts") {
  const ObservedAllocation o = observe(Matrix::Constant(4, 5, 10));
  Matrix a = Matrix::Random(4, 5);
  Matrix b = 3 * a;
  b.col(2).array() += 7;
  b.row(1).array() -= 2;
  CHECK(correlation_after_row_column_effects(o, a, b) == Approx(1).epsilon(1e-12));
  CHECK(std::isnan(correlation_after_row_column_effects(o, a, Matrix::Constant(4, 5, 2))));
}
