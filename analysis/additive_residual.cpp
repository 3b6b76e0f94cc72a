#include "allocsim/analysis/additive_residual.hpp"

#include <cassert>
#include <vector>

#include "allocsim/analysis/two_margin_system.hpp"

namespace allocsim {
namespace {

// Residual when the columns are the smaller side.
Matrix residual_columns_smaller(const Matrix& x, const Matrix& w) {
  const Vector r = w.rowwise().sum();
  const Vector c = w.colwise().sum().transpose();
  const Matrix wx = w.cwiseProduct(x);
  const Vector xr = wx.rowwise().sum();
  const Vector xc = wx.colwise().sum().transpose();
  const TwoMarginSolution constants = solve_two_margin_system(w, r, c, xr, xc);
  Matrix residual = x;
  residual.colwise() -= constants.a;
  residual.rowwise() -= constants.b.transpose();
  for (Eigen::Index k = 0; k < residual.size(); ++k)
    if (!(w.data()[k] > 0)) residual.data()[k] = 0;
  return residual;
}

}  // namespace

Matrix additive_residual(const Matrix& values, const Matrix& weights) {
  assert(values.rows() == weights.rows() && values.cols() == weights.cols());
  if (values.cols() <= values.rows()) return residual_columns_smaller(values, weights);
  const Matrix xt = values.transpose();
  const Matrix wt = weights.transpose();
  return residual_columns_smaller(xt, wt).transpose();
}

double conditional_variance(const Matrix& values, const Matrix& weights) {
  const Matrix r = additive_residual(values, weights);
  return weights.cwiseProduct(r).cwiseProduct(r).sum();
}

Eigen::MatrixXd conditional_covariance(const std::vector<Matrix>& features, const Matrix& weights) {
  const auto k = static_cast<Eigen::Index>(features.size());
  std::vector<Matrix> residuals;
  residuals.reserve(features.size());
  for (const Matrix& f : features) residuals.push_back(additive_residual(f, weights));
  Eigen::MatrixXd cov(k, k);
  for (Eigen::Index a = 0; a < k; ++a)
    for (Eigen::Index b = 0; b <= a; ++b)
      cov(a, b) = cov(b, a) = weights.cwiseProduct(residuals[a]).cwiseProduct(residuals[b]).sum();
  return cov;
}

}  // namespace allocsim
