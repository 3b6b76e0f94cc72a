#include "allocsim/results/reconstruction_reader.hpp"

#include "allocsim/core/error.hpp"
#include "allocsim/results/layout.hpp"

namespace allocsim {
namespace {

std::vector<ModelFitSummary> read_models(const ResultsReader& reader, const std::string& run) {
  const std::vector<std::string> names = reader.read_texts(run, layout::kModelNames);
  const Vector loglik = reader.read_vector(run, layout::kModelLogLikelihood);
  const Vector deviance = reader.read_vector(run, layout::kModelDeviance);
  const Vector parameters = reader.read_vector(run, layout::kModelParameters);
  const Vector df = reader.read_vector(run, layout::kModelDegreesOfFreedom);
  const Vector aic = reader.read_vector(run, layout::kModelAic);
  const Vector bic = reader.read_vector(run, layout::kModelBic);
  const auto n = static_cast<Eigen::Index>(names.size());
  for (const Vector* v : {&loglik, &deviance, &parameters, &df, &aic, &bic})
    if (v->size() != n)
      throw InputError(reader.path(),
                       run + "/" + layout::kModels + " has columns of unequal length");
  std::vector<ModelFitSummary> models;
  for (Eigen::Index k = 0; k < n; ++k) {
    ModelFitSummary s;
    s.model = names[static_cast<std::size_t>(k)];
    s.log_likelihood = loglik(k);
    s.deviance = deviance(k);
    s.parameters = static_cast<long>(parameters(k));
    s.degrees_of_freedom = static_cast<long>(df(k));
    s.aic = aic(k);
    s.bic = bic(k);
    models.push_back(s);
  }
  return models;
}

LatentAssociationResult read_latent(const ResultsReader& reader, const std::string& run,
                                    const GainsReconstructionReport& report) {
  const Attributes attributes = reader.group_attributes(run, layout::kLatent);
  LatentAssociationResult l;
  l.status = latent_fit_status_from_string(attribute_text(attributes, layout::kLatentStatus));
  l.rank_chosen = attribute_text(attributes, layout::kLatentRankChosen) == "true";
  l.strengths = reader.read_vector(run, layout::kLatentStrengths);
  l.strength_errors = reader.read_vector(run, layout::kLatentStrengthErrors);
  l.row_scores = reader.read_matrix(run, layout::kLatentRowScores);
  l.column_scores = reader.read_matrix(run, layout::kLatentColumnScores);
  l.rank = static_cast<long>(l.strengths.size());
  const bool consistent =
      l.strength_errors.size() == l.strengths.size() && l.row_scores.cols() == l.rank &&
      l.column_scores.cols() == l.rank &&
      (l.rank == 0 ||
       (l.row_scores.rows() == static_cast<Eigen::Index>(report.row_labels.size()) &&
        l.column_scores.rows() == static_cast<Eigen::Index>(report.column_labels.size())));
  if (!consistent)
    throw InputError(reader.path(), run + "/" + layout::kLatent +
                                        ": scores, strengths and labels disagree in size");
  return l;
}

GainsFitResult read_features(const ResultsReader& reader, const std::string& run) {
  const Attributes attributes = reader.group_attributes(run, layout::kFeatures);
  GainsFitResult f;
  f.status = gains_fit_status_from_string(attribute_text(attributes, layout::kFeaturesStatus));
  f.confidence = attribute_number(attributes, layout::kConfidence).value_or(0.95);
  f.names = reader.read_texts(run, layout::kFeatureNames);
  f.theta_over_epsilon = reader.read_vector(run, layout::kFeatureWeights);
  f.standard_errors = reader.read_vector(run, layout::kFeatureErrors);
  f.ci_low = reader.read_vector(run, layout::kFeatureIntervalLow);
  f.ci_high = reader.read_vector(run, layout::kFeatureIntervalHigh);
  const auto n = static_cast<Eigen::Index>(f.names.size());
  for (const Vector* v : {&f.theta_over_epsilon, &f.standard_errors, &f.ci_low, &f.ci_high})
    if (v->size() != n)
      throw InputError(reader.path(),
                       run + "/" + layout::kFeatures + ": weights and names disagree in size");
  return f;
}

}  // namespace

std::optional<GainsReconstructionReport> read_gains_reconstruction(const ResultsReader& reader,
                                                                   const std::string& run) {
  if (!reader.has(run, layout::kReconstruction)) return std::nullopt;
  GainsReconstructionReport report;
  report.row_labels = reader.read_texts(run, layout::kReconstructionRowLabels);
  report.column_labels = reader.read_texts(run, layout::kReconstructionColumnLabels);
  if (reader.has(run, layout::kModelNames)) report.models = read_models(reader, run);
  if (reader.has(run, layout::kLatent)) report.latent = read_latent(reader, run, report);
  if (reader.has(run, layout::kFeatures)) report.features = read_features(reader, run);
  return report;
}

}  // namespace allocsim
