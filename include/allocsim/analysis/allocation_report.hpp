// The analysis of one allocation, as `allocsim analyze` and sweeps run it:
// the temperature estimate, the comparison with the exact coupling and with
// the entropic coupling at the estimate, the structure metrics, and (when
// asked) NODF and WNODF against a null model. Its results go to JSON, to a
// run's analysis/ group (results/report_writer.hpp), and to the sweep's
// summary table. No HDF5 here: it works on any matrix.
//
// Gains are optional: without them (or with gains that carry no
// information) the temperature is reported as status no_gains (or
// not_identified, with the reason) and everything that needs no gains is
// reported: structure, orderings, null comparisons, weight concentration.
// All-zero rows and columns are left out of every metric and null ensemble;
// orderings and the matrices below are in the analysed (kept) shape, and
// `observed.kept_rows` etc. map them back to the input's rows and columns.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

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
  Matrix allocation;
  std::optional<Matrix> gains;  // absent: no temperature, no couplings
  std::optional<AccessMask> access;
  AllocationSources sources;
  std::vector<std::string> agent_labels, partner_labels;  // of the input rows; empty = none
  ValueReading reading;                                   // counts or shares
  std::vector<std::string> matching;  // how the files were matched, one phrase each, for the report
  // Why the allocation is known not to be the stationary one (e.g. "run-000003
  // had not settled: ..."), with the advice; empty when nothing says so. The
  // report says it first, and flags the temperature as fitted to a
  // non-stationary allocation (JSON: temperature.stationary = false and
  // temperature.not_stationary = this text, both only then).
  std::string not_stationary;
};

// How concentrated the weight is, on the analysed matrix (shares p, k cells
// of n x m). n + m - 1 is the most links a basic (forest-supported) optimal
// coupling can use.
struct WeightConcentration {
  long forest_links = 0;             // n + m - 1
  double share_on_forest_links = 0;  // share of the total on the n + m - 1 largest cells
  long nonzero_cells = 0;
  long cells = 0;                                             // n * m
  long cells_for_50 = 0, cells_for_70 = 0, cells_for_90 = 0;  // fewest cells carrying that share
};
WeightConcentration weight_concentration(const Matrix& shares);

// Rankings of the analysed agents and partners on the binarised matrix.
struct Orderings {
  FitnessComplexityResult fitness;   // Fitness-Complexity
  ComplexityIndexResult complexity;  // ECI and PCI
  Eigen::VectorXi agent_degrees, partner_degrees;
};

struct AllocationAnalysisOptions {
  TemperatureOptions temperature;
  BinarizeOptions binarize;
  std::optional<NullOptions> nulls;  // absent: no null comparison

  // Each part's own validate(); throws InputError at the field's name
  // ("confidence", "threshold", "samples", ...). analyze_allocation calls it.
  void validate() const;
};

struct StructureReport {
  double connectance = 0, spectral_radius = 0;
  NestednessParts nodf, wnodf;
  std::optional<NullComparison> nodf_null, wnodf_null;
  // For heatmaps: the allocation along its main gradient, in the input's row
  // and column indices (left-out rows and columns last).
  GradientOrder display_order;
  // Nested order of the analysed matrix (kept indices): decreasing degree,
  // ties by decreasing total weight, then by position; the order NODF scores.
  Ordering nested_rows, nested_columns;
};

struct AllocationReport {
  ObservedAllocation observed;
  Matrix values;       // the allocation as given, on the kept rows and columns
  BinaryMatrix links;  // `values` binarised by the report's rule
  std::vector<std::string> agent_labels, partner_labels;  // of the input; empty = none
  std::vector<std::string> matching;                      // from the input
  std::string not_stationary;                             // from the input
  TemperatureResult temperature;
  ExactResult exact;  // solved once, when gains are known (else status infeasible)
  Comparison versus_exact, versus_entropic;
  bool has_entropic = false;
  StructureReport structure;
  Orderings orderings;
  WeightConcentration concentration;
  std::string binarize_rule;

  bool has_labels() const { return !agent_labels.empty() || !partner_labels.empty(); }
  // The label of the input's agent i (partner j), or "row i+1" ("column j+1") without labels.
  std::string agent_name(Eigen::Index i) const;
  std::string partner_name(Eigen::Index j) const;
};

AllocationReport analyze_allocation(const AllocationInput& input,
                                    const AllocationAnalysisOptions& options);

// The JSON object of `allocsim analyze --json` (DESIGN.md section 8).
JsonObject allocation_report_json(const AllocationReport& report);

// A readable report, ending with the caution.
void print_allocation_report(std::ostream& out, const AllocationReport& report);

}  // namespace allocsim
