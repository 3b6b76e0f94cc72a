#include "allocsim/analysis/compare.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <functional>
#include <limits>
#include <sstream>

#include "allocsim/analysis/exact_transport.hpp"
#include "allocsim/core/error.hpp"

namespace allocsim {

void ComparisonOptions::validate() const {
  if (!(support_threshold >= 0 && support_threshold < 1))
    throw InputError("support_threshold", "must be in [0, 1)");
}

double weight_on_largest_cells(const Matrix& allocation, long k) {
  const double total = allocation.sum();
  if (!(total > 0) || k <= 0) return 0;
  std::vector<double> cells(allocation.data(), allocation.data() + allocation.size());
  const auto keep = std::min<std::size_t>(static_cast<std::size_t>(k), cells.size());
  std::nth_element(cells.begin(), cells.begin() + (keep - 1), cells.end(), std::greater<>());
  double top = 0;
  for (std::size_t c = 0; c < keep; ++c) top += cells[c];
  return std::min(1.0, top / total);
}

Comparison compare_allocation(const Matrix& allocation, const Matrix& coupling,
                              const ComparisonOptions& options) {
  options.validate();
  assert(allocation.rows() == coupling.rows() && allocation.cols() == coupling.cols());
  assert(allocation.sum() > 0 && coupling.sum() > 0);
  const Matrix p = allocation / allocation.sum();
  const Matrix q = coupling / coupling.sum();
  const double t = options.support_threshold;
  Comparison c;
  long both = 0, either = 0;
  double tv = 0, hellinger = 0, kl = 0;
  for (Eigen::Index k = 0; k < p.size(); ++k) {
    const double a = p.data()[k], b = q.data()[k];
    tv += std::abs(a - b);
    const double d = std::sqrt(std::max(a, 0.0)) - std::sqrt(std::max(b, 0.0));
    hellinger += d * d;
    if (a > 0) kl += b > 0 ? a * std::log(a / b) : std::numeric_limits<double>::infinity();
    const bool in_p = a > t, in_q = b > t;
    both += in_p && in_q;
    either += in_p || in_q;
    c.allocation_support_size += in_p;
    c.coupling_support_size += in_q;
    if (in_q) c.weight_on_coupling_support += a;
  }
  c.kl_divergence = std::max(0.0, kl);
  c.total_variation = 0.5 * tv;
  c.hellinger = std::sqrt(0.5 * hellinger);
  c.row_marginal_error = (p.rowwise().sum() - q.rowwise().sum()).cwiseAbs().sum();
  c.column_marginal_error = (p.colwise().sum() - q.colwise().sum()).cwiseAbs().sum();
  c.support_jaccard = either > 0 ? static_cast<double>(both) / either : 1.0;
  c.weight_on_top_links = weight_on_largest_cells(p, static_cast<long>(p.rows() + p.cols() - 1));
  c.allocation_support_is_forest = support_is_forest(p, t);
  c.coupling_support_is_forest = support_is_forest(q, t);
  return c;
}

std::vector<std::pair<std::string, double>> named_values(const Comparison& c) {
  return {{"kl_divergence", c.kl_divergence},
          {"total_variation", c.total_variation},
          {"hellinger", c.hellinger},
          {"row_marginal_error", c.row_marginal_error},
          {"column_marginal_error", c.column_marginal_error},
          {"support_jaccard", c.support_jaccard},
          {"weight_on_coupling_support", c.weight_on_coupling_support},
          {"weight_on_top_links", c.weight_on_top_links},
          {"allocation_support_size", static_cast<double>(c.allocation_support_size)},
          {"coupling_support_size", static_cast<double>(c.coupling_support_size)},
          {"allocation_support_is_forest", c.allocation_support_is_forest ? 1.0 : 0.0},
          {"coupling_support_is_forest", c.coupling_support_is_forest ? 1.0 : 0.0}};
}

std::string Comparison::brief() const {
  std::ostringstream out;
  out.precision(3);
  out << "total variation " << total_variation << ", Hellinger " << hellinger << ", KL ";
  if (std::isfinite(kl_divergence))
    out << kl_divergence;
  else
    out << "infinite";
  out << ", " << 100 * weight_on_coupling_support << "% of the weight on the coupling's "
      << coupling_support_size << " links (Jaccard " << support_jaccard << ")";
  return out.str();
}

}  // namespace allocsim
