// RunWriter::write_gains_reconstruction: the reconstructed gains of one
// allocation in <run>/analysis/reconstruction.
#include <cmath>

#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "hdf5_io.hpp"
#include "run_group.hpp"

namespace allocsim {
namespace {

Vector column_of(const std::vector<ModelFitSummary>& models,
                 double (*field)(const ModelFitSummary&)) {
  Vector values(static_cast<Eigen::Index>(models.size()));
  for (std::size_t k = 0; k < models.size(); ++k)
    values(static_cast<Eigen::Index>(k)) = field(models[k]);
  return values;
}

void write_models(H5::Group& reconstruction, const std::vector<ModelFitSummary>& models) {
  H5::Group group = open_or_create_groups(reconstruction, leaf_name(layout::kModels));
  std::vector<std::string> names;
  for (const ModelFitSummary& s : models) names.push_back(s.model);
  write_texts(group, leaf_name(layout::kModelNames), names);
  write_vector(group, leaf_name(layout::kModelLogLikelihood),
               column_of(models, [](const ModelFitSummary& s) { return s.log_likelihood; }));
  write_vector(group, leaf_name(layout::kModelDeviance),
               column_of(models, [](const ModelFitSummary& s) { return s.deviance; }));
  write_vector(group, leaf_name(layout::kModelParameters),
               column_of(models, [](const ModelFitSummary& s) {
                 return static_cast<double>(s.parameters);
               }));
  write_vector(group, leaf_name(layout::kModelDegreesOfFreedom),
               column_of(models, [](const ModelFitSummary& s) {
                 return static_cast<double>(s.degrees_of_freedom);
               }));
  write_vector(group, leaf_name(layout::kModelAic),
               column_of(models, [](const ModelFitSummary& s) { return s.aic; }));
  write_vector(group, leaf_name(layout::kModelBic),
               column_of(models, [](const ModelFitSummary& s) { return s.bic; }));
}

Matrix input_shaped(const Matrix& kept, const ObservedAllocation& o) {
  return expand_to_input(
      kept, o, static_cast<Eigen::Index>(o.kept_rows.size() + o.dropped_rows.size()),
      static_cast<Eigen::Index>(o.kept_columns.size() + o.dropped_columns.size()));
}

void write_latent(H5::Group& reconstruction, const LatentAssociationResult& l,
                  const ObservedAllocation& o) {
  H5::Group group = open_or_create_groups(reconstruction, leaf_name(layout::kLatent));
  set_text_attribute(group, layout::kLatentStatus, to_string(l.status));
  set_text_attribute(group, layout::kLatentRankChosen, l.rank_chosen ? "true" : "false");
  write_matrix(group, leaf_name(layout::kLatentRowScores), l.row_scores);
  write_matrix(group, leaf_name(layout::kLatentColumnScores), l.column_scores);
  write_vector(group, leaf_name(layout::kLatentStrengths), l.strengths);
  write_vector(group, leaf_name(layout::kLatentStrengthErrors), l.strength_errors);
  write_matrix(group, leaf_name(layout::kLatentCoupling), input_shaped(l.coupling, o));
}

void write_features(H5::Group& reconstruction, const GainsFitResult& f,
                    const ObservedAllocation& o) {
  H5::Group group = open_or_create_groups(reconstruction, leaf_name(layout::kFeatures));
  set_text_attribute(group, layout::kFeaturesStatus, to_string(f.status));
  set_number_attribute(group, layout::kConfidence, f.confidence);
  write_texts(group, leaf_name(layout::kFeatureNames), f.names);
  write_vector(group, leaf_name(layout::kFeatureWeights), f.theta_over_epsilon);
  write_vector(group, leaf_name(layout::kFeatureErrors), f.standard_errors);
  write_vector(group, leaf_name(layout::kFeatureIntervalLow), f.ci_low);
  write_vector(group, leaf_name(layout::kFeatureIntervalHigh), f.ci_high);
  if (f.coupling.size() > 0)
    write_matrix(group, leaf_name(layout::kFeatureCoupling), input_shaped(f.coupling, o));
}

void write_recovery(H5::Group& analysis, const GainsRecovery& r) {
  set_number_attribute(analysis, layout::kLatentGainsCorrelation, r.latent_correlation);
  set_number_attribute(analysis, layout::kLatentGainsSlope, r.latent_slope);
  set_number_attribute(analysis, layout::kFeatureGainsCorrelation, r.features_correlation);
  set_number_attribute(analysis, layout::kFeatureGainsSlope, r.features_slope);
}

}  // namespace

void RunWriter::write_gains_reconstruction(const GainsReconstructionReport& report,
                                           const ObservedAllocation& observed) {
  return write_guarded(group_->path, [&]() -> void {
    H5::Group analysis = open_or_create_groups(group_->group, layout::kAnalysis);
    const std::string below =
        std::string(layout::kReconstruction).substr(std::string(layout::kAnalysis).size() + 1);
    if (analysis.nameExists(below)) analysis.unlink(below);
    H5::Group reconstruction = analysis.createGroup(below);
    write_texts(reconstruction, leaf_name(layout::kReconstructionRowLabels), report.row_labels);
    write_texts(reconstruction, leaf_name(layout::kReconstructionColumnLabels),
                report.column_labels);
    write_models(reconstruction, report.models);
    if (report.latent) {
      write_latent(reconstruction, *report.latent, observed);
      set_integer_attribute(analysis, layout::kLatentRank, report.latent->rank);
      set_integer_attribute(analysis, layout::kLatentConverged, report.latent->converged() ? 1 : 0);
      set_number_attribute(
          analysis, layout::kLatentStrength1,
          report.latent->strengths.size() > 0 ? report.latent->strengths(0) : std::nan(""));
    }
    if (report.features) write_features(reconstruction, *report.features, observed);
    if (report.recovery) write_recovery(analysis, *report.recovery);
  });
}

}  // namespace allocsim
