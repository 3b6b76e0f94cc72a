// One sweep of log-domain Sinkhorn in C++, written the way a careful
// implementation does it: rows and columns both streamed row by row over the
// row-major gains, each cell's exp evaluated once per half-sweep with Eigen's
// vectorised exp (sums shifted by the current potentials, see the .cpp). It is the yardstick for
// "one log-domain iteration" (the solver itself runs the scaling form and falls back to log-domain
// updates only where its kernel underflows).
#pragma once

#include "allocsim/core/problem.hpp"

namespace allocsim::bench {

class LogDomainSweep {
 public:
  LogDomainSweep(const TransportProblem& problem, double epsilon);
  // One row update then one column update; returns the row violation
  // |P 1 - r|_1 measured before the row update.
  double sweep();

 private:
  Matrix scaled_;                         // gains / epsilon
  Eigen::ArrayXd log_r_, log_c_, f_, g_;  // potentials divided by epsilon
  Eigen::ArrayXd row_, top_, sum_;
};

}  // namespace allocsim::bench
