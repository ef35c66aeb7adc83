// The generic least-squares engine behind FitKineticModel, without Ceres in
// the interface (fit_engine.h adds the templates that need it).
//
// A ResidualSource is a model bound to its covariates: it predicts
// observation i from the parameter vector θ (p scalars, each its own Ceres
// parameter block so it can be held or bounded). ResidualData says which
// observation each residual uses, with what response and weight, so the same
// source serves the fit, the bootstrap (new responses, or resampled
// observations) and the profile. LeastSquaresProblem owns one ceres::Problem
// that can be re-solved with parameters held at chosen values.
#pragma once

#include <cstdint>
#include <functional>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include <Eigen/Core>

#include "fitting/nonlinear_fit.h"

namespace ceres {
class CostFunction;
}

namespace ratewell::detail {

// Residual k is √w_k·(response_k − f(observation_k; θ)).
struct ResidualData {
  std::vector<int> observation;
  std::vector<double> response;
  std::vector<double> sqrt_weight;

  int size() const { return static_cast<int>(response.size()); }
  // Residual k uses observation k, weight 1 unless sqrt_weight is given.
  static ResidualData Identity(const std::vector<double>& response,
                               const std::vector<double>& sqrt_weight = {});
};

// Inside the model θ[target] is replaced by factor·θ[base] (profiling the
// ratio θ[target]/θ[base]). Inactive when target < 0.
struct Substitution {
  int target = -1;
  int base = -1;
  double factor = 0.0;
  bool active() const { return target >= 0; }
};

// Refits the free parameters of θ to new residual data with a small dense
// Levenberg–Marquardt (ceres/tiny_solver.h); for the bootstrap. Not thread
// safe: one per thread.
class Refitter {
 public:
  virtual ~Refitter() = default;
  // theta holds all p values (held ones stay); returns false when the solver
  // fails or stops without converging.
  virtual bool Refit(const ResidualData& data, double* theta) = 0;
};

class ResidualSource {
 public:
  virtual ~ResidualSource() = default;
  virtual int num_parameters() const = 0;
  virtual int num_observations() const = 0;
  // f(observation; θ) in double; false when the model is undefined there.
  virtual bool Predict(int observation, const double* theta, double* value) const = 0;
  // A cost function over residuals [begin, end) of *data, with
  // num_parameters() blocks of size 1. The caller owns it; *this, *data and
  // *substitution (may be null) must outlive it.
  virtual ceres::CostFunction* NewCostFunction(const ResidualData* data, int begin, int end,
                                               const Substitution* substitution) const = 0;
  // A refitter for the parameters `free` (indices into θ); the ones with
  // log_scale[j] are searched as ln θⱼ, which keeps them > 0 (upper bounds
  // are the caller's to check). nullptr when
  // there are too many free parameters for the small solver.
  virtual std::unique_ptr<Refitter> NewRefitter(const std::vector<int>& free,
                                                const std::vector<bool>& log_scale) const = 0;
};

struct ParameterSpec {
  std::string name;
  double start = 0.0;
  double lower = -std::numeric_limits<double>::infinity();
  double upper = std::numeric_limits<double>::infinity();
  bool fixed = false;
};

struct EngineOptions {
  RobustLoss loss = RobustLoss::kNone;
  double loss_scale = 1.0;
  double function_tolerance = 1e-12;
  double gradient_tolerance = 1e-12;
  double parameter_tolerance = 1e-12;
  int max_iterations = 200;
  // Ceres' initial trust region radius (its default): large means the first
  // step is nearly Gauss–Newton.
  double initial_trust_region_radius = 1e4;
  // Gauss–Newton steps after a converged solve (none with a robust loss):
  // they take the solution from the solver's stopping point (≈ 1e-10
  // relative, where the cost is flat to rounding) to the stationary point.
  int polish_steps = 10;
  // Every solver iteration: (iteration, cost); false aborts the solve.
  std::function<bool(int, double)> iteration_callback;
};

struct EngineSolution {
  std::vector<double> theta;
  FitTermination termination = FitTermination::kNotRun;
  std::string message;
  int iterations = 0;
  int polish_steps = 0;  // Gauss–Newton steps taken after the solver
  double initial_cost = -1.0;  // Ceres cost ½Σρ(u²) at the start
  double cost = -1.0;          // at the end
  double ssr = -1.0;           // Σ u², u = √w·(y − f), whatever the loss
  double objective = -1.0;     // 2·cost: SSR without a loss, Σρ with one
  double seconds = 0.0;
  bool usable() const {
    return termination == FitTermination::kConvergence ||
           termination == FitTermination::kNoConvergence;
  }
};

struct CovarianceEstimate {
  bool ok = false;
  std::string reason;          // why not ok
  std::vector<int> free;       // θ indices of the matrix rows
  Eigen::MatrixXd covariance;  // s²·(JᵀWJ)⁻¹ over `free`
  double s2 = 0.0;
  int rank = 0;
  // Reciprocal condition number of the column-scaled Jacobian.
  double rcond = 0.0;
};

// One Ceres problem over a source and data, re-solvable with parameters held.
class LeastSquaresProblem {
 public:
  // specs[j] gives θⱼ's start, bounds and whether it is fixed. Starts
  // outside the bounds are moved onto them.
  LeastSquaresProblem(const ResidualSource& source, const ResidualData& data,
                      std::vector<ParameterSpec> specs, EngineOptions options);
  ~LeastSquaresProblem();
  LeastSquaresProblem(const LeastSquaresProblem&) = delete;
  LeastSquaresProblem& operator=(const LeastSquaresProblem&) = delete;

