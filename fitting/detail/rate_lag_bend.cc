#include "fitting/detail/rate_lag_bend.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include <Eigen/Cholesky>
#include <Eigen/Core>
#include <boost/math/tools/minima.hpp>

#include "fitting/detail/rate_statistics.h"

namespace ratewell::detail {
namespace {

// e^(−x) is below 4e-18 for x > 40: such points add nothing to the sums.
constexpr double kNegligibleExponent = 40.0;
// Coarse grid for τ: τ_hi·2^(−k), k = 0 … kGridSteps − 1, plus τ = 0.
constexpr int kGridSteps = 10;
// Brent search: relative tolerance 2^(1 − kBrentBits) on θ, at most
// kBrentIterations evaluations.
constexpr int kBrentBits = 16;
constexpr std::uintmax_t kBrentIterations = 40;

struct Solved {
  Eigen::Matrix3d gram_data;   // XᵀX (no prior)
  Eigen::Vector3d rhs_data;    // Xᵀy
  Eigen::Vector3d beta;        // penalised solution
  double objective = 0.0;      // penalised sum of squares
  bool ok = false;
};

}  // namespace

LagBendFitter::LagBendFitter(const std::vector<double>& t, const std::vector<double>& y)
    : t_(t), y_(y) {
  const std::size_t n = t_.size();
  for (auto& p : prefix_t_) p.assign(n + 1, 0.0);
  for (auto& p : prefix_y_) p.assign(n + 1, 0.0);
  prefix_yy_.assign(n + 1, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    const double ti = t_[i], yi = y_[i];
    double power = 1.0;
    for (int k = 0; k < 5; ++k) {
      prefix_t_[k][i + 1] = prefix_t_[k][i] + power;
      if (k < 3) prefix_y_[k][i + 1] = prefix_y_[k][i] + yi * power;
      power *= ti;
    }
    prefix_yy_[i + 1] = prefix_yy_[i] + yi * yi;
  }
  if (n >= 3) {
    step_ = (t_[n - 1] - t_[0]) / static_cast<double>(n - 1);
    uniform_ = step_ > 0.0;
    for (std::size_t i = 1; i < n && uniform_; ++i) {
      const double expected = t_[0] + step_ * static_cast<double>(i);
      uniform_ = std::abs(t_[i] - expected) <= 1e-9 * std::max(1.0, std::abs(expected));
    }
  }
}

void LagBendFitter::ExpSums(int end, double tau, double scale, double* e0, double* e1,
                            double* e2, double* ee, double* ey) const {
  double s0 = 0.0, s1 = 0.0, s2 = 0.0, s_ee = 0.0, s_ey = 0.0;
  const double inv_tau = 1.0 / tau, inv_scale = 1.0 / scale;
  double e = std::exp(-t_[0] * inv_tau);
  const double ratio = uniform_ ? std::exp(-step_ * inv_tau) : 0.0;
  for (int i = 0; i < end; ++i) {
    const double ti = t_[i];
    if (ti * inv_tau > kNegligibleExponent) break;
    if (!uniform_) e = std::exp(-ti * inv_tau);
    const double u = ti * inv_scale;
    s0 += e;
    s1 += u * e;
    s2 += u * u * e;
    s_ee += e * e;
    s_ey += y_[i] * e;
    if (uniform_) e *= ratio;
  }
  *e0 = s0;
  *e1 = s1;
  *e2 = s2;
  *ee = s_ee;
  *ey = s_ey;
}

LagBendResult LagBendFitter::Fit(int end, const LagBendSettings& settings) const {
  LagBendResult result;
  end = std::min(end, size());
  result.n = end;
  if (end < 3) return result;
  const double scale = t_[end - 1];
  if (!(scale > 0.0)) return result;

  const bool has_c = settings.bend != BendTerm::kNone;
  const bool has_prior = settings.bend == BendTerm::kPrior;
  const double n = static_cast<double>(end);
  double s[5], b[3];
  double inv_power = 1.0;
  for (int k = 0; k < 5; ++k) {
    s[k] = prefix_t_[k][end] * inv_power;
    if (k < 3) b[k] = prefix_y_[k][end] * inv_power;
    inv_power /= scale;
  }
  const double yy = prefix_yy_[end];
  // Prior in scaled units: c_s = c·T².
  double weight = 0.0, mean_scaled = 0.0;
  if (has_prior && settings.c_prior_sd > 0.0 && settings.noise_variance > 0.0) {
    const double sd_scaled = settings.c_prior_sd * scale * scale;
    mean_scaled = settings.c_prior_mean * scale * scale;
    weight = settings.noise_variance / (sd_scaled * sd_scaled);
  }
  const double tau_hi = settings.fit_lag ? std::min(settings.tau_max_min, scale / 3.0) : 0.0;
  const double theta_hi = std::max(0.0, tau_hi / scale);

  auto solve = [&](double theta) {
    Solved out;
    double e0 = 0.0, e1 = 0.0, e2 = 0.0, ee = 0.0, ey = 0.0;
    if (theta > 0.0) ExpSums(end, theta * scale, scale, &e0, &e1, &e2, &ee, &ey);
    Eigen::Matrix4d g;
    g << n, s[1], s[2], e0,
         s[1], s[2], s[3], e1,
         s[2], s[3], s[4], e2,
         e0, e1, e2, ee;
    const Eigen::Vector4d gb(b[0], b[1], b[2], ey);
    // Columns of the design in the basis (1, u, u², E): 1, L1, −L2.
    Eigen::Matrix<double, 4, 3> basis;
    const double t2 = theta * theta;
    basis << 1.0, -theta, -2.0 * t2,
             0.0, 1.0, 2.0 * theta,
             0.0, 0.0, -1.0,
             0.0, theta, 2.0 * t2;
    out.gram_data = basis.transpose() * g * basis;
    out.rhs_data = basis.transpose() * gb;
    if (!has_c) {
      out.gram_data.row(2).setZero();
      out.gram_data.col(2).setZero();
      out.gram_data(2, 2) = 1.0;
      out.rhs_data(2) = 0.0;
    }
    Eigen::Matrix3d a = out.gram_data;
    Eigen::Vector3d r = out.rhs_data;
    a(2, 2) += weight;
    r(2) += weight * mean_scaled;
    const Eigen::LDLT<Eigen::Matrix3d> ldlt(a);
    if (ldlt.info() != Eigen::Success) return out;
    out.beta = ldlt.solve(r);
    if (!out.beta.allFinite()) return out;
    out.objective = yy - r.dot(out.beta) + weight * mean_scaled * mean_scaled;
    out.ok = true;
    return out;
  };

  // Profile over θ = τ/T (or τ held).
  double theta_best = settings.fit_lag ? 0.0 : std::max(0.0, settings.known_tau_min) / scale;
  Solved best = solve(theta_best);
  if (theta_hi > 0.0) {
    double grid[kGridSteps + 1];
    double value[kGridSteps + 1];
    grid[0] = 0.0;
    value[0] = best.ok ? best.objective : std::numeric_limits<double>::infinity();
    int k_best = 0;
    for (int k = 1; k <= kGridSteps; ++k) {
      grid[k] = theta_hi * std::ldexp(1.0, -(kGridSteps - k));  // ascending
      const Solved trial = solve(grid[k]);
      value[k] = trial.ok ? trial.objective : std::numeric_limits<double>::infinity();
      if (value[k] < value[k_best]) k_best = k;
    }
    const double lo = grid[std::max(0, k_best - 1)];
    const double hi = grid[std::min(kGridSteps, k_best + 1)];
    std::uintmax_t iterations = kBrentIterations;
    const auto found = boost::math::tools::brent_find_minima(
        [&](double theta) {
          const Solved trial = solve(theta);
          return trial.ok ? trial.objective : std::numeric_limits<double>::infinity();
        },
        lo, hi, kBrentBits, iterations);
    theta_best = grid[k_best];
    double value_best = value[k_best];
    if (found.second < value_best) {
      theta_best = found.first;
      value_best = found.second;
    }
    best = solve(theta_best);
  }
  if (!best.ok) return result;
  const double theta = theta_best;
  if (settings.estimates_only) {
    result.p0 = best.beta(0);
    result.v = best.beta(1) / scale;
    result.c = has_c ? best.beta(2) / (scale * scale) : 0.0;
    result.tau = theta * scale;
    result.ok = std::isfinite(result.v);
    return result;
  }
  result.tau_at_upper = theta_hi > 0.0 && theta >= theta_hi * (1.0 - 1e-9);
  result.tau_fixed = theta_hi <= 0.0;
  // At τ = 0 the derivative with respect to τ is a pure offset (all points
  // after the first move together), so the one-sided information there says
  // nothing about how τ and v trade off. The covariance therefore takes the
  // Jacobian's τ column half a read interval above the bound: a lag that
  // short is what the data cannot rule out.
  double theta_jacobian = theta;
  if (theta <= 0.0 && theta_hi > 0.0) {
    const double interval = (t_[end - 1] - t_[0]) / std::max(1, end - 1);
    theta_jacobian = std::min(theta_hi, 0.5 * interval / scale);
  }

  // Residuals, sums of squares and the Jacobian at the optimum.
  const Eigen::Vector3d& beta = best.beta;
  const double mean_y = b[0] / n;
  const double inv_scale = 1.0 / scale;
  double ssr = 0.0, sst = 0.0;
  Eigen::Matrix4d jtj = Eigen::Matrix4d::Zero();
  int positives = 0, negatives = 0, runs = 0, last_sign = 0;
  for (int i = 0; i < end; ++i) {
    const double u = t_[i] * inv_scale;
    double l1 = u, l2 = u * u, d1 = 0.0, d2 = 0.0;
    if (theta > 0.0) {
      const double x = u / theta;
      const double e = x > kNegligibleExponent ? 0.0 : std::exp(-x);
      l1 = u - theta + theta * e;
      l2 = u * u - 2.0 * theta * u + 2.0 * theta * theta * (1.0 - e);
    }
    if (theta_jacobian > 0.0) {
      const double tj = theta_jacobian;
      const double x = u / tj;
      const double e = x > kNegligibleExponent ? 0.0 : std::exp(-x);
      d1 = -1.0 + e + x * e;
      d2 = -2.0 * u + 4.0 * tj * (1.0 - e) - 2.0 * u * e;
    }
    const double residual = y_[i] - (beta(0) + beta(1) * l1 - beta(2) * l2);
    ssr += residual * residual;
    sst += (y_[i] - mean_y) * (y_[i] - mean_y);
    const Eigen::Vector4d row(1.0, l1, -l2, beta(1) * d1 - beta(2) * d2);
    jtj.noalias() += row * row.transpose();
    const int sign = residual > 0.0 ? 1 : (residual < 0.0 ? -1 : 0);
    if (sign != 0) {
      (sign > 0 ? positives : negatives)++;
      if (sign != last_sign) ++runs;
      last_sign = sign;
    }
  }
  result.ssr = ssr;
  result.sst = sst;
  if (positives > 0 && negatives > 0) {
    const double np = positives, nm = negatives, total = np + nm;
    const double expected = 2.0 * np * nm / total + 1.0;
    const double variance =
        2.0 * np * nm * (2.0 * np * nm - total) / (total * total * (total - 1.0));
    if (variance > 0.0) result.runs_z = (runs - expected) / std::sqrt(variance);
  }

  // Covariance s²·(JᵀJ + prior)⁻¹ over the free parameters.
  using SmallMatrix = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, 0, 4, 4>;
  struct Index {
    int column[4];
    int size = 0;
    int operator[](int k) const { return column[k]; }
  };
  auto covariance = [&](bool tau_free, SmallMatrix* cov, Index* index) {
    index->size = 0;
    index->column[index->size++] = 0;
    index->column[index->size++] = 1;
    if (has_c) index->column[index->size++] = 2;
    if (tau_free) index->column[index->size++] = 3;
    const int p = index->size;
    SmallMatrix gram(p, p);
    for (int r = 0; r < p; ++r)
      for (int c = 0; c < p; ++c) gram(r, c) = jtj((*index)[r], (*index)[c]);
    if (has_c) gram(2, 2) += weight;
    return InvertGram(gram, cov);
  };
  SmallMatrix inverse;
  Index index;
  bool tau_free = !result.tau_fixed;
  if (!covariance(tau_free, &inverse, &index)) {
    if (!tau_free) return result;
    tau_free = false;
    result.tau_fixed = true;
    if (!covariance(false, &inverse, &index)) return result;
  }
  const int p = index.size;
  result.num_parameters = p;
  result.dof = end - p;
  if (result.dof < 1) return result;
  const double s2 = ssr / result.dof;
  result.p0 = beta(0);
  result.v = beta(1) * inv_scale;
  result.c = has_c ? beta(2) * inv_scale * inv_scale : 0.0;
  result.tau = theta * scale;
  result.se_v = std::sqrt(s2 * inverse(1, 1)) * inv_scale;
  if (has_c) result.se_c = std::sqrt(s2 * inverse(2, 2)) * inv_scale * inv_scale;
  if (tau_free) result.se_tau = std::sqrt(s2 * inverse(p - 1, p - 1)) * scale;

  if (has_c) {
    // Free curvature at this τ (τ held), for the linearity check.
    const Eigen::LDLT<Eigen::Matrix3d> ldlt(best.gram_data);
    if (ldlt.info() == Eigen::Success) {
      const Eigen::Vector3d free_beta = ldlt.solve(best.rhs_data);
      const Eigen::Vector3d unit_c = ldlt.solve(Eigen::Vector3d(0.0, 0.0, 1.0));
      if (free_beta.allFinite() && unit_c(2) > 0.0) {
        result.c_free = free_beta(2) * inv_scale * inv_scale;
        result.se_c_free = std::sqrt(s2 * unit_c(2)) * inv_scale * inv_scale;
      }
    }
  }
  result.ok = std::isfinite(result.v) && std::isfinite(result.se_v);
  return result;
}

}  // namespace ratewell::detail
