// The analysis of one allocation, as `allocsim analyze` and sweeps run it:
// the temperature estimate, the comparison with the exact coupling and with
// the entropic coupling at the estimate, the structure metrics, and (when
// asked) NODF and WNODF against a null model. Its results go to JSON, to a
// run's analysis/ group (results/report_writer.hpp), and to the sweep's
// summary table. No HDF5 here: it works on any matrix.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "allocsim/analysis/binarize.hpp"
#include "allocsim/analysis/compare.hpp"
#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/analysis/nestedness.hpp"
#include "allocsim/analysis/null_models.hpp"
#include "allocsim/analysis/observed_allocation.hpp"
#include "allocsim/analysis/rankings.hpp"
#include "allocsim/analysis/temperature.hpp"
#include "allocsim/core/json.hpp"

namespace allocsim {

// A model-based summary, not a verdict: printed with every text report.
extern const char* const kTemperatureCaution;

struct AllocationInput {
  Matrix allocation, gains;
  std::optional<AccessMask> access;
  AllocationSources sources;
};

struct AllocationAnalysisOptions {
  TemperatureOptions temperature;
  BinarizeOptions binarize;
  std::optional<NullOptions> nulls;  // absent: no null comparison
};

struct StructureReport {
  double connectance = 0, spectral_radius = 0;
  NestednessParts nodf, wnodf;
  std::optional<NullComparison> nodf_null, wnodf_null;
  GradientOrder display_order;  // for heatmaps: the allocation along its main gradient
};

struct AllocationReport {
  ObservedAllocation observed;
  TemperatureResult temperature;
  ExactResult exact;
  Comparison versus_exact, versus_entropic;
  bool has_entropic = false;
  StructureReport structure;
  std::string binarize_rule;
};

AllocationReport analyze_allocation(const AllocationInput& input,
                                    const AllocationAnalysisOptions& options);

// The JSON object of `allocsim analyze --json` (DESIGN.md section 8).
JsonObject allocation_report_json(const AllocationReport& report);

// A readable report, ending with the caution.
void print_allocation_report(std::ostream& out, const AllocationReport& report);

}  // namespace allocsim
