#include "fitting/detail/rate_statistics.h"

#include <array>
#include <cmath>
#include <limits>
#include <mutex>

#include <boost/math/distributions/students_t.hpp>

namespace ratewell::detail {
namespace {

constexpr int kCachedDof = 512;

double ComputeStudentT975(int dof) {
  const boost::math::students_t distribution(static_cast<double>(dof));
  return boost::math::quantile(distribution, 0.975);
}

}  // namespace

double StudentT975(int dof) {
  if (dof < 1) return std::numeric_limits<double>::infinity();
  if (dof > kCachedDof) return ComputeStudentT975(dof);
  static std::array<double, kCachedDof + 1> cache;
  static std::once_flag filled;
  std::call_once(filled, [] {
    cache[0] = std::numeric_limits<double>::infinity();
    for (int k = 1; k <= kCachedDof; ++k) cache[k] = ComputeStudentT975(k);
  });
  return cache[dof];
}

LineFit FitLine(const double* x, const double* y, int n) {
  LineFit fit;
  fit.n = n;
  if (n < 2) return fit;
  double mean_x = 0.0, mean_y = 0.0;
  for (int i = 0; i < n; ++i) {
    mean_x += x[i];
    mean_y += y[i];
  }
  mean_x /= n;
  mean_y /= n;
  double sxx = 0.0, sxy = 0.0, syy = 0.0;
  for (int i = 0; i < n; ++i) {
    const double dx = x[i] - mean_x, dy = y[i] - mean_y;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (!(sxx > 0.0)) return fit;
  fit.ok = true;
  fit.slope = sxy / sxx;
  fit.intercept = mean_y - fit.slope * mean_x;
  double ssr = 0.0;
  for (int i = 0; i < n; ++i) {
    const double r = y[i] - fit.intercept - fit.slope * x[i];
    ssr += r * r;
  }
  fit.ssr = ssr;
  fit.r_squared = syy > 0.0 ? std::max(0.0, 1.0 - ssr / syy) : 0.0;
  fit.slope_se = n > 2 ? std::sqrt(ssr / (n - 2) / sxx)
                       : std::numeric_limits<double>::infinity();
  return fit;
}

double SecondDifferenceVariance(const double* y, int n) {
  if (n < 3) return 0.0;
  double sum = 0.0;
  for (int i = 1; i + 1 < n; ++i) {
    const double d2 = y[i + 1] - 2.0 * y[i] + y[i - 1];
    sum += d2 * d2;
  }
  return sum / (6.0 * (n - 2));
}

}  // namespace ratewell::detail
