#include "allocsim/analysis/allocation_report.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
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
    if (name.find("is_forest") != std::string::npos)
      json.add(name, value != 0);
    else if (name.find("size") != std::string::npos)
      json.add(name, static_cast<long long>(value));
    else
      json.add(name, value);
  }
  return json;
}

JsonObject temperature_json(const TemperatureResult& t) {
  JsonObject json;
  json.add("epsilon", t.epsilon)
      .add("stderr", t.standard_error)
      .add("ci_low", t.ci_low)
      .add("ci_high", t.ci_high)
      .add("status", to_string(t.status))
      .add("beta", t.beta)
      .add("confidence", t.confidence)
      .add("ci_high_infinite", std::isinf(t.ci_high))
      .add("observed_gain", t.observed_gain)
      .add("fitted_gain", t.fitted_gain)
      .add("optimum_gain", t.optimum_gain)
      .add("independent_gain", t.independent_gain)
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
  const MetricFunction links_nodf = [&rule](const Matrix& m) {
    return nodf(binarize(m, rule)).total;
  };
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
  json.add("model", to_string(c.model))
      .add("samples", static_cast<long long>(c.samples))
      .add("seed", static_cast<long long>(c.seed))
      .add("null_mean", c.null_mean)
      .add("null_sd", c.null_sd)
      .add("z_score", c.z_score)
      .add("p_upper", c.p_upper)
      .add("p_two_sided", c.p_two_sided)
      .add("status", to_string(c.status));
  return json;
}

// Fewest of the largest cells whose shares add up to `share` of the total.
long cells_for_share(const std::vector<double>& descending, double total, double share) {
  double sum = 0;
  for (std::size_t k = 0; k < descending.size(); ++k) {
    sum += descending[k];
    if (sum >= share * total * (1 - 1e-12)) return static_cast<long>(k + 1);
  }
  return static_cast<long>(descending.size());
}

// The matrix structure is measured on, and whose margins the null ensemble
// keeps: counts as they are (their whole units drawn anew), shares as shares
// (so a min-count threshold is a share under the shares reading).
const Matrix& read_matrix(const AllocationReport& r) {
  return r.observed.counts ? r.values : r.observed.shares;
}

// Indices of the kept matrix mapped back to the input; left-out ones appended.
Ordering to_input_indices(const Ordering& kept_order, const std::vector<Eigen::Index>& kept,
                          const std::vector<Eigen::Index>& dropped) {
  Ordering out;
  for (const Eigen::Index k : kept_order) out.push_back(kept[static_cast<std::size_t>(k)]);
  out.insert(out.end(), dropped.begin(), dropped.end());
  return out;
}

GradientOrder display_order(const AllocationReport& r) {
  GradientOrder kept = correspondence_order(r.values);
  GradientOrder order = kept;
  order.rows = to_input_indices(kept.rows, r.observed.kept_rows, r.observed.dropped_rows);
  order.columns =
      to_input_indices(kept.columns, r.observed.kept_columns, r.observed.dropped_columns);
  return order;
}

// A temperature that is not estimated at all: every number NaN (null in JSON).
TemperatureResult not_estimated(TemperatureStatus status, const std::string& why,
                                const AllocationAnalysisOptions& options) {
  TemperatureResult t;
  t.status = status;
  t.message = why;
  t.epsilon = t.beta = t.standard_error = t.ci_low = t.ci_high = std::nan("");
  t.observed_gain = t.fitted_gain = t.optimum_gain = t.independent_gain = std::nan("");
  t.confidence = options.temperature.confidence;
  return t;
}

void compare_with_couplings(const AllocationAnalysisOptions& options, AllocationReport& report) {
  const ObservedAllocation& o = report.observed;
  if (!o.has_gains) {
    report.temperature =
        not_estimated(TemperatureStatus::no_gains,
                      "no gains given; structure, nulls and concentration need none", options);
    return;
  }
  const std::string reason = uninformative_gains_reason(o.problem);
  if (!reason.empty()) {
    report.temperature =
        not_estimated(TemperatureStatus::not_identified, o.sources.gains + ": " + reason, options);
    return;
  }
  report.exact = solve_exact(o.problem);
  report.temperature = estimate_temperature(o, options.temperature, &report.exact);
  if (report.exact.optimal())
    report.versus_exact = compare_allocation(o.shares, report.exact.coupling);
  if (report.temperature.estimated()) {
    report.has_entropic = true;
    report.versus_entropic = compare_allocation(o.shares, report.temperature.coupling);
  }
}

Ordering nested_order(const Eigen::VectorXi& degrees, const Vector& totals) {
  Ordering order(static_cast<std::size_t>(degrees.size()));
  for (Eigen::Index k = 0; k < degrees.size(); ++k) order[static_cast<std::size_t>(k)] = k;
  std::stable_sort(order.begin(), order.end(), [&](Eigen::Index a, Eigen::Index b) {
    if (degrees(a) != degrees(b)) return degrees(a) > degrees(b);
    return totals(a) > totals(b);
  });
  return order;
}

