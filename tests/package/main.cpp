// Solves a 2 x 2 transport problem through the installed allocsim package.
#include <iostream>

#include "allocsim/analysis/exact_transport.hpp"

int main() {
  allocsim::TransportProblem p;
  p.gains = allocsim::Matrix::Identity(2, 2);
  p.budgets = allocsim::Vector::Constant(2, 0.5);
  p.capacities = allocsim::Vector::Constant(2, 0.5);
  const allocsim::ExactResult result = allocsim::solve_exact(p);
  std::cout << result.total_gain << "\n";
  return result.optimal() && result.total_gain == 1.0 ? 0 : 1;
}
