// RunWriter::write_report: the analysis of one allocation in <run>/analysis.
#include "allocsim/results/layout.hpp"
#include "allocsim/results/results_file.hpp"
#include "hdf5_io.hpp"
#include "run_group.hpp"

namespace allocsim {
namespace {

void write_comparison(H5::Group& group, const std::string& prefix, const Comparison& c) {
  for (const auto& [name, value] : named_values(c)) set_number_attribute(group, prefix + name, value);
}

// "<metric>_<field>", e.g. "nodf_null_mean".
void write_null(H5::Group& group, const std::string& metric, const NullComparison& c) {
  const std::string prefix = metric + "_";
  set_text_attribute(group, prefix + layout::kNullModel, to_string(c.model));
  set_number_attribute(group, prefix + layout::kNullMean, c.null_mean);
  set_number_attribute(group, prefix + layout::kNullSd, c.null_sd);
  set_number_attribute(group, prefix + layout::kZScore, c.z_score);
  set_number_attribute(group, prefix + layout::kPUpper, c.p_upper);
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
    write_comparison(group, layout::kExactPrefix, r.versus_exact);
    if (r.has_entropic) write_comparison(group, layout::kEntropicPrefix, r.versus_entropic);
    write_structure(group, r);
    const auto rows =
        static_cast<Eigen::Index>(r.observed.kept_rows.size() + r.observed.dropped_rows.size());
    const auto cols =
        static_cast<Eigen::Index>(r.observed.kept_columns.size() + r.observed.dropped_columns.size());
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