void describe_structure(const AllocationAnalysisOptions& options, AllocationReport& report) {
  StructureReport& s = report.structure;
  s.connectance = connectance(report.links);
  s.nodf = nodf(report.links);
  s.wnodf = weights_on_links(read_matrix(report), options.binarize);
  s.spectral_radius = spectral_radius(report.links);
  s.display_order = display_order(report);
  if (options.nulls) compare_structure_with_null(read_matrix(report), options, s);
  report.orderings.fitness = fitness_complexity(report.links);
  report.orderings.complexity = economic_complexity_index(report.links);
  report.orderings.agent_degrees = row_degrees(report.links);
  report.orderings.partner_degrees = column_degrees(report.links);
  s.nested_rows = nested_order(report.orderings.agent_degrees, report.values.rowwise().sum());
  s.nested_columns =
      nested_order(report.orderings.partner_degrees, report.values.colwise().sum().transpose());
}

std::string name_or_position(const std::vector<std::string>& labels, Eigen::Index k,
                             const char* side) {
  if (!labels.empty()) return labels[static_cast<std::size_t>(k)];
  return std::string(side) + " " + std::to_string(k + 1);
}

}  // namespace

std::string AllocationReport::agent_name(Eigen::Index i) const {
  return name_or_position(agent_labels, i, "row");
}
std::string AllocationReport::partner_name(Eigen::Index j) const {
  return name_or_position(partner_labels, j, "column");
}

WeightConcentration weight_concentration(const Matrix& shares) {
  WeightConcentration c;
  std::vector<double> cells(shares.data(), shares.data() + shares.size());
  std::sort(cells.begin(), cells.end(), std::greater<double>());
  const double total = shares.sum();
  c.cells = static_cast<long>(shares.size());
  c.nonzero_cells = static_cast<long>((shares.array() > 0).count());
  c.forest_links = static_cast<long>(shares.rows() + shares.cols() - 1);
  c.share_on_forest_links = weight_on_largest_cells(shares, c.forest_links);
  c.cells_for_50 = cells_for_share(cells, total, 0.5);
  c.cells_for_70 = cells_for_share(cells, total, 0.7);
  c.cells_for_90 = cells_for_share(cells, total, 0.9);
  return c;
}

void AllocationAnalysisOptions::validate() const {
  temperature.validate();
  binarize.validate();
  if (nulls) nulls->validate();
}

AllocationReport analyze_allocation(const AllocationInput& in,
                                    const AllocationAnalysisOptions& options) {
  options.validate();
  AllocationReport report;
  report.observed = observe_allocation(in.allocation, in.gains, in.access, in.sources, in.reading);
  report.agent_labels = in.agent_labels;
  report.partner_labels = in.partner_labels;
  report.matching = in.matching;
  report.not_stationary = in.not_stationary;
  report.values = restrict_to_kept(in.allocation, report.observed);
  report.links = binarize(read_matrix(report), options.binarize);
  report.binarize_rule = describe(options.binarize);
  compare_with_couplings(options, report);
  describe_structure(options, report);
  report.concentration = weight_concentration(report.observed.shares);
  return report;
}

