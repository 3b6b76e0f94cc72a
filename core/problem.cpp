#include "allocsim/core/problem.hpp"

#include <cmath>
#include <sstream>

#include "allocsim/core/error.hpp"

namespace allocsim {
namespace {

void require_positive_finite(const Vector& values, const std::string& source, const char* what) {
  for (Eigen::Index k = 0; k < values.size(); ++k) {
    const double v = values[k];
    if (!std::isfinite(v)) {
      throw InputError(source, std::string(what) + " entry " + std::to_string(k + 1) +
                                   " is not a finite number");
    }
    if (v <= 0) {
      throw InputError(source, std::string(what) + " entry " + std::to_string(k + 1) + " is " +
                                   std::to_string(v) + "; every " + what +
                                   " must be positive (drop the row or column instead)");
    }
  }
}

}  // namespace

void validate(const TransportProblem& p, const ProblemSources& src, double balance_tolerance) {
  if (p.gains.rows() == 0 || p.gains.cols() == 0) {
    throw InputError(src.gains, "the gain matrix is empty");
  }
  for (Eigen::Index i = 0; i < p.gains.rows(); ++i) {
    for (Eigen::Index j = 0; j < p.gains.cols(); ++j) {
      if (!std::isfinite(p.gains(i, j))) {
        throw InputError(src.gains, "gain at row " + std::to_string(i + 1) + ", column " +
                                        std::to_string(j + 1) + " is not a finite number");
      }
    }
  }
  if (p.budgets.size() != p.gains.rows()) {
    throw InputError(src.budgets, "has " + std::to_string(p.budgets.size()) +
                                      " budgets but the gain matrix has " +
                                      std::to_string(p.gains.rows()) + " rows (agents)");
  }
  if (p.capacities.size() != p.gains.cols()) {
    throw InputError(src.capacities, "has " + std::to_string(p.capacities.size()) +
                                         " capacities but the gain matrix has " +
                                         std::to_string(p.gains.cols()) + " columns (partners)");
  }
  require_positive_finite(p.budgets, src.budgets, "budget");
  require_positive_finite(p.capacities, src.capacities, "capacity");
  if (p.access) {
    if (p.access->rows() != p.gains.rows() || p.access->cols() != p.gains.cols()) {
      throw InputError(src.access, "is " + std::to_string(p.access->rows()) + "x" +
                                       std::to_string(p.access->cols()) +
                                       " but the gain matrix is " + std::to_string(p.gains.rows()) +
                                       "x" + std::to_string(p.gains.cols()));
    }
  }
  const double rb = p.budgets.sum();
  const double rc = p.capacities.sum();
  if (std::abs(rb - rc) > balance_tolerance * std::max(rb, rc)) {
    std::ostringstream msg;
    msg.precision(12);
    msg << "budgets total " << rb << " but capacities (" << src.capacities << ") total " << rc
        << "; make the totals equal or rescale the capacities to the budgets' total (rescale)";
    throw InputError(src.budgets, msg.str());
  }
}

void rescale_capacities(TransportProblem& p) {
  p.capacities *= p.budgets.sum() / p.capacities.sum();
}

double total_gain(const TransportProblem& p, const Matrix& coupling) {
  if (!p.access) return (p.gains.array() * coupling.array()).sum();
  return (p.gains.array() * coupling.array() * p.access->cast<double>().array()).sum();
}

}  // namespace allocsim
