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

double LogDomainSweep::sweep() {
  const Eigen::Index n = scaled_.rows();
  double violation = 0;
  // Rows: f_i = log r_i - LSE_j(S_ij + g_j).
  for (Eigen::Index i = 0; i < n; ++i) {
    row_ = scaled_.row(i).transpose().array() + g_;
    const double top = row_.maxCoeff();
    const double lse = top + std::log((row_ - top).exp().sum());
    violation += std::abs(std::exp(f_[i] + lse) - std::exp(log_r_[i]));
    f_[i] = log_r_[i] - lse;
  }
  // Columns: g_j = log c_j - LSE_i(S_ij + f_i), streamed by rows: the
  // column maxima first, then the shifted sums.
  top_.setConstant(-INFINITY);
  for (Eigen::Index i = 0; i < n; ++i)
    top_ = top_.max(scaled_.row(i).transpose().array() + f_[i]);
  sum_.setZero();
  for (Eigen::Index i = 0; i < n; ++i)
    sum_ += (scaled_.row(i).transpose().array() + f_[i] - top_).exp();
  g_ = log_c_ - top_ - sum_.log();
  return violation;
}

}  // namespace allocsim::bench