namespace {

std::vector<std::string> names(const AllocationReport& r, const std::vector<Eigen::Index>& indices,
                               bool agents) {
  std::vector<std::string> out;
  for (const Eigen::Index k : indices) out.push_back(agents ? r.agent_name(k) : r.partner_name(k));
  return out;
}

std::string joined(const std::vector<std::string>& items, std::size_t at_most) {
  std::string out;
  for (std::size_t k = 0; k < items.size() && k < at_most; ++k) out += (k ? ", " : "") + items[k];
  if (items.size() > at_most) out += ", ... (" + std::to_string(items.size()) + " in all)";
  return out;
}

// One entry per analysed agent (or partner), in Fitness-Complexity order.
std::vector<JsonObject> ordering_json(const AllocationReport& r, bool agents) {
  const Orderings& o = r.orderings;
  const Ordering& order = agents ? o.fitness.row_order : o.fitness.column_order;
  const Ordering& eci_order = agents ? o.complexity.row_order : o.complexity.column_order;
  const std::vector<Eigen::Index>& kept = agents ? r.observed.kept_rows : r.observed.kept_columns;
  std::vector<long long> eci_rank(order.size());
  for (std::size_t k = 0; k < eci_order.size(); ++k)
    eci_rank[static_cast<std::size_t>(eci_order[k])] = static_cast<long long>(k + 1);
  std::vector<JsonObject> entries;
  for (std::size_t k = 0; k < order.size(); ++k) {
    const Eigen::Index a = order[k];
    const Eigen::Index input = kept[static_cast<std::size_t>(a)];
    JsonObject e;
    e.add("label", agents ? r.agent_name(input) : r.partner_name(input))
        .add("index", static_cast<long long>(input + 1))
        .add("rank", static_cast<long long>(k + 1))
        .add("degree", static_cast<long long>((agents ? o.agent_degrees : o.partner_degrees)(a)))
        .add(agents ? "fitness" : "complexity",
             (agents ? o.fitness.fitness : o.fitness.complexity)(a))
        .add(agents ? "eci" : "pci",
             (agents ? o.complexity.row_index : o.complexity.column_index)(a))
        .add(agents ? "eci_rank" : "pci_rank", eci_rank[static_cast<std::size_t>(a)]);
    entries.push_back(e);
  }
  return entries;
}

JsonObject orderings_json(const AllocationReport& r) {
  JsonObject json;
  json.add("fitness_complexity", to_string(r.orderings.fitness.status))
      .add("eci", to_string(r.orderings.complexity.status))
      .add("agents", ordering_json(r, true))
      .add("partners", ordering_json(r, false));
  return json;
}

JsonObject concentration_json(const WeightConcentration& c) {
  JsonObject json;
  json.add("forest_links", static_cast<long long>(c.forest_links))
      .add("share_on_forest_links", c.share_on_forest_links)
      .add("cells_for_50", static_cast<long long>(c.cells_for_50))
      .add("cells_for_70", static_cast<long long>(c.cells_for_70))
      .add("cells_for_90", static_cast<long long>(c.cells_for_90))
      .add("nonzero_cells", static_cast<long long>(c.nonzero_cells))
      .add("cells", static_cast<long long>(c.cells));
  return json;
}

JsonObject values_json(const ObservedAllocation& o) {
  JsonObject json;
  json.add("reading", o.counts ? "counts" : "shares");
  if (o.units > 0)
    json.add("units", o.units);
  else
    json.add_null("units");
  json.add("description", o.reading);
  if (!o.warning.empty()) json.add("warning", o.warning);
  return json;
}

JsonObject left_out_json(const AllocationReport& r) {
  JsonObject json;
  json.add("agents", names(r, r.observed.dropped_rows, true))
      .add("partners", names(r, r.observed.dropped_columns, false));
  return json;
}

JsonObject structure_json(const AllocationReport& r) {
  JsonObject structure;
  structure.add("nodf", r.structure.nodf.total)
      .add("nodf_rows", r.structure.nodf.rows)
      .add("nodf_columns", r.structure.nodf.columns)
      .add("wnodf", r.structure.wnodf.total)
      .add("spectral_radius", r.structure.spectral_radius)
      .add("connectance", r.structure.connectance)
      .add("binarize", r.binarize_rule);
  if (r.structure.nodf_null) structure.add("nodf_null", null_json(*r.structure.nodf_null));
  if (r.structure.wnodf_null) structure.add("wnodf_null", null_json(*r.structure.wnodf_null));
  return structure;
}

void add_couplings_json(const AllocationReport& r, JsonObject& json) {
  if (r.exact.optimal()) {
    JsonObject exact = comparison_json(r.versus_exact);
    exact.add("status", to_string(r.exact.status)).add("total_gain", r.exact.total_gain);
    json.add("exact", exact);
  } else if (r.observed.has_gains && r.temperature.status != TemperatureStatus::not_identified) {
    JsonObject exact;
    exact.add("status", to_string(r.exact.status)).add("message", r.exact.message);
    json.add("exact", exact);
  } else {
    json.add_null("exact");
  }
  if (r.has_entropic) {
    JsonObject entropic = comparison_json(r.versus_entropic);
    entropic.add("epsilon", r.temperature.epsilon).add("total_gain", r.temperature.fitted_gain);
    json.add("entropic", entropic);
  } else {
    json.add_null("entropic");
  }
}

}  // namespace

JsonObject allocation_report_json(const AllocationReport& r) {
  JsonObject json;
  const ObservedAllocation& o = r.observed;
  json.add("allocation", o.sources.allocation)
      .add("agents", static_cast<long long>(o.kept_rows.size()))
      .add("partners", static_cast<long long>(o.kept_columns.size()))
      .add("input_agents", static_cast<long long>(o.kept_rows.size() + o.dropped_rows.size()))
      .add("input_partners",
           static_cast<long long>(o.kept_columns.size() + o.dropped_columns.size()))
      .add("left_out", left_out_json(r))
      .add("labels", r.has_labels())
      .add("matching", r.matching)
      .add("counts", o.counts);
  if (o.units > 0)
    json.add("units", o.units);
  else
    json.add_null("units");
  json.add("values", values_json(o));
  if (!o.note.empty()) json.add("note", o.note);
  json.add("gains", o.has_gains);
  JsonObject temperature = temperature_json(r.temperature);
  if (!r.not_stationary.empty())
    temperature.add("stationary", false).add("not_stationary", r.not_stationary);
  json.add("temperature", temperature);
  add_couplings_json(r, json);
  json.add("structure", structure_json(r));
  json.add("concentration", concentration_json(r.concentration));
  json.add("orderings", orderings_json(r));
  return json;
}

