// Small statistics used by the rate code (fitting/rates.h): Student t
// quantiles, ordinary least-squares lines, a noise estimate and a guarded
// covariance from a Gram matrix.
#pragma once

#include <cmath>

#include <Eigen/Core>
#include <Eigen/Eigenvalues>

namespace ratewell::detail {

// The 0.975 quantile of Student's t with `dof` degrees of freedom (Boost.Math,
// cached per dof). dof ≥ 1; dof < 1 gives +infinity.
double StudentT975(int dof);

// Ordinary least squares y = intercept + slope·x over n points.
struct LineFit {
  bool ok = false;           // false when n < 2 or all x are equal
  double slope = 0.0;
  double intercept = 0.0;
  double slope_se = 0.0;     // sqrt(s² / Sxx), s² = SSR/(n − 2); +inf when n = 2
  double ssr = 0.0;
  double r_squared = 0.0;    // 0 when y is constant (scipy.stats.linregress convention)
  int n = 0;
};
// Centred sums (two passes), so long time axes lose no precision.
LineFit FitLine(const double* x, const double* y, int n);

// Noise variance of y from second differences, σ² ≈ Σ(y[i+1] − 2y[i] + y[i−1])²
// / (6·(n − 2)): a straight trend cancels exactly, curvature nearly. For
// roughly even spacing. 0 when n < 3.
double SecondDifferenceVariance(const double* y, int n);

// Inverse of a symmetric positive semi-definite Gram matrix, or false when it
// is numerically singular (after scaling to unit diagonal, smallest
// eigenvalue ≤ 1e-13 × largest, or not finite). Matrix is an Eigen matrix
// type (dynamic, or with fixed maximum size to avoid allocation).
template <typename Matrix>
bool InvertGram(const Matrix& gram, Matrix* inverse) {
  using Vector = Eigen::Matrix<double, Matrix::RowsAtCompileTime, 1, 0,
                               Matrix::MaxRowsAtCompileTime, 1>;
  if (gram.rows() == 0 || !gram.allFinite()) return false;
  Vector d = gram.diagonal();
  for (int i = 0; i < d.size(); ++i) {
    if (!(d[i] > 0.0)) return false;
    d[i] = 1.0 / std::sqrt(d[i]);
  }
  const Matrix scaled = d.asDiagonal() * gram * d.asDiagonal();
  Eigen::SelfAdjointEigenSolver<Matrix> eigen(scaled);
  if (eigen.info() != Eigen::Success) return false;
  const Vector lambda = eigen.eigenvalues();
  if (!(lambda.minCoeff() > 1e-13 * lambda.maxCoeff())) return false;
  const Vector inverse_lambda = lambda.cwiseInverse();
  const Matrix scaled_inverse =
      eigen.eigenvectors() * inverse_lambda.asDiagonal() * eigen.eigenvectors().transpose();
  *inverse = d.asDiagonal() * scaled_inverse * d.asDiagonal();
  return true;
}

}  // namespace ratewell::detail
