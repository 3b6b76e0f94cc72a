#include "allocsim/analysis/gains_reconstruction.hpp"

#include <algorithm>
#include <cmath>
#include <iomanip>
#include <limits>
#include <ostream>
#include <sstream>

#include "allocsim/analysis/additive_residual.hpp"

namespace allocsim {
namespace {

std::vector<std::string> kept_labels(const std::vector<std::string>& labels,
                                     const std::vector<Eigen::Index>& kept, const char* word) {
  std::vector<std::string> out;
  for (Eigen::Index k : kept)
    out.push_back(static_cast<std::size_t>(k) < labels.size()
                      ? labels[k]
                      : std::string(word) + " " + std::to_string(k + 1));
  return out;
}

std::string number(double x, int precision = 4);

JsonObject scores_json(const Matrix& scores, const std::vector<std::string>& labels) {
  JsonObject out;
  for (Eigen::Index i = 0; i < scores.rows(); ++i) {
    std::vector<double> values;
    for (Eigen::Index k = 0; k < scores.cols(); ++k) values.push_back(scores(i, k));
    out.add(labels[static_cast<std::size_t>(i)], values);
  }
  return out;
}

std::vector<double> as_list(const Vector& v) {
  return std::vector<double>(v.data(), v.data() + v.size());
}

JsonObject features_json(const GainsFitResult& fit) {
  JsonObject weights;
  for (Eigen::Index k = 0; k < fit.theta_over_epsilon.size(); ++k) {
    JsonObject w;
    w.add("weight", fit.theta_over_epsilon(k))
        .add("standard_error", fit.standard_errors(k))
        .add("interval_low", fit.ci_low(k))
        .add("interval_high", fit.ci_high(k));
    weights.add(fit.names[static_cast<std::size_t>(k)], w);
  }
  JsonObject out;
  out.add("status", to_string(fit.status))
      .add("message", fit.message)
      .add("weights", weights)
      .add("confidence", fit.confidence)
      .add("deviance", fit.fit.deviance)
      .add("degrees_of_freedom", static_cast<long long>(fit.fit.degrees_of_freedom))
      .add("log_likelihood", fit.fit.log_likelihood)
      .add("newton_steps", static_cast<long long>(fit.iterations))
      .add("moment_error", fit.moment_error);
  return out;
}

JsonObject latent_json(const LatentAssociationResult& latent, const GainsReconstructionReport& r) {
  JsonObject out;
  out.add("status", to_string(latent.status))
      .add("message", latent.message)
      .add("rank", static_cast<long long>(latent.rank))
      .add("rank_chosen_by_bic", latent.rank_chosen)
      .add("strengths", as_list(latent.strengths))
      .add("strength_standard_errors", as_list(latent.strength_errors))
      .add("row_scores", scores_json(latent.row_scores, r.row_labels))
      .add("column_scores", scores_json(latent.column_scores, r.column_labels))
      .add("sweeps", static_cast<long long>(latent.sweeps))
      .add("score_equation_error", latent.score_error)
      .add("strength_meaning", strength_sentence(latent));
  return out;
}

// Characters shown for UTF-8 text (continuation bytes do not count).
std::size_t display_width(const std::string& text) {
  std::size_t width = 0;
  for (const char c : text) width += (static_cast<unsigned char>(c) & 0xC0) != 0x80;
  return width;
}

// `text` followed by spaces up to `width` shown characters (at least one space).
std::string padded(const std::string& text, std::size_t width) {
  return text + std::string(width > display_width(text) ? width - display_width(text) : 0, ' ') +
         " ";
}

std::size_t widest(const std::vector<std::string>& labels, std::size_t at_least) {
  std::size_t width = at_least;
  for (const std::string& label : labels) width = std::max(width, display_width(label));
  return width;
}

// One line per label: the label padded to the longest, then one number per
// dimension in columns headed "dimension 1", "dimension 2", ...
void print_scores(std::ostream& out, const char* what, const Matrix& scores,
                  const std::vector<std::string>& labels) {
  const std::size_t width = widest(labels, 5);
  out << "    " << padded(what + std::string(" scores"), width + 2);
  for (Eigen::Index k = 0; k < scores.cols(); ++k)
    out << std::setw(12) << "dimension " + std::to_string(k + 1);
  out << "\n";
  for (Eigen::Index i = 0; i < scores.rows(); ++i) {
    out << "      " << padded(labels[static_cast<std::size_t>(i)], width);
    for (Eigen::Index k = 0; k < scores.cols(); ++k) out << std::setw(12) << number(scores(i, k));
    out << "\n";
  }
}

std::string number(double x, int precision) {
  if (std::isnan(x)) return "n/a";
  if (std::isinf(x)) return x > 0 ? "infinity" : "-infinity";
  std::ostringstream out;
  out.precision(precision);
  out << x;
  return out.str();
}

}  // namespace

GainsReconstructionReport reconstruct_gains(const ObservedAllocation& o,
                                            const GainsReconstructionInput& input,
                                            const GainsReconstructionOptions& options) {
  GainsReconstructionReport report;
  report.row_labels = kept_labels(input.row_labels, o.kept_rows, "row");
  report.column_labels = kept_labels(input.column_labels, o.kept_columns, "column");
  report.models.push_back(independence_summary(o));
  if (!input.features.empty()) {
    report.features = fit_gains(o, input.features, input.feature_names, options.features);
    report.models.push_back(report.features->fit);
  }
  if (options.latent) {
    report.latent = fit_latent_association(o, *options.latent);
    for (const ModelFitSummary& s : report.latent->table)
      if (s.model != "independence") report.models.push_back(s);
  }
  report.models.push_back(saturated_summary(o));
  return report;
}

std::string strength_sentence(const LatentAssociationResult& latent) {
  if (latent.rank == 0 || latent.strengths.size() == 0)
    return "no association beyond the margins is needed to describe this table: rows choose "
           "columns in proportion to the columns' totals";
  const double s = latent.strengths(0);
  std::ostringstream out;
  out.precision(3);
  out << "sigma_1 = " << s
      << " is the association strength on the first latent dimension: two rows one score "
         "unit apart differ by "
      << s << " in the log-odds of choosing between two columns one score unit apart (odds "
      << "ratio " << std::exp(s) << "). Read as gains, it is 1/epsilon for latent traits "
      << "whose weighted spread is 1: epsilon = " << 1 / s << " in those units.";
  return out.str();
}

JsonObject gains_reconstruction_json(const GainsReconstructionReport& report) {
  JsonObject out;
  out.add("identified", "gains/epsilon only, up to row and column constants");
  if (report.features) out.add("features", features_json(*report.features));
  if (report.latent) out.add("latent", latent_json(*report.latent, report));
  out.add("models", model_table_json(report.models));
  if (report.recovery) {
    JsonObject recovery;
    recovery.add("latent_correlation", report.recovery->latent_correlation)
        .add("latent_slope", report.recovery->latent_slope)
        .add("features_correlation", report.recovery->features_correlation)
        .add("features_slope", report.recovery->features_slope);
    out.add("recovery", recovery);
  }
  return out;
}

void print_gains_reconstruction(std::ostream& out, const GainsReconstructionReport& report) {
  out << "Gains reconstruction (identified: gains/epsilon only, up to row and column "
         "constants)\n";
  if (report.features) {
    const GainsFitResult& f = *report.features;
    out << "  features: " << to_string(f.status) << " after " << f.iterations << " Newton steps"
        << (f.message.empty() ? "" : ": " + f.message) << "\n";
    const std::size_t width = widest(f.names, 8);
    for (Eigen::Index k = 0; k < f.theta_over_epsilon.size(); ++k)
      out << "    " << padded(f.names[static_cast<std::size_t>(k)], width) << "weight "
          << number(f.theta_over_epsilon(k)) << "  (se " << number(f.standard_errors(k)) << "; "
          << number(100 * f.confidence, 3) << "% likelihood-ratio interval " << number(f.ci_low(k))
          << " to " << number(f.ci_high(k)) << ")\n";
    out << "    deviance " << number(f.fit.deviance, 6) << " on " << f.fit.degrees_of_freedom
        << " degrees of freedom\n";
  }
  if (report.latent) {
    const LatentAssociationResult& l = *report.latent;
    out << "  latent: " << l.brief() << "\n";
    if (l.rank > 0) {
      out << "    " << strength_sentence(l) << "\n";
      print_scores(out, "row", l.row_scores, report.row_labels);
      print_scores(out, "column", l.column_scores, report.column_labels);
    }
  }
  if (report.models.size() > 2) {
    out << "  model comparison:\n";
    std::ostringstream table;
    print_model_table(table, report.models);
    std::istringstream lines(table.str());
    for (std::string line; std::getline(lines, line);) out << "    " << line << "\n";
  }
}

namespace {

// Sums of squares and products of the residuals of a and b (after row and
// column constants) over the allowed cells, about their means.
struct ResidualMoments {
  double saa = 0, sbb = 0, sab = 0;
};

ResidualMoments residual_moments(const ObservedAllocation& o, const Matrix& a, const Matrix& b) {
  const Matrix allowed = allowed_cells_of(o);
  const Matrix ra = additive_residual(a, allowed), rb = additive_residual(b, allowed);
  const double cells = allowed.sum();
  const double ma = ra.sum() / cells, mb = rb.sum() / cells;
  ResidualMoments m;
  for (Eigen::Index k = 0; k < ra.size(); ++k) {
    if (!(allowed.data()[k] > 0)) continue;
    const double x = ra.data()[k] - ma, y = rb.data()[k] - mb;
    m.saa += x * x;
    m.sbb += y * y;
    m.sab += x * y;
  }
  return m;
}

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

}  // namespace

double correlation_after_row_column_effects(const ObservedAllocation& o, const Matrix& a,
                                            const Matrix& b) {
  const ResidualMoments m = residual_moments(o, a, b);
  if (!(m.saa > 0 && m.sbb > 0)) return kNaN;
  return m.sab / std::sqrt(m.saa * m.sbb);
}

Matrix fitted_feature_gains(const ObservedAllocation& o, const GainsReconstructionInput& input,
                            const GainsFitResult& fit) {
  Matrix sum = Matrix::Zero(o.shares.rows(), o.shares.cols());
  for (std::size_t k = 0; k < input.features.size(); ++k)
    sum += fit.theta_over_epsilon(static_cast<Eigen::Index>(k)) *
           restrict_to_kept(input.features[k], o);
  return sum;
}

GainsRecovery gains_recovery(const ObservedAllocation& o, const GainsReconstructionInput& input,
                             const GainsReconstructionReport& report, const Matrix& truth) {
  GainsRecovery recovery;
  const auto measure = [&](const Matrix& reconstructed, double& correlation, double& slope) {
    const ResidualMoments m = residual_moments(o, reconstructed, truth);
    correlation = m.saa > 0 && m.sbb > 0 ? m.sab / std::sqrt(m.saa * m.sbb) : kNaN;
    slope = m.sbb > 0 ? m.sab / m.sbb : kNaN;
  };
  if (report.latent && report.latent->rank > 0)
    measure(report.latent->association, recovery.latent_correlation, recovery.latent_slope);
  if (report.features)
    measure(fitted_feature_gains(o, input, *report.features), recovery.features_correlation,
            recovery.features_slope);
  return recovery;
}

}  // namespace allocsim
