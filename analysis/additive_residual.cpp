#include "allocsim/analysis/additive_residual.hpp"

#include <cassert>
#include <vector>

namespace allocsim {
namespace {

// Residual when the columns are the smaller side: constants for columns are
// solved from the Schur complement S b = rhs, S = diag(c) - W^T diag(1/r) W.
Matrix residual_columns_smaller(const Matrix& x, const Matrix& w) {
  const Vector r = w.rowwise().sum();
  const Vector c = w.colwise().sum().transpose();
  Vector inv_r = Vector::Zero(r.size());
  for (Eigen::Index i = 0; i < r.size(); ++i) inv_r(i) = r(i) > 0 ? 1.0 / r(i) : 0.0;
  const Vector xr = w.cwiseProduct(x).rowwise().sum();
  const Vector xc = w.cwiseProduct(x).colwise().sum().transpose();
  const Matrix scaled = inv_r.asDiagonal() * w;  // rows of W divided by r_i
  Eigen::MatrixXd schur = -(w.transpose() * scaled);
  schur.diagonal() += c;
  const Vector rhs = xc - scaled.transpose() * xr;
  const Vector b = schur.completeOrthogonalDecomposition().solve(rhs);
  const Vector a = inv_r.cwiseProduct(xr - w * b);
  Matrix residual = x;
  residual.colwise() -= a;
  residual.rowwise() -= b.transpose();
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