namespace {

void print_header(std::ostream& out, const AllocationReport& r) {
  const ObservedAllocation& o = r.observed;
  out << "allocation " << o.sources.allocation << ": " << o.kept_rows.size() << " agents x "
      << o.kept_columns.size() << " partners analysed";
  if (!o.dropped_rows.empty() || !o.dropped_columns.empty())
    out << " (of " << o.kept_rows.size() + o.dropped_rows.size() << " x "
        << o.kept_columns.size() + o.dropped_columns.size() << ")";
  out << "\n  values read as " << o.reading << "\n";
  if (!o.warning.empty()) out << "  warning: " << o.warning << "\n";
  for (const std::string& m : r.matching) out << "  " << m << "\n";
  if (!o.dropped_rows.empty())
    out << "  left out, all-zero rows: " << joined(names(r, o.dropped_rows, true), 12) << "\n";
  if (!o.dropped_columns.empty())
    out << "  left out, all-zero columns: " << joined(names(r, o.dropped_columns, false), 12)
        << "\n";
}

void print_temperature(std::ostream& out, const AllocationReport& r) {
  const ObservedAllocation& o = r.observed;
  const TemperatureResult& t = r.temperature;
  out << "temperature: " << t.brief() << "\n";
  if (!r.not_stationary.empty() && o.has_gains)
    out << "  caution: fitted to a non-stationary allocation (see the warning above)\n";
  if (!o.has_gains || t.status == TemperatureStatus::not_identified) return;
  if (!t.message.empty() && t.estimated()) out << "  note: " << t.message << "\n";
  out << "  gain: observed " << t.observed_gain << ", exact optimum " << t.optimum_gain
      << ", independent coupling " << t.independent_gain << "\n";
  if (r.exact.optimal())
    out << "versus the exact optimum (" << r.exact.support_size
        << " links): " << r.versus_exact.brief() << "\n";
  if (r.has_entropic)
    out << "versus the entropic coupling at the estimate: " << r.versus_entropic.brief() << "\n";
}

void print_concentration(std::ostream& out, const WeightConcentration& c) {
  out << "weight: " << percent(c.share_on_forest_links) << " of the total on the " << c.forest_links
      << " largest cells (n+m-1, the most links an exact optimum uses); 50% on " << c.cells_for_50
      << " cells, 70% on " << c.cells_for_70 << ", 90% on " << c.cells_for_90 << " of "
      << c.nonzero_cells << " non-zero (" << c.cells << " cells)\n";
}

void print_orderings(std::ostream& out, const AllocationReport& r) {
  const FitnessComplexityResult& f = r.orderings.fitness;
  const auto ranked = [&](const Ordering& order, const std::vector<Eigen::Index>& kept,
                          bool agents) {
    std::vector<Eigen::Index> input;
    for (const Eigen::Index k : order) input.push_back(kept[static_cast<std::size_t>(k)]);
    return joined(names(r, input, agents), 10);
  };
  out << "orderings (Fitness-Complexity, " << to_string(f.status) << "; ECI "
      << to_string(r.orderings.complexity.status) << " in the JSON):\n"
      << "  agents by fitness: " << ranked(f.row_order, r.observed.kept_rows, true) << "\n"
      << "  partners by complexity: " << ranked(f.column_order, r.observed.kept_columns, false)
      << "\n";
}

}  // namespace

void print_allocation_report(std::ostream& out, const AllocationReport& r) {
  out.precision(4);
  print_header(out, r);
  if (!r.not_stationary.empty()) out << "warning: " << r.not_stationary << "\n";
  print_temperature(out, r);
  print_concentration(out, r.concentration);
  out << "structure (" << r.binarize_rule << "): connectance " << r.structure.connectance
      << ", NODF " << r.structure.nodf.total << " (rows " << r.structure.nodf.rows << ", columns "
      << r.structure.nodf.columns << "), WNODF (on those links) " << r.structure.wnodf.total
      << ", spectral radius " << r.structure.spectral_radius << "\n";
  if (r.structure.nodf_null)
    out << "  NODF against its null: " << r.structure.nodf_null->brief() << "\n";
  if (r.structure.wnodf_null)
    out << "  WNODF against its null: " << r.structure.wnodf_null->brief() << "\n";
  print_orderings(out, r);
  if (r.observed.has_gains) out << kTemperatureCaution << "\n";
}

}  // namespace allocsim