  // Makes θ[target] = factor·θ[base] in the model (target is then held);
  // set_ratio_factor changes the factor between solves. Call before Solve.
  void EnableRatio(int target, int base);
  void set_ratio_factor(double factor);
  void set_initial_trust_region_radius(double radius);
  // Replaces EngineOptions::iteration_callback (empty: none).
  void set_iteration_callback(std::function<bool(int, double)> callback);

  const std::vector<double>& values() const;
  void SetValues(const std::vector<double>& theta);
  // Hold θⱼ at value (inside its bounds) / release it again.
  void Hold(int j, double value);
  void Release(int j);
  bool IsHeld(int j) const;

  // Solves from the current values.
  EngineSolution Solve();
  // The objective (2·cost) and SSR at the current values, without solving.
  bool Evaluate(double* objective, double* ssr) const;
  // Weighted residuals u_k = √w_k·(y_k − f_k) and predictions f_k at the
  // current values.
  bool Residuals(std::vector<double>* weighted, std::vector<double>* predicted) const;
  // s²·(JᵀWJ)⁻¹ over the parameters not held, at the current values. With a
  // robust loss, W includes the IRLS weights ρ'(u²). Rank deficiency (scaled
  // singular values below rank_tolerance·max) gives ok = false.
  CovarianceEstimate Covariance(double s2, double rank_tolerance = 1e-10) const;

  const ResidualSource& source() const;
  const ResidualData& data() const;
  const std::vector<ParameterSpec>& specs() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// ---------------------------------------------------------------------------
// Intervals (fit_profile.cc, fit_bootstrap.cc).

struct ProfileLimit {
  bool found = false;
  double value = std::numeric_limits<double>::quiet_NaN();
  std::string reason;  // why not found
};

struct ProfileResult {
  ProfileLimit lower, upper;
  int solves = 0;
  // A re-optimisation found a smaller objective than the fit: the fit was
  // not at its minimum. better_theta holds that point.
  bool found_better_minimum = false;
  double better_objective = 0.0;
  std::vector<double> better_theta;
  bool cancelled = false;
};

// Settings shared by every profile of one fit.
struct ProfileSettings {
  double objective_hat = 0.0;  // 2·cost at θ̂
  double s2 = 0.0;             // objective_hat/(n − p)
  double tau_target = 0.0;     // t(1 − α/2, n − p)
  std::function<bool()> keep_going;  // false cancels
};

// Profile of θⱼ: the others re-optimised with θⱼ held at b. problem must be
// at θ̂ (restored on return). step_hint: a scale for the first step (the
// asymptotic half-width when known).
ProfileResult ProfileParameter(LeastSquaresProblem& problem, const std::vector<double>& theta_hat,
                               int j, double step_hint, const ProfileSettings& settings);

// Profile of the ratio θ[target]/θ[base] on a problem where EnableRatio
// (target, base) was called; theta_hat is the fit's optimum.
ProfileResult ProfileRatio(LeastSquaresProblem& problem, const std::vector<double>& theta_hat,
                           int target, int base, double step_hint,
                           const ProfileSettings& settings);

struct BootstrapSettings {
  BootstrapScheme scheme = BootstrapScheme::kResiduals;
  int resamples = 2000;
  std::uint64_t seed = 0;
  int threads = 1;
  // Relative weights (w = 1/y²): a resampled response gets the weight of its
  // own value, w* = 1/y*², as the estimator would give it, and the resampled
  // relative error is applied to the fitted value, y* = f̂·(1 ± e*).
  bool relative_weights = false;
  // Refit with a Ceres problem per thread instead of the small solver (the
  // fallback when the source has no small solver for this many parameters).
  bool use_ceres = false;
  // Progress from the calling thread: (done, total); false cancels.
  std::function<bool(int, int)> progress;
};

struct BootstrapRun {
  // draws[b] holds θ* of resample b (all p values), empty when it failed.
  std::vector<std::vector<double>> draws;
  int succeeded = 0;
  int failed = 0;
  int threads = 1;
  bool cancelled = false;
};

// Bootstrap of a fitted problem. predicted and weighted_residuals are f̂ and
// √w·(y − f̂) at θ̂ per residual of `data`; log_scale marks parameters kept
// > 0 by a log search in the small solver. Resample b draws its data with a
// generator seeded from (seed, b) only, so the draws do not depend on the
// number of threads.
BootstrapRun RunBootstrap(const ResidualSource& source, const ResidualData& data,
                          const std::vector<ParameterSpec>& specs,
                          const std::vector<double>& theta_hat,
                          const std::vector<bool>& log_scale,
                          const std::vector<double>& predicted,
                          const std::vector<double>& weighted_residuals,
                          const BootstrapSettings& settings);

// A refitter that re-solves a Ceres problem (bounds kept) on new data of the
// same size; slower than the small solver, for any number of parameters.
std::unique_ptr<Refitter> NewCeresRefitter(const ResidualSource& source,
                                           const std::vector<ParameterSpec>& specs,
                                           int num_residuals);

}  // namespace ratewell::detail
