#include "allocsim/analysis/model_table.hpp"

#include <algorithm>
#include <cmath>
#include <iomanip>
#include <limits>
#include <ostream>

#include "allocsim/analysis/marginal_newton.hpp"

namespace allocsim {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

long allowed_count(const Matrix& allowed) { return static_cast<long>(allowed.sum() + 0.5); }

}  // namespace

Matrix allowed_cells_of(const ObservedAllocation& o) {
  Matrix allowed = Matrix::Ones(o.shares.rows(), o.shares.cols());
  if (o.problem.access)
    for (Eigen::Index k = 0; k < allowed.size(); ++k)
      allowed.data()[k] = o.problem.access->data()[k] != 0 ? 1.0 : 0.0;
  return allowed;
}

ModelFitSummary summarize_model_fit(const std::string& model, const ObservedAllocation& o,
                                    const Matrix& fitted, long own_parameters) {
  const Matrix allowed = allowed_cells_of(o);
  ModelFitSummary s;
  s.model = model;
  s.parameters = static_cast<long>(o.shares.rows() + o.shares.cols() - 1) + own_parameters;
  s.degrees_of_freedom = allowed_count(allowed) - s.parameters;
  s.log_likelihood = s.deviance = s.aic = s.bic = kNaN;
  if (!(o.units > 0) || fitted.size() != o.shares.size()) return s;
  const double n_total = o.units;
  double loglik = 0, deviance = 0;
  for (Eigen::Index k = 0; k < fitted.size(); ++k) {
    if (!(allowed.data()[k] > 0)) continue;
    const double n = n_total * o.shares.data()[k];
    const double mu = n_total * fitted.data()[k];
    if (n > 0) {
      if (!(mu > 0)) return s;  // a positive count where the model puts nothing
      loglik += n * std::log(mu);
      deviance += 2 * n * std::log(n / mu);
    }
    loglik -= mu + std::lgamma(n + 1);
  }
  s.log_likelihood = loglik;
  s.deviance = deviance;
  s.aic = -2 * loglik + 2.0 * s.parameters;
  s.bic = -2 * loglik + s.parameters * std::log(n_total);
  return s;
}

Matrix independence_coupling(const ObservedAllocation& o) {
  const Matrix allowed = allowed_cells_of(o);
  const MarginalFit fit =
      match_marginals(Matrix::Zero(allowed.rows(), allowed.cols()), allowed, o.problem.budgets,
                      o.problem.capacities, o.problem.budgets.array().log(),
                      o.problem.capacities.array().log(), 1e-13, 200);
  return fit.coupling;
}

ModelFitSummary independence_summary(const ObservedAllocation& o) {
  return summarize_model_fit("independence", o, independence_coupling(o), 0);
}

ModelFitSummary saturated_summary(const ObservedAllocation& o) {
  const Matrix allowed = allowed_cells_of(o);
  ModelFitSummary s = summarize_model_fit("saturated", o, o.shares, 0);
  s.parameters = allowed_count(allowed);
  s.degrees_of_freedom = 0;
  s.deviance = o.units > 0 ? 0.0 : kNaN;
  if (o.units > 0) {
    s.aic = -2 * s.log_likelihood + 2.0 * s.parameters;
    s.bic = -2 * s.log_likelihood + s.parameters * std::log(o.units);
  }
  return s;
}

void print_model_table(std::ostream& out, const std::vector<ModelFitSummary>& table) {
  std::size_t best = table.size();
  for (std::size_t k = 0; k < table.size(); ++k)
    if (std::isfinite(table[k].bic) && (best == table.size() || table[k].bic < table[best].bic))
      best = k;
  int name_width = 18;
  for (const ModelFitSummary& s : table)
    name_width = std::max(name_width, static_cast<int>(s.model.size()) + 2);
  const auto flags = out.flags();
  const auto precision = out.precision();
  out << std::left << std::setw(name_width) << "model" << std::right << std::setw(12) << "deviance"
      << std::setw(7) << "df" << std::setw(14) << "AIC" << std::setw(14) << "BIC"
      << "\n";
  out << std::fixed << std::setprecision(2);
  for (std::size_t k = 0; k < table.size(); ++k) {
    const ModelFitSummary& s = table[k];
    out << std::left << std::setw(name_width) << s.model << std::right << std::setw(12)
        << s.deviance << std::setw(7) << s.degrees_of_freedom << std::setw(14) << s.aic
        << std::setw(14) << s.bic << (k == best ? "  <- lowest BIC" : "") << "\n";
  }
  out.flags(flags);
  out.precision(precision);
}

JsonObject model_table_json(const std::vector<ModelFitSummary>& table) {
  JsonObject models;
  for (const ModelFitSummary& s : table) {
    JsonObject row;
    row.add("log_likelihood", s.log_likelihood)
        .add("deviance", s.deviance)
        .add("parameters", static_cast<long long>(s.parameters))
        .add("degrees_of_freedom", static_cast<long long>(s.degrees_of_freedom))
        .add("aic", s.aic)
        .add("bic", s.bic);
    models.add(s.model, row);
  }
  return models;
}

}  // namespace allocsim
