// The analysis an experiment's [analysis] keys ask for.
#pragma once

#include <cstdint>

#include <optional>

#include "allocsim/analysis/allocation_report.hpp"
#include "allocsim/analysis/gains_reconstruction.hpp"
#include "allocsim/experiments/keys.hpp"
#include "allocsim/sim/scenario.hpp"

namespace allocsim {

// The options of the [analysis] keys; the null ensemble's seed is derived
// from (scenario.seed, run index), like every random draw.
AllocationAnalysisOptions analysis_options(const ExperimentValues& values, std::uint64_t run_index);

// The gains reconstruction the keys analysis.latent_rank and
// analysis.trait_features ask for, or nothing. The latent fit stops after
// 3000 sweeps (latent_converged = 0 says so) and its random
// starts are seeded from (scenario.seed, run index).
std::optional<GainsReconstructionOptions> reconstruction_options(const ExperimentValues& values,
                                                                 std::uint64_t run_index);

// Throws InputError naming the key when the reconstruction keys cannot work
// with the rest: without analysis.enabled; trait features for gains that
// come from no traits (random, file); latent_rank auto with
// dynamics.mean_field (expected flows are no counts, and BIC needs them); a
// latent rank not below min(agents, partners) - 1 (the saturated model).
void check_reconstruction_keys(const ExperimentValues& values);

// The reconstruction of one simulated run: its input (the trait-matching
// features of the scenario's traits when asked for, in the distance form
// for trait-distance gains and the product form otherwise), the fit, and its
// recovery of the true gains / T (T = dynamics.temperature).
GainsReconstructionReport reconstruct_simulated_gains(const ObservedAllocation& observed,
                                                      const TransportProblem& problem,
                                                      const ScenarioTraits& traits,
                                                      const GainsReconstructionOptions& options,
                                                      const ExperimentValues& values);

}  // namespace allocsim
