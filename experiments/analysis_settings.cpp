#include "allocsim/experiments/analysis_settings.hpp"

#include <algorithm>

#include "allocsim/analysis/trait_features.hpp"
#include "allocsim/core/error.hpp"
#include "allocsim/core/random.hpp"
#include "key_errors.hpp"

namespace allocsim {
namespace {

AllocationAnalysisOptions read_analysis_options(const ExperimentValues& values,
                                                std::uint64_t run_index) {
  AllocationAnalysisOptions options;
  options.temperature.confidence = values.real("analysis.confidence");
  options.binarize.rule = binarize_rule_from_string(values.text("analysis.binarize"));
  if (values.real("analysis.threshold") > 0)
    options.binarize.threshold = values.real("analysis.threshold");
  if (values.text("analysis.nulls") != "none") {
    NullOptions nulls;
    nulls.model = null_model_from_string(values.text("analysis.nulls"));
    nulls.samples = values.integer("analysis.null_samples");
    std::uint64_t state = static_cast<std::uint64_t>(values.integer("scenario.seed")) ^
                          (0x9E3779B97F4A7C15ULL * (run_index + 1));
    nulls.seed = splitmix64(state);
    nulls.threads = 1;  // runs of a sweep already fill the threads
    options.nulls = nulls;
  }
  options.validate();
  return options;
}

}  // namespace

AllocationAnalysisOptions analysis_options(const ExperimentValues& values,
                                           std::uint64_t run_index) {
  AllocationAnalysisOptions options;
  detail::check_as_keys(values, "analysis",
                        [&] { options = read_analysis_options(values, run_index); },
                        {{"samples", "analysis.null_samples"}});
  return options;
}

namespace {

constexpr long kSweepLatentSweeps = 3000;

bool latent_asked(const ExperimentValues& values) {
  return values.text("analysis.latent_rank") != "none";
}

}  // namespace

std::optional<GainsReconstructionOptions> reconstruction_options(const ExperimentValues& values,
                                                                 std::uint64_t run_index) {
  if (!latent_asked(values) && !values.boolean("analysis.trait_features")) return std::nullopt;
  GainsReconstructionOptions options;
  options.features.confidence = values.real("analysis.confidence");
  if (latent_asked(values)) {
    LatentAssociationOptions latent;
    const std::string rank = values.text("analysis.latent_rank");
    latent.rank = rank == "auto" ? -1 : std::stol(rank);
    latent.max_rank = static_cast<long>(values.integer("analysis.max_latent_rank"));
    // A fit that converges takes a few hundred sweeps; one that does not
    // (strong association, cells near zero) is flagged (latent_converged = 0)
    // sooner than the command line's default would.
    latent.max_sweeps = kSweepLatentSweeps;
    std::uint64_t state = static_cast<std::uint64_t>(values.integer("scenario.seed")) ^
                          (0xD1B54A32D192ED03ULL * (run_index + 1));
    latent.seed = splitmix64(state);
    options.latent = latent;
  }
  return options;
}

void check_reconstruction_keys(const ExperimentValues& values) {
  const bool traits = values.boolean("analysis.trait_features");
  if (!latent_asked(values) && !traits) return;
  const char* key = latent_asked(values) ? "analysis.latent_rank" : "analysis.trait_features";
  if (!values.boolean("analysis.enabled"))
    throw InputError(key,
                     "needs analysis.enabled = true (the reconstruction is part of the "
                     "analysis of each run)");
  const std::string gains = values.text("scenario.gains");
  if (traits && (gains == "random" || gains == "file"))
    throw InputError("analysis.trait_features",
                     "scenario.gains = " + gains +
                         " comes from no traits; use rank-product, trait-distance or features "
                         "gains, or analysis.latent_rank");
  if (!latent_asked(values)) return;
  const std::string rank = values.text("analysis.latent_rank");
  if (rank == "auto" && values.boolean("dynamics.mean_field"))
    throw InputError("analysis.latent_rank",
                     "auto needs counts to choose K by BIC, and dynamics.mean_field gives "
                     "expected flows; give K");
  const long smaller = static_cast<long>(
      std::min(values.integer("scenario.agents"), values.integer("scenario.partners")));
  if (rank != "auto" && std::stol(rank) >= smaller - 1)
    throw InputError("analysis.latent_rank",
                     "K = " + rank + " is not below min(agents, partners) - 1 = " +
                         std::to_string(smaller - 1) + " (that rank reproduces the table exactly)");
}

GainsReconstructionReport reconstruct_simulated_gains(const ObservedAllocation& observed,
                                                      const TransportProblem& problem,
                                                      const ScenarioTraits& traits,
                                                      const GainsReconstructionOptions& options,
                                                      const ExperimentValues& values) {
  GainsReconstructionInput input;
  if (values.boolean("analysis.trait_features") && traits.rows.cols() > 0) {
    const TraitTable rows{traits.rows, traits.names, "the scenario's agent traits"};
    const TraitTable columns{traits.columns, traits.names, "the scenario's partner traits"};
    const TraitFeatures features = build_trait_features(
        rows, columns,
        traits.distance ? TraitFeatureForm::negative_squared_distance : TraitFeatureForm::product);
    input.features = features.features;
    input.feature_names = features.names;
  }
  GainsReconstructionReport report = reconstruct_gains(observed, input, options);
  const Matrix truth =
      restrict_to_kept(problem.gains, observed) / values.real("dynamics.temperature");
  report.recovery = gains_recovery(observed, input, report, truth);
  return report;
}

}  // namespace allocsim
