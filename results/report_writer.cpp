#include "allocsim/results/report_writer.hpp"

#include "allocsim/results/hdf5_io.hpp"

namespace allocsim {
namespace {

void write_comparison(H5::Group& group, const std::string& prefix, const Comparison& c) {
  for (const auto& [name, value] : named_values(c)) set_number_attribute(group, prefix + name, value);
}

void write_null(H5::Group& group, const std::string& prefix, const NullComparison& c) {
  set_text_attribute(group, prefix + "null_model", to_string(c.model));
  set_number_attribute(group, prefix + "null_mean", c.null_mean);
  set_number_attribute(group, prefix + "null_sd", c.null_sd);
  set_number_attribute(group, prefix + "z_score", c.z_score);
  set_number_attribute(group, prefix + "p_upper", c.p_upper);
}

}  // namespace

void write_allocation_report(H5::Group& run_group, const AllocationReport& r) {
  if (run_group.nameExists("analysis")) run_group.unlink("analysis");
  H5::Group group = run_group.createGroup("analysis");
  const TemperatureResult& t = r.temperature;
  set_text_attribute(group, "temperature_status", to_string(t.status));
  set_number_attribute(group, "epsilon", t.epsilon);
  set_number_attribute(group, "epsilon_stderr", t.standard_error);
  set_number_attribute(group, "epsilon_ci_low", t.ci_low);
  set_number_attribute(group, "epsilon_ci_high", t.ci_high);
  set_number_attribute(group, "confidence", t.confidence);
  set_number_attribute(group, "observed_gain", t.observed_gain);
  set_number_attribute(group, "optimum_gain", t.optimum_gain);
  set_number_attribute(group, "independent_gain", t.independent_gain);
  write_comparison(group, "exact_", r.versus_exact);
  if (r.has_entropic) write_comparison(group, "entropic_", r.versus_entropic);
  set_number_attribute(group, "nodf", r.structure.nodf.total);
  set_number_attribute(group, "wnodf", r.structure.wnodf.total);
  set_number_attribute(group, "spectral_radius", r.structure.spectral_radius);
  set_number_attribute(group, "connectance", r.structure.connectance);
  set_text_attribute(group, "binarize", r.binarize_rule);
  const auto as_integers = [](const Ordering& order) {
    return std::vector<long long>(order.begin(), order.end());
  };
  write_integers(group, "row_order", as_integers(r.structure.display_order.rows));
  write_integers(group, "column_order", as_integers(r.structure.display_order.columns));
  set_text_attribute(group, "order_name", "correspondence analysis");
  if (r.structure.nodf_null) write_null(group, "nodf_", *r.structure.nodf_null);
  if (r.structure.wnodf_null) write_null(group, "wnodf_", *r.structure.wnodf_null);
  const auto rows = static_cast<Eigen::Index>(r.observed.kept_rows.size() + r.observed.dropped_rows.size());
  const auto cols = static_cast<Eigen::Index>(r.observed.kept_columns.size() + r.observed.dropped_columns.size());
  if (r.exact.optimal())
    write_matrix(group, "exact", expand_to_input(r.exact.coupling, r.observed, rows, cols));
  if (r.has_entropic)
    write_matrix(group, "entropic", expand_to_input(t.coupling, r.observed, rows, cols));
}

}  // namespace allocsim
