// RunWriter::write_report: the analysis of one allocation in <run>/analysis.
#include <cmath>

#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "hdf5_io.hpp"
#include "run_group.hpp"

namespace allocsim {
namespace {

// Every metric NaN: no exact coupling to compare with (no gains given).
Comparison unknown_comparison() {
  const double nan = std::nan("");
  Comparison c;
  c.kl_divergence = c.total_variation = c.hellinger = c.row_marginal_error = nan;
  c.column_marginal_error = c.support_jaccard = c.weight_on_coupling_support = nan;
  c.weight_on_top_links = nan;
  return c;
}

void write_comparison(H5::Group& group, const std::string& prefix, const Comparison& c) {
  for (const auto& [name, value] : named_values(c))
    set_number_attribute(group, prefix + name, value);
}

// "<metric>_<field>", e.g. "nodf_null_mean".
void write_null(H5::Group& group, const std::string& metric, const NullComparison& c) {
  const std::string prefix = metric + "_";
  set_text_attribute(group, prefix + layout::kNullModel, to_string(c.model));
  set_number_attribute(group, prefix + layout::kNullMean, c.null_mean);
  set_number_attribute(group, prefix + layout::kNullSd, c.null_sd);
  set_number_attribute(group, prefix + layout::kZScore, c.z_score);
  set_number_attribute(group, prefix + layout::kPUpper, c.p_upper);
  set_number_attribute(group, prefix + layout::kPTwoSided, c.p_two_sided);
  set_number_attribute(group, prefix + layout::kNullSamples, static_cast<double>(c.samples));
  Vector values(static_cast<Eigen::Index>(c.null_values.size()));
  for (std::size_t k = 0; k < c.null_values.size(); ++k)
    values(static_cast<Eigen::Index>(k)) = c.null_values[k];
  write_vector(group, metric + layout::kNullValuesSuffix, values);
}

// Kept indices in `order` mapped to the input's, left-out ones appended.
std::vector<long long> input_order(const Ordering& order, const std::vector<Eigen::Index>& kept,
                                   const std::vector<Eigen::Index>& dropped) {
  std::vector<long long> out;
  for (const Eigen::Index k : order) out.push_back(kept[static_cast<std::size_t>(k)]);
  out.insert(out.end(), dropped.begin(), dropped.end());
  return out;
}

AccessMask links_in_input_shape(const AllocationReport& r) {
  const ObservedAllocation& o = r.observed;
  AccessMask links =
      AccessMask::Zero(static_cast<Eigen::Index>(o.kept_rows.size() + o.dropped_rows.size()),
                       static_cast<Eigen::Index>(o.kept_columns.size() + o.dropped_columns.size()));
  for (std::size_t a = 0; a < o.kept_rows.size(); ++a)
    for (std::size_t b = 0; b < o.kept_columns.size(); ++b)
      links(o.kept_rows[a], o.kept_columns[b]) =
          r.links(static_cast<Eigen::Index>(a), static_cast<Eigen::Index>(b));
  return links;
}

void write_reading(H5::Group& group, const AllocationReport& r) {
  set_text_attribute(group, layout::kValueReading, r.observed.counts ? "counts" : "shares");
  set_number_attribute(group, layout::kValueUnits, r.observed.units);
  set_integer_attribute(group, layout::kAnalysedAgents,
                        static_cast<long long>(r.observed.kept_rows.size()));
  set_integer_attribute(group, layout::kAnalysedPartners,
                        static_cast<long long>(r.observed.kept_columns.size()));
  const WeightConcentration& c = r.concentration;
  set_number_attribute(group, layout::kShareOnForestLinks, c.share_on_forest_links);
  set_number_attribute(group, layout::kCellsFor50, static_cast<double>(c.cells_for_50));
  set_number_attribute(group, layout::kCellsFor70, static_cast<double>(c.cells_for_70));
  set_number_attribute(group, layout::kCellsFor90, static_cast<double>(c.cells_for_90));
}

void write_temperature(H5::Group& group, const TemperatureResult& t) {
  set_text_attribute(group, layout::kTemperatureStatus, to_string(t.status));
  set_number_attribute(group, layout::kEpsilon, t.epsilon);
  set_number_attribute(group, layout::kEpsilonStderr, t.standard_error);
  set_number_attribute(group, layout::kEpsilonCiLow, t.ci_low);
  set_number_attribute(group, layout::kEpsilonCiHigh, t.ci_high);
  set_number_attribute(group, layout::kConfidence, t.confidence);
  set_number_attribute(group, layout::kObservedGain, t.observed_gain);
  set_number_attribute(group, layout::kOptimumGain, t.optimum_gain);
  set_number_attribute(group, layout::kIndependentGain, t.independent_gain);
}

void write_structure(H5::Group& group, const AllocationReport& r) {
  set_number_attribute(group, layout::kNodf, r.structure.nodf.total);
  set_number_attribute(group, layout::kWnodf, r.structure.wnodf.total);
  set_number_attribute(group, layout::kSpectralRadius, r.structure.spectral_radius);
  set_number_attribute(group, layout::kConnectance, r.structure.connectance);
  set_text_attribute(group, layout::kBinarize, r.binarize_rule);
  const auto as_integers = [](const Ordering& order) {
    return std::vector<long long>(order.begin(), order.end());
  };
  write_integers(group, leaf_name(layout::kRowOrder), as_integers(r.structure.display_order.rows));
  write_integers(group, leaf_name(layout::kColumnOrder),
                 as_integers(r.structure.display_order.columns));
  set_text_attribute(group, layout::kOrderName, "correspondence analysis");
  write_integers(
      group, leaf_name(layout::kNestedRowOrder),
      input_order(r.structure.nested_rows, r.observed.kept_rows, r.observed.dropped_rows));
  write_integers(
      group, leaf_name(layout::kNestedColumnOrder),
      input_order(r.structure.nested_columns, r.observed.kept_columns, r.observed.dropped_columns));
  if (r.structure.nodf_null) write_null(group, layout::kNodf, *r.structure.nodf_null);
  if (r.structure.wnodf_null) write_null(group, layout::kWnodf, *r.structure.wnodf_null);
}

}  // namespace

void RunWriter::clear_analysis() {
  return write_guarded(group_->path, [&]() -> void {
    H5::Group& run_group = group_->group;
    if (run_group.nameExists(layout::kAnalysis)) run_group.unlink(layout::kAnalysis);
    run_group.createGroup(layout::kAnalysis);
  });
}

void RunWriter::write_report(const AllocationReport& r) {
  return write_guarded(group_->path, [&]() -> void {
    clear_analysis();
    H5::Group group = group_->group.openGroup(layout::kAnalysis);
    write_temperature(group, r.temperature);
    write_comparison(group, layout::kExactPrefix,
                     r.exact.optimal() ? r.versus_exact : unknown_comparison());
    if (r.has_entropic) write_comparison(group, layout::kEntropicPrefix, r.versus_entropic);
    write_structure(group, r);
    write_reading(group, r);
    write_access(group, leaf_name(layout::kLinks), links_in_input_shape(r));
    const auto rows =
        static_cast<Eigen::Index>(r.observed.kept_rows.size() + r.observed.dropped_rows.size());
    const auto cols = static_cast<Eigen::Index>(r.observed.kept_columns.size() +
                                                r.observed.dropped_columns.size());
    if (r.exact.optimal()) {
      allocsim::write_matrix(group, leaf_name(layout::kExactCoupling),
                             expand_to_input(r.exact.coupling, r.observed, rows, cols));
    }
    if (r.has_entropic) {
      allocsim::write_matrix(group, leaf_name(layout::kEntropicCoupling),
                             expand_to_input(r.temperature.coupling, r.observed, rows, cols));
    }
  });
}

}  // namespace allocsim
