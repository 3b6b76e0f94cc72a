// The names of the results file (DESIGN.md section 7): every group, dataset,
// attribute and summary column that allocsim writes or reads. Writers and
// readers both take the names from here; a layout name written as a string
// literal anywhere else is a bug.
//
//   /                       format, format_version, tool_version, created_utc, experiment
//   /runs/<run>/            every effective run parameter ("section.key"), seed, status, ...
//   /runs/<run>/labels/     agents, partners (text datasets, when known)
//   /runs/<run>/scenario/   gains (n x m), budgets (n), capacities (m), access (n x m, uint8)
//   /runs/<run>/allocation/ snapshots (k x n x m), round_end (k), total (n x m)
//   /runs/<run>/prices      (k x m)
//   /runs/<run>/analysis/   metrics as attributes; exact, entropic couplings; orders
//   /summary/               one 1-D dataset per column, one row per run
//
// Dataset paths of a run are relative to /runs/<run>.
#pragma once

namespace allocsim::layout {

// Root attributes.
inline constexpr char kFormatAttribute[] = "format";
inline constexpr char kFormatVersion[] = "format_version";
inline constexpr char kToolVersion[] = "tool_version";
inline constexpr char kCreatedUtc[] = "created_utc";
inline constexpr char kExperiment[] = "experiment";
// The value of the format attribute, and the newest version this build reads.
inline constexpr char kResultsFormat[] = "allocsim-results";
inline constexpr long long kResultsFormatVersion = 1;

// Top-level groups.
inline constexpr char kRuns[] = "runs";
inline constexpr char kSummary[] = "summary";

// Datasets and groups of a run.
inline constexpr char kLabels[] = "labels";
inline constexpr char kAgentLabels[] = "labels/agents";
inline constexpr char kPartnerLabels[] = "labels/partners";
inline constexpr char kScenario[] = "scenario";
inline constexpr char kGains[] = "scenario/gains";
inline constexpr char kBudgets[] = "scenario/budgets";
inline constexpr char kCapacities[] = "scenario/capacities";
inline constexpr char kAccess[] = "scenario/access";
inline constexpr char kAllocation[] = "allocation";
inline constexpr char kSnapshots[] = "allocation/snapshots";
inline constexpr char kRoundEnd[] = "allocation/round_end";
inline constexpr char kTotal[] = "allocation/total";
inline constexpr char kPrices[] = "prices";
inline constexpr char kAnalysis[] = "analysis";
inline constexpr char kExactCoupling[] = "analysis/exact";
inline constexpr char kEntropicCoupling[] = "analysis/entropic";
inline constexpr char kRowOrder[] = "analysis/row_order";
inline constexpr char kColumnOrder[] = "analysis/column_order";
// Nested order (decreasing degree; input indices, left-out rows and columns last).
inline constexpr char kNestedRowOrder[] = "analysis/nested_row_order";
inline constexpr char kNestedColumnOrder[] = "analysis/nested_column_order";
// The binarised allocation the structure metrics used (uint8, input shape).
inline constexpr char kLinks[] = "analysis/links";
// The metric of each null matrix, "<metric>_null_values", e.g. "nodf_null_values".
inline constexpr char kNullValuesSuffix[] = "_null_values";

// Attributes of a run group (besides every experiment key, by its name).
inline constexpr char kSeed[] = "seed";
inline constexpr char kStatus[] = "status";
inline constexpr char kRunIndex[] = "run_index";
inline constexpr char kReplicate[] = "replicate";
inline constexpr char kFeasible[] = "feasible";
inline constexpr char kSeconds[] = "seconds";
inline constexpr char kUnplacedUnits[] = "unplaced_units";
inline constexpr char kUnitsAfterBurnIn[] = "units_after_burn_in";
// A field matrix saved by `analyze --save`: the files it was read from.
inline constexpr char kObservedAllocation[] = "observed_allocation";
inline constexpr char kObservedGains[] = "observed_gains";
inline constexpr char kObservedAccess[] = "observed_access";
// Settling of the run (sim/settling.hpp): "true" | "false", and the measures
// of its last windows; also /summary columns.
inline constexpr char kSettled[] = "settled";
inline constexpr char kCapacityError[] = "capacity_error";
inline constexpr char kWindowChange[] = "window_change";
inline constexpr char kDriftSinceBurnIn[] = "drift_since_burn_in";
// Per snapshot window: capacity error (k values) and change from the window
// before (k - 1 values, windows 2..k).
inline constexpr char kWindowCapacityErrors[] = "allocation/capacity_error";
inline constexpr char kWindowChanges[] = "allocation/window_change";
// Values of the status attribute.
inline constexpr char kStatusRunning[] = "running";
inline constexpr char kStatusComplete[] = "complete";

// Attributes of a run's analysis group (they become /summary columns).
inline constexpr char kTemperatureStatus[] = "temperature_status";
inline constexpr char kEpsilon[] = "epsilon";
inline constexpr char kEpsilonStderr[] = "epsilon_stderr";
inline constexpr char kEpsilonCiLow[] = "epsilon_ci_low";
inline constexpr char kEpsilonCiHigh[] = "epsilon_ci_high";
inline constexpr char kConfidence[] = "confidence";
inline constexpr char kObservedGain[] = "observed_gain";
inline constexpr char kOptimumGain[] = "optimum_gain";
inline constexpr char kIndependentGain[] = "independent_gain";
inline constexpr char kNodf[] = "nodf";
inline constexpr char kWnodf[] = "wnodf";
inline constexpr char kSpectralRadius[] = "spectral_radius";
inline constexpr char kConnectance[] = "connectance";
inline constexpr char kBinarize[] = "binarize";
inline constexpr char kOrderName[] = "order_name";
// How the allocation's values were read: "counts" or "shares", and N (0 = unknown).
inline constexpr char kValueReading[] = "value_reading";
inline constexpr char kValueUnits[] = "value_units";
// Weight concentration (analysis/allocation_report.hpp).
inline constexpr char kShareOnForestLinks[] = "share_on_forest_links";
inline constexpr char kCellsFor50[] = "cells_for_50";
inline constexpr char kCellsFor70[] = "cells_for_70";
inline constexpr char kCellsFor90[] = "cells_for_90";
// Analysed shape (all-zero rows and columns left out).
inline constexpr char kAnalysedAgents[] = "analysed_agents";
inline constexpr char kAnalysedPartners[] = "analysed_partners";
// Comparison metrics are stored as "<prefix><metric>" (analysis/compare.hpp
// names the metrics), e.g. "entropic_total_variation".
inline constexpr char kExactPrefix[] = "exact_";
inline constexpr char kEntropicPrefix[] = "entropic_";
// A null comparison of a metric is stored as "<metric>_<field>", e.g.
// "nodf_null_mean", "nodf_z_score".
inline constexpr char kNullModel[] = "null_model";
inline constexpr char kNullMean[] = "null_mean";
inline constexpr char kNullSd[] = "null_sd";
inline constexpr char kZScore[] = "z_score";
inline constexpr char kPUpper[] = "p_upper";
inline constexpr char kPTwoSided[] = "p_two_sided";
inline constexpr char kNullSamples[] = "null_samples";

// Gains reconstruction (analyze --save with --features, --row-traits or
// --latent-rank; sweeps with analysis.latent_rank or analysis.trait_features):
//   analysis/reconstruction/row_labels, column_labels   texts: the analysed rows
//                               and columns, in input order (scores follow them)
//   analysis/reconstruction/models/  name (texts), log_likelihood, deviance,
//                               parameters, degrees_of_freedom, aic, bic: one row per model
//   analysis/reconstruction/latent/  row_scores (rows x K), column_scores
//                               (columns x K), strengths (K), strength_errors (K),
//                               coupling (input shape); attributes rank, rank_chosen
//                               ("true" | "false"), latent_status
//   analysis/reconstruction/features/  names (texts), weights, standard_errors,
//                               interval_low, interval_high, coupling (input shape);
//                               attributes features_status, confidence
inline constexpr char kReconstruction[] = "analysis/reconstruction";
inline constexpr char kReconstructionRowLabels[] = "analysis/reconstruction/row_labels";
inline constexpr char kReconstructionColumnLabels[] = "analysis/reconstruction/column_labels";
inline constexpr char kModels[] = "analysis/reconstruction/models";
inline constexpr char kModelNames[] = "analysis/reconstruction/models/name";
inline constexpr char kModelLogLikelihood[] = "analysis/reconstruction/models/log_likelihood";
inline constexpr char kModelDeviance[] = "analysis/reconstruction/models/deviance";
inline constexpr char kModelParameters[] = "analysis/reconstruction/models/parameters";
inline constexpr char kModelDegreesOfFreedom[] =
    "analysis/reconstruction/models/degrees_of_freedom";
inline constexpr char kModelAic[] = "analysis/reconstruction/models/aic";
inline constexpr char kModelBic[] = "analysis/reconstruction/models/bic";
inline constexpr char kLatent[] = "analysis/reconstruction/latent";
inline constexpr char kLatentRowScores[] = "analysis/reconstruction/latent/row_scores";
inline constexpr char kLatentColumnScores[] = "analysis/reconstruction/latent/column_scores";
inline constexpr char kLatentStrengths[] = "analysis/reconstruction/latent/strengths";
inline constexpr char kLatentStrengthErrors[] = "analysis/reconstruction/latent/strength_errors";
inline constexpr char kLatentCoupling[] = "analysis/reconstruction/latent/coupling";
inline constexpr char kLatentRankChosen[] = "rank_chosen";
inline constexpr char kLatentStatus[] = "latent_status";
inline constexpr char kFeatures[] = "analysis/reconstruction/features";
inline constexpr char kFeatureNames[] = "analysis/reconstruction/features/names";
inline constexpr char kFeatureWeights[] = "analysis/reconstruction/features/weights";
inline constexpr char kFeatureErrors[] = "analysis/reconstruction/features/standard_errors";
inline constexpr char kFeatureIntervalLow[] = "analysis/reconstruction/features/interval_low";
inline constexpr char kFeatureIntervalHigh[] = "analysis/reconstruction/features/interval_high";
inline constexpr char kFeatureCoupling[] = "analysis/reconstruction/features/coupling";
inline constexpr char kFeaturesStatus[] = "features_status";
// Attributes of the analysis group (so /summary columns of a sweep): the
// latent rank fitted (chosen by BIC with auto), whether that fit converged, and how well the
// reconstruction recovers the simulated gains / T after row and column
// effects (analysis/gains_reconstruction.hpp, GainsRecovery).
inline constexpr char kLatentRank[] = "latent_rank";
inline constexpr char kLatentConverged[] = "latent_converged";  // 1 or 0
inline constexpr char kLatentStrength1[] = "latent_strength_1";
inline constexpr char kLatentGainsCorrelation[] = "latent_gains_correlation";
inline constexpr char kLatentGainsSlope[] = "latent_gains_slope";
inline constexpr char kFeatureGainsCorrelation[] = "feature_gains_correlation";
inline constexpr char kFeatureGainsSlope[] = "feature_gains_slope";

// Summary columns besides the experiment keys and the analysis attributes.
inline constexpr char kRunColumn[] = "run";

// A scores file (`allocsim score --out scores.h5`) holds no runs: its
// /summary has one row per case of a benchmark set, with kEpsilon,
// kEpsilonCiLow and kEpsilonCiHigh for the answer and these columns.
inline constexpr char kCaseColumn[] = "case";
inline constexpr char kFamilyColumn[] = "family";
inline constexpr char kSourceColumn[] = "source";
inline constexpr char kMisspecifiedColumn[] = "misspecified";  // 1 or 0
inline constexpr char kTrueEpsilonColumn[] = "true_epsilon";
inline constexpr char kUnitsColumn[] = "units";
inline constexpr char kAgentsColumn[] = "agents";
inline constexpr char kPartnersColumn[] = "partners";
inline constexpr char kEpsilonBandColumn[] = "epsilon_band";  // quintile 1..5 of the truth
inline constexpr char kUnitsBandColumn[] = "units_band";      // quintile 1..5 of the units
inline constexpr char kAnswerColumn[] = "answer";             // answered, declined, missing
inline constexpr char kRelativeErrorColumn[] = "relative_error";
inline constexpr char kCoveredColumn[] = "covered";  // 1 or 0; NaN without an interval

}  // namespace allocsim::layout
