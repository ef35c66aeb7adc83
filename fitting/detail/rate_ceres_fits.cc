#include "fitting/detail/rate_ceres_fits.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>

#include <Eigen/Core>
#include <ceres/ceres.h>

#include "fitting/detail/rate_lambert.h"
#include "fitting/detail/rate_statistics.h"

namespace ratewell::detail {
namespace {

// Below this τ (min) the lag is evaluated at τ + kTinyTau, which keeps the
// derivative with respect to τ right at τ = 0 and avoids 0/0 at t = 0.
constexpr double kTinyTau = 1e-12;
// Solver tolerances (TOOLCHAIN.md: the defaults stop small fits early).
constexpr double kTolerance = 1e-12;
constexpr int kMaxIterations = 200;

inline double Scalar(double x) { return x; }
template <typename T, int N>
double Scalar(const ceres::Jet<T, N>& x) {
  return x.a;
}

template <typename T>
T EffectiveTau(const T& tau) {
  return Scalar(tau) < kTinyTau ? tau + T(kTinyTau) : tau;
}

// One read of the McClure lag model (2).
struct LagResidual {
  LagResidual(double t, double y) : t_(t), y_(y) {}
  template <typename T>
  bool operator()(const T* p0, const T* v, const T* tau, T* residual) const {
    using std::exp;
    const T tau_eff = EffectiveTau(tau[0]);
    const T l1 = T(t_) - tau_eff * (T(1.0) - exp(-T(t_) / tau_eff));
    residual[0] = p0[0] + v[0] * l1 - T(y_);
    return true;
  }
  const double t_, y_;
};

// The integration grid of the progress curve: 0, every read time, and steps of
// at most kProgressStepMin between them; read_index[i] is the grid point of read i.
struct ProgressGrid {
  std::vector<double> time;
  std::vector<int> read_index;
};

ProgressGrid MakeGrid(const std::vector<double>& t, int end) {
  ProgressGrid grid;
  grid.time.push_back(0.0);
  grid.read_index.reserve(end);
  for (int i = 0; i < end; ++i) {
    const double target = std::max(0.0, t[i]);
    const double last = grid.time.back();
    if (target > last) {
      const int steps = static_cast<int>(std::ceil((target - last) / kProgressStepMin));
      for (int k = 1; k < steps; ++k) grid.time.push_back(last + (target - last) * k / steps);
      grid.time.push_back(target);
    }
    grid.read_index.push_back(static_cast<int>(grid.time.size()) - 1);
  }
  return grid;
}

// Detected product over the grid for the progress model; calls sink(read, D).
template <typename T, typename Sink>
void IntegrateProgress(const ProgressGrid& grid, const T& s0, const T& v0, const T& e,
                       const T& tau, bool with_lag, Sink sink) {
  using std::exp;
  const double s0_value = Scalar(s0), v0_value = Scalar(v0), e_value = Scalar(e);
  const T tau_eff = EffectiveTau(tau);
  T detected(0.0), previous(0.0);
  std::size_t read = 0;
  for (std::size_t g = 0; g < grid.time.size(); ++g) {
    const double time = grid.time[g];
    const double y_value = SubstrateExponent(time, s0_value, v0_value, e_value);
    const T product = s0 - SubstrateRemaining(T(time), s0, v0, e, y_value);
    if (g == 0 || !with_lag) {
      detected = product;
    } else {
      const double h = time - grid.time[g - 1];
      const T a = exp(-T(h) / tau_eff);
      detected = product - (product - previous) * (tau_eff / h) * (T(1.0) - a) +
                 (detected - previous) * a;
    }
    previous = product;
    while (read < grid.read_index.size() &&
           grid.read_index[read] == static_cast<int>(g)) {
      sink(read, detected);
      ++read;
    }
  }
}

struct ProgressResidual {
  ProgressResidual(const std::vector<double>& t, const std::vector<double>& y, int end,
                   double s0, bool with_lag)
      : grid_(MakeGrid(t, end)), y_(y.begin(), y.begin() + end), s0_(s0),
        with_lag_(with_lag) {}
  template <typename T>
  bool operator()(const T* p0, const T* v0, const T* e, const T* tau, T* residual) const {
    IntegrateProgress(grid_, T(s0_), v0[0], e[0], tau[0], with_lag_,
                      [&](std::size_t read, const T& detected) {
                        residual[read] = p0[0] + detected - T(y_[read]);
                      });
    return true;
  }
  const ProgressGrid grid_;
  const std::vector<double> y_;
  const double s0_;
  const bool with_lag_;
};

ceres::Solver::Options SolverOptions() {
  ceres::Solver::Options options;
  options.linear_solver_type = ceres::DENSE_QR;
  options.function_tolerance = kTolerance;
  options.gradient_tolerance = kTolerance;
  options.parameter_tolerance = kTolerance;
  options.max_num_iterations = kMaxIterations;
  options.logging_type = ceres::SILENT;
  options.minimizer_progress_to_stdout = false;
  return options;
}

struct PriorResidual {
  explicit PriorResidual(const ElasticityPrior& prior)
      : mean_(prior.mean), weight_(prior.noise_sd / prior.sd) {}
  template <typename T>
  bool operator()(const T* e, T* residual) const {
    residual[0] = T(weight_) * (e[0] - T(mean_));
    return true;
  }
  const double mean_, weight_;
};

// Residuals and Jacobian at the solution; covariance over the columns listed.
// The SSR counts the first data_residuals residuals (the data, not priors).
bool Covariance(ceres::Problem* problem, const std::vector<int>& free_columns,
                int data_residuals, double* ssr, int* n, Eigen::MatrixXd* cov_unscaled) {
  double cost = 0.0;
  std::vector<double> residuals;
  ceres::CRSMatrix jacobian;
  if (!problem->Evaluate(ceres::Problem::EvaluateOptions(), &cost, &residuals, nullptr,
                         &jacobian)) {
    return false;
  }
  *n = std::min(data_residuals, static_cast<int>(residuals.size()));
  *ssr = 0.0;
  for (int i = 0; i < *n; ++i) *ssr += residuals[i] * residuals[i];
  Eigen::MatrixXd dense = Eigen::MatrixXd::Zero(jacobian.num_rows, jacobian.num_cols);
  for (int row = 0; row < jacobian.num_rows; ++row) {
    for (int k = jacobian.rows[row]; k < jacobian.rows[row + 1]; ++k) {
      dense(row, jacobian.cols[k]) = jacobian.values[k];
    }
  }
  Eigen::MatrixXd selected(dense.rows(), static_cast<int>(free_columns.size()));
  for (std::size_t c = 0; c < free_columns.size(); ++c) {
    selected.col(c) = dense.col(free_columns[c]);
  }
  const Eigen::MatrixXd gram = selected.transpose() * selected;
  return InvertGram(gram, cov_unscaled);
}

bool AtBound(double value, double bound) {
  return std::abs(value - bound) <= 1e-9 * std::max(1.0, std::abs(bound));
}

}  // namespace

CeresRateFit FitLagWithCeres(const std::vector<double>& t, const std::vector<double>& y,
                             int end, double p0, double v, double tau, double tau_max) {
  CeresRateFit fit;
  fit.n = end;
  if (end < 4) {
    fit.message = "the lag model needs at least 4 points";
    return fit;
  }
  double p0_block = p0, v_block = v;
  // τ_max = 0: τ held at the value given.
  double tau_block = tau_max > 0.0 ? std::clamp(tau, 0.0, tau_max) : std::max(0.0, tau);
  ceres::Problem problem;
  for (int i = 0; i < end; ++i) {
    problem.AddResidualBlock(
        new ceres::AutoDiffCostFunction<LagResidual, 1, 1, 1, 1>(new LagResidual(t[i], y[i])),
        nullptr, &p0_block, &v_block, &tau_block);
  }
  if (tau_max > 0.0) {
    problem.SetParameterLowerBound(&tau_block, 0, 0.0);
    problem.SetParameterUpperBound(&tau_block, 0, tau_max);
  } else {
    problem.SetParameterBlockConstant(&tau_block);
  }
  ceres::Solver::Summary summary;
  ceres::Solve(SolverOptions(), &problem, &summary);
  if (!summary.IsSolutionUsable()) {
    fit.message = "the lag fit failed: " + summary.message;
    return fit;
  }
  fit.p0 = p0_block;
  fit.v = v_block;
  fit.tau = tau_block;
  fit.tau_at_upper = tau_max > 0.0 && AtBound(tau_block, tau_max);
  // τ stays in the covariance even at a bound (a one-sided estimate is no
  // more certain than a free one); it is held only when the data cannot
  // pin it down at all (singular JᵀJ, e.g. a flat trace).
  std::vector<int> columns = {0, 1};
  if (tau_max > 0.0) columns.push_back(2);
  Eigen::MatrixXd inverse;
  int n = 0;
  if (!Covariance(&problem, columns, end, &fit.ssr, &n, &inverse)) {
    if (columns.size() == 2) {
      fit.message = "the lag fit's covariance is singular";
      return fit;
    }
    columns.pop_back();
    if (!Covariance(&problem, columns, end, &fit.ssr, &n, &inverse)) {
      fit.message = "the lag fit's covariance is singular";
      return fit;
    }
  }
  fit.tau_fixed = columns.size() == 2;
  fit.num_parameters = static_cast<int>(columns.size());
  fit.dof = end - fit.num_parameters;
  const double s2 = fit.ssr / fit.dof;
  fit.se_v = std::sqrt(s2 * inverse(1, 1));
  if (!fit.tau_fixed) fit.se_tau = std::sqrt(s2 * inverse(2, 2));
  fit.ok = std::isfinite(fit.v) && std::isfinite(fit.se_v);
  if (!fit.ok) fit.message = "the lag fit gave a non-finite rate";
  return fit;
}

CeresRateFit FitProgressWithCeres(const std::vector<double>& t, const std::vector<double>& y,
                                  int end, double s0, double p0, double v0, double elasticity,
                                  double tau, double tau_max, const ElasticityPrior& prior) {
  CeresRateFit fit;
  fit.n = end;
  if (end < 5) {
    fit.message = "the progress curve needs at least 5 points";
    return fit;
  }
  // τ_max = 0: τ held at the value given (no lag when that is 0).
  const bool fit_tau = tau_max > 0.0;
  const bool with_lag = fit_tau || tau > 0.0;
  double p0_block = p0, v_block = v0;
  double e_block = std::clamp(elasticity, kMinElasticity, kMaxElasticity);
  double tau_block = fit_tau ? std::clamp(tau, 0.0, tau_max) : std::max(0.0, tau);
  ceres::Problem problem;
  auto* cost = new ceres::AutoDiffCostFunction<ProgressResidual, ceres::DYNAMIC, 1, 1, 1, 1>(
      new ProgressResidual(t, y, end, s0, with_lag), end);
  problem.AddResidualBlock(cost, nullptr, &p0_block, &v_block, &e_block, &tau_block);
  if (prior.enabled && prior.noise_sd > 0.0 && prior.sd > 0.0) {
    problem.AddResidualBlock(
        new ceres::AutoDiffCostFunction<PriorResidual, 1, 1>(new PriorResidual(prior)), nullptr,
        &e_block);
  }
  problem.SetParameterLowerBound(&e_block, 0, kMinElasticity);
  problem.SetParameterUpperBound(&e_block, 0, kMaxElasticity);
  if (fit_tau) {
    problem.SetParameterLowerBound(&tau_block, 0, 0.0);
    problem.SetParameterUpperBound(&tau_block, 0, tau_max);
  } else {
    problem.SetParameterBlockConstant(&tau_block);
  }
  ceres::Solver::Summary summary;
  ceres::Solve(SolverOptions(), &problem, &summary);
  if (!summary.IsSolutionUsable()) {
    fit.message = "the progress-curve fit failed: " + summary.message;
    return fit;
  }
  fit.p0 = p0_block;
  fit.v = v_block;
  fit.elasticity = e_block;
  fit.tau = tau_block;
  fit.tau_at_upper = fit_tau && AtBound(tau_block, tau_max);
  // e and τ stay in the covariance even at a bound: noise often drives e to
  // 0 or 1, and holding it there would understate the SE of v0 several-fold.
  // A parameter the data cannot pin down at all (singular JᵀJ) is held at its
  // estimate, τ first, then e.
  std::vector<int> columns = {0, 1, 2};
  if (fit_tau) columns.push_back(3);
  Eigen::MatrixXd inverse;
  int n = 0;
  bool have = Covariance(&problem, columns, end, &fit.ssr, &n, &inverse);
  if (!have && fit_tau) {
    columns.erase(std::find(columns.begin(), columns.end(), 3));
    have = Covariance(&problem, columns, end, &fit.ssr, &n, &inverse);
  }
  if (!have) {
    columns.erase(std::find(columns.begin(), columns.end(), 2));
    have = Covariance(&problem, columns, end, &fit.ssr, &n, &inverse);
  }
  fit.tau_fixed = std::find(columns.begin(), columns.end(), 3) == columns.end();
  fit.elasticity_fixed = std::find(columns.begin(), columns.end(), 2) == columns.end();
  if (!have) {
    fit.message = "the progress-curve fit's covariance is singular";
    return fit;
  }
  fit.num_parameters = static_cast<int>(columns.size());
  fit.dof = end - fit.num_parameters;
  const double s2 = fit.ssr / fit.dof;
  fit.se_v = std::sqrt(s2 * inverse(1, 1));
  for (std::size_t c = 2; c < columns.size(); ++c) {
    const double se = std::sqrt(s2 * inverse(c, c));
    (columns[c] == 2 ? fit.se_elasticity : fit.se_tau) = se;
  }
  fit.ok = std::isfinite(fit.v) && std::isfinite(fit.se_v);
  if (!fit.ok) fit.message = "the progress-curve fit gave a non-finite rate";
  return fit;
}

std::vector<double> ProgressCurve(const std::vector<double>& t, double s0, double v0,
                                  double elasticity, double tau) {
  const ProgressGrid grid = MakeGrid(t, static_cast<int>(t.size()));
  std::vector<double> out(t.size(), 0.0);
  IntegrateProgress(grid, s0, v0, elasticity, tau, tau > 0.0,
                    [&](std::size_t read, double detected) { out[read] = detected; });
  return out;
}

}  // namespace ratewell::detail
