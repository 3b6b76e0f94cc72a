#include <algorithm>
#include <numeric>

#include "allocsim/plots/figures.hpp"

namespace allocsim::plots {
namespace {

// Indices 0..n-1 by decreasing degree, then decreasing sum, then index.
std::vector<long> by_degree(const Eigen::VectorXd& degree, const Eigen::VectorXd& sum) {
  std::vector<long> order(static_cast<std::size_t>(degree.size()));
  std::iota(order.begin(), order.end(), 0L);
  std::stable_sort(order.begin(), order.end(), [&](long a, long b) {
    if (degree(a) != degree(b)) return degree(a) > degree(b);
    return sum(a) > sum(b);
  });
  return order;
}

}  // namespace

Ordering degree_ordering(const Matrix& values) {
  const Matrix filled = (values.array() > 0).cast<double>().matrix();
  Ordering ordering;
  ordering.rows = by_degree(filled.rowwise().sum(), values.rowwise().sum());
  ordering.columns =
      by_degree(filled.colwise().sum().transpose(), values.colwise().sum().transpose());
  return ordering;
}

}  // namespace allocsim::plots
