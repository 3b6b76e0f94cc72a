#include "log_domain_iteration.hpp"

#include <cmath>

namespace allocsim::bench {

LogDomainSweep::LogDomainSweep(const TransportProblem& p, double epsilon)
    : scaled_(p.gains / epsilon),
      log_r_(p.budgets.array().log()),
      log_c_(p.capacities.array().log()),
      f_(Eigen::ArrayXd::Zero(p.agents())),
      g_(Eigen::ArrayXd::Zero(p.partners())),
      row_(p.partners()),
      top_(p.partners()),
      sum_(p.partners()) {}

// Each half-sweep is one pass with one exp per cell: the sums are shifted
// by the current potentials, so they are the current coupling's row (or
// column) masses, which lie in (0, 1] unless a row or column has almost no
// mass (or, on the first sweep, the shift is far off); only those rows and
// columns take the exact two-pass form (maximum first, then the sum).
double LogDomainSweep::sweep() {
  const Eigen::Index n = scaled_.rows();
  double violation = 0;
  // Rows: f_i = log r_i - LSE_j(S_ij + g_j).
  for (Eigen::Index i = 0; i < n; ++i) {
    row_ = scaled_.row(i).transpose().array() + g_;
    double mass = (row_ + f_[i]).exp().sum();
    double lse = std::log(mass) - f_[i];
    if (!(mass > 1e-300 && mass < 1e300)) {
      const double top = row_.maxCoeff();
      lse = top + std::log((row_ - top).exp().sum());
      mass = std::exp(f_[i] + lse);
    }
    violation += std::abs(mass - std::exp(log_r_[i]));
    f_[i] = log_r_[i] - lse;
  }
  // Columns: g_j = log c_j - LSE_i(S_ij + f_i), streamed by rows.
  sum_.setZero();
  for (Eigen::Index i = 0; i < n; ++i)
    sum_ += (scaled_.row(i).transpose().array() + (g_ + f_[i])).exp();
  if (((sum_ > 1e-300) && (sum_ < 1e300)).all()) {
    g_ += log_c_ - sum_.log();
    return violation;
  }
  top_.setConstant(-INFINITY);
  for (Eigen::Index i = 0; i < n; ++i) top_ = top_.max(scaled_.row(i).transpose().array() + f_[i]);
  sum_.setZero();
  for (Eigen::Index i = 0; i < n; ++i)
    sum_ += (scaled_.row(i).transpose().array() + f_[i] - top_).exp();
  g_ = log_c_ - top_ - sum_.log();
  return violation;
}

}  // namespace allocsim::bench
