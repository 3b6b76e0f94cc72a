#include "allocsim/analysis/allocation_report.hpp"

#include <cmath>
#include <ostream>
#include <sstream>


namespace allocsim {

const char* const kTemperatureCaution =
    "Caution: a fitted temperature is a model-based summary that assumes the gains are known and "
    "that choices follow a logit (softmax) rule; it is evidence of an optimisation only when "
    "compared against null models, and it says nothing about cause.";

namespace {

JsonObject comparison_json(const Comparison& c) {
  JsonObject json;
  for (const auto& [name, value] : named_values(c)) {
    if (name.find("is_forest") != std::string::npos) json.add(name, value != 0);
    else if (name.find("size") != std::string::npos) json.add(name, static_cast<long long>(value));
    else json.add(name, value);
  }
  return json;
}

JsonObject temperature_json(const TemperatureResult& t) {
  JsonObject json;
  json.add("epsilon", t.epsilon).add("stderr", t.standard_error).add("ci_low", t.ci_low)
      .add("ci_high", t.ci_high).add("status", to_string(t.status)).add("beta", t.beta)
      .add("confidence", t.confidence).add("ci_high_infinite", std::isinf(t.ci_high))
      .add("observed_gain", t.observed_gain).add("fitted_gain", t.fitted_gain)
      .add("optimum_gain", t.optimum_gain).add("independent_gain", t.independent_gain)
      .add("solves", static_cast<long long>(t.solves));
  if (!t.message.empty()) json.add("message", t.message);
  return json;
}

std::string percent(double share) {
  std::ostringstream out;
  out.precision(3);
  out << 100 * share << "%";
  return out.str();
}

// WNODF of the weights on the links the rule keeps: with every cell > 0 (a
// dense allocation) the degrees tie and WNODF is 0 by definition, so the
// weights are read on the same links as NODF.
NestednessParts weights_on_links(const Matrix& allocation, const BinarizeOptions& rule) {
  return wnodf(allocation.cwiseProduct(to_matrix(binarize(allocation, rule))));
}

// NODF against the null model (on the binarised allocation for the binary
// models; on the allocation itself, binarised by the same rule, for the
// weighted one); WNODF too when the null is weighted.
void compare_structure_with_null(const Matrix& allocation, const AllocationAnalysisOptions& options,
                                 StructureReport& structure) {
  const NullOptions& nulls = *options.nulls;
  const bool weighted = nulls.model == NullModel::fixed_margins;
  const BinarizeOptions rule = weighted ? options.binarize : BinarizeOptions{};
  const Matrix observed = weighted ? allocation : to_matrix(binarize(allocation, options.binarize));
  const MetricFunction links_nodf = [&rule](const Matrix& m) { return nodf(binarize(m, rule)).total; };
  if (!weighted) {
    structure.nodf_null = compare_with_null(links_nodf, observed, nulls);
    return;
  }
  // One ensemble for both metrics (observed is the allocation itself here).
  const MetricFunction links_wnodf = [&rule](const Matrix& m) {
    return weights_on_links(m, rule).total;
  };
  std::vector<NullComparison> both =
      compare_metrics_with_null({links_nodf, links_wnodf}, allocation, nulls);
  structure.nodf_null = std::move(both[0]);
  structure.wnodf_null = std::move(both[1]);
}

JsonObject null_json(const NullComparison& c) {
  JsonObject json;
  json.add("model", to_string(c.model)).add("samples", static_cast<long long>(c.samples))
      .add("seed", static_cast<long long>(c.seed)).add("null_mean", c.null_mean)
      .add("null_sd", c.null_sd).add("z_score", c.z_score).add("p_upper", c.p_upper)
      .add("p_two_sided", c.p_two_sided).add("status", to_string(c.status));
  return json;
}

}  // namespace

AllocationReport analyze_allocation(const AllocationInput& in,
                                    const AllocationAnalysisOptions& options) {
  AllocationReport report;
  report.observed = observe_allocation(in.allocation, in.gains, in.access, in.sources);
  report.temperature = estimate_temperature(report.observed, options.temperature);
  report.exact = solve_exact(report.observed.problem);
  if (report.exact.optimal())
    report.versus_exact = compare_allocation(report.observed.shares, report.exact.coupling);
  if (report.temperature.estimated()) {
    report.has_entropic = true;
    report.versus_entropic =
        compare_allocation(report.observed.shares, report.temperature.coupling);
  }
  const BinaryMatrix links = binarize(in.allocation, options.binarize);
  report.structure.connectance = connectance(links);
  report.structure.nodf = nodf(links);
  report.structure.wnodf = weights_on_links(in.allocation, options.binarize);
  report.structure.spectral_radius = spectral_radius(links);
  report.binarize_rule = describe(options.binarize);
  report.structure.display_order = correspondence_order(in.allocation);
  if (options.nulls) compare_structure_with_null(in.allocation, options, report.structure);
  return report;
}

JsonObject allocation_report_json(const AllocationReport& r) {
  JsonObject json;
  const ObservedAllocation& o = r.observed;
  json.add("allocation", o.sources.allocation)
      .add("agents", static_cast<long long>(o.kept_rows.size() + o.dropped_rows.size()))
      .add("partners", static_cast<long long>(o.kept_columns.size() + o.dropped_columns.size()))
      .add("counts", o.counts);
  if (o.counts) json.add("units", o.units); else json.add_null("units");
  if (!o.note.empty()) json.add("note", o.note);
  json.add("temperature", temperature_json(r.temperature));
  JsonObject exact = comparison_json(r.versus_exact);
  exact.add("status", to_string(r.exact.status)).add("total_gain", r.exact.total_gain);
  json.add("exact", exact);
  if (r.has_entropic) {
    JsonObject entropic = comparison_json(r.versus_entropic);
    entropic.add("epsilon", r.temperature.epsilon).add("total_gain", r.temperature.fitted_gain);
    json.add("entropic", entropic);
  } else {
    json.add_null("entropic");
  }
  JsonObject structure;
  structure.add("nodf", r.structure.nodf.total).add("nodf_rows", r.structure.nodf.rows)
      .add("nodf_columns", r.structure.nodf.columns).add("wnodf", r.structure.wnodf.total)
      .add("spectral_radius", r.structure.spectral_radius)
      .add("connectance", r.structure.connectance).add("binarize", r.binarize_rule);
  if (r.structure.nodf_null) structure.add("nodf_null", null_json(*r.structure.nodf_null));
  if (r.structure.wnodf_null) structure.add("wnodf_null", null_json(*r.structure.wnodf_null));
  json.add("structure", structure);
  return json;
}

void print_allocation_report(std::ostream& out, const AllocationReport& r) {
  const ObservedAllocation& o = r.observed;
  const TemperatureResult& t = r.temperature;
  out.precision(4);
  out << "allocation " << o.sources.allocation << ": " << o.shares.rows() << " agents x "
      << o.shares.cols() << " partners, ";
  if (o.counts) out << o.units << " units (counts)\n"; else out << "shares (no unit count)\n";
  if (!o.note.empty()) out << "note: " << o.note << "\n";
  out << "temperature: " << t.brief() << "\n";
  if (!t.message.empty() && t.estimated()) out << "  note: " << t.message << "\n";
  out << "  gain: observed " << t.observed_gain << ", exact optimum " << t.optimum_gain
      << ", independent coupling " << t.independent_gain << "\n";
  if (r.exact.optimal())
    out << "versus the exact optimum (" << r.exact.support_size << " links): "
        << r.versus_exact.brief() << "; " << percent(r.versus_exact.weight_on_top_links)
        << " of the weight on the allocation's own top " << o.shares.rows() + o.shares.cols() - 1
        << " cells\n";
  if (r.has_entropic)
    out << "versus the entropic coupling at the estimate: " << r.versus_entropic.brief() << "\n";
  out << "structure (" << r.binarize_rule << "): connectance " << r.structure.connectance
      << ", NODF " << r.structure.nodf.total << ", WNODF (on those links) " << r.structure.wnodf.total
      << ", spectral radius " << r.structure.spectral_radius << "\n";
  if (r.structure.nodf_null) out << "  NODF against its null: " << r.structure.nodf_null->brief() << "\n";
  if (r.structure.wnodf_null) out << "  WNODF against its null: " << r.structure.wnodf_null->brief() << "\n";
  out << kTemperatureCaution << "\n";
}

}  // namespace allocsim
