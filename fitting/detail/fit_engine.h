// The templated side of the generic engine (fit_problem.h): adapts a model
// with a templated Predict to Ceres automatic differentiation and to the
// small tiny_solver used by the bootstrap. Includes Ceres: only .cc files of
// fitting/ and tests include this header.
//
// A Model provides
//
//   int num_parameters() const;
//   int num_observations() const;
//   template <typename T>
//   bool Predict(int observation, const T* theta, T* value) const;
//
// where theta holds all num_parameters() values and T is double or a
// ceres::Jet. Predict returns false where the model is undefined.
//
// Example (a test-local model):
//   struct Exponential {
//     std::vector<double> x;
//     int num_parameters() const { return 2; }
//     int num_observations() const { return static_cast<int>(x.size()); }
//     template <typename T> bool Predict(int i, const T* b, T* f) const {
//       *f = b[0] * (1.0 - exp(-b[1] * x[i]));
//       return true;
//     }
//   };
//   GenericFit fit = FitGeneric(Exponential{x}, y, {{"b1", 500}, {"b2", 1e-4}});
//   // fit.solution.theta, fit.se, fit.solution.ssr
#pragma once

#include <algorithm>
#include <array>
#include <cmath>
#include <memory>
#include <utility>
#include <vector>

#include <ceres/ceres.h>
#include <ceres/tiny_solver.h>

#include "fitting/detail/fit_problem.h"

namespace ratewell::detail {

// Parameter vectors up to this size live on the stack inside the functors.
inline constexpr int kInlineParameters = 16;
// The small solver handles up to this many free parameters.
inline constexpr int kMaxSmallSolverParameters = 8;

// A stack buffer of n values of T (heap beyond kInlineParameters).
template <typename T>
class ParameterBuffer {
 public:
  explicit ParameterBuffer(int n) {
    if (n > kInlineParameters) heap_.resize(n);
    data_ = n > kInlineParameters ? heap_.data() : inline_.data();
  }
  T* data() { return data_; }
  T& operator[](int j) { return data_[j]; }

 private:
  std::array<T, kInlineParameters> inline_;
  std::vector<T> heap_;
  T* data_;
};

// Value and (for a Jet) every derivative finite.
inline bool AllFinite(double x) { return std::isfinite(x); }
template <typename T, int N>
bool AllFinite(const ceres::Jet<T, N>& x) {
  return std::isfinite(x.a) && x.v.allFinite();
}

// Residuals [begin, end) of a ResidualData for Ceres' DynamicAutoDiffCostFunction.
template <class Model>
struct ResidualFunctor {
  const Model* model;
  const ResidualData* data;
  int begin;
  int end;
  const Substitution* substitution;

  template <typename T>
  bool operator()(T const* const* blocks, T* residuals) const {
    const int p = model->num_parameters();
    ParameterBuffer<T> theta(p);
    for (int j = 0; j < p; ++j) theta[j] = blocks[j][0];
    if (substitution != nullptr && substitution->active()) {
      theta[substitution->target] = substitution->factor * theta[substitution->base];
    }
    for (int k = begin; k < end; ++k) {
      T f;
      if (!model->Predict(data->observation[k], theta.data(), &f)) return false;
      residuals[k - begin] = data->sqrt_weight[k] * (data->response[k] - f);
      // A non-finite residual or derivative is a failed evaluation (Ceres
      // then shrinks the step) rather than an error Ceres would log.
      if (!AllFinite(residuals[k - begin])) return false;
    }
    return true;
  }
};

// The Function of ceres::TinySolver for N free parameters: the free ones
// (ln θ where log_scale) are the solver's variables, the others constants.
template <class Model, int N>
class SmallSolverFunction {
 public:
  using Scalar = double;
  enum { NUM_RESIDUALS = Eigen::Dynamic, NUM_PARAMETERS = N };

  SmallSolverFunction(const Model* model, const std::vector<int>* free,
                      const std::vector<bool>* log_scale)
      : model_(model), free_(free), log_scale_(log_scale) {}

  void Bind(const ResidualData* data, const double* theta) {
    data_ = data;
    theta_ = theta;
  }
  int NumResiduals() const { return data_->size(); }

  // Natural-scale value of free parameter m from solver variable x.
  double Natural(int m, double x) const { return (*log_scale_)[(*free_)[m]] ? std::exp(x) : x; }

  bool operator()(const double* x, double* residuals, double* jacobian) const {
    const int p = model_->num_parameters();
    const int m_count = data_->size();
    if (jacobian == nullptr) {
      ParameterBuffer<double> theta(p);
      for (int j = 0; j < p; ++j) theta[j] = theta_[j];
      for (int m = 0; m < N; ++m) theta[(*free_)[m]] = Natural(m, x[m]);
      bool ok = true;
      for (int k = 0; k < m_count; ++k) {
        double f = 0.0;
        ok = ok && model_->Predict(data_->observation[k], theta.data(), &f) && std::isfinite(f);
        residuals[k] = ok ? data_->sqrt_weight[k] * (data_->response[k] - f)
                          : std::numeric_limits<double>::quiet_NaN();
      }
      return ok;
    }
    using J = ceres::Jet<double, N>;
    ParameterBuffer<J> theta(p);
    for (int j = 0; j < p; ++j) theta[j] = J(theta_[j]);
    for (int m = 0; m < N; ++m) {
      const J variable(x[m], m);
      theta[(*free_)[m]] = (*log_scale_)[(*free_)[m]] ? exp(variable) : variable;
    }
    for (int k = 0; k < m_count; ++k) {
      J f;
      if (!model_->Predict(data_->observation[k], theta.data(), &f) || !ceres::isfinite(f.a)) {
        return false;
      }
      const J r = data_->sqrt_weight[k] * (data_->response[k] - f);
      residuals[k] = r.a;
      for (int m = 0; m < N; ++m) {
        if (!std::isfinite(r.v[m])) return false;
        jacobian[k + m * m_count] = r.v[m];
      }
    }
    return true;
  }

 private:
  const Model* model_;
  const std::vector<int>* free_;
  const std::vector<bool>* log_scale_;
  const ResidualData* data_ = nullptr;
  const double* theta_ = nullptr;
};

template <class Model, int N>
class SmallSolverRefitter final : public Refitter {
 public:
  SmallSolverRefitter(const Model* model, std::vector<int> free, std::vector<bool> log_scale)
      : free_(std::move(free)),
        log_scale_(std::move(log_scale)),
        function_(model, &free_, &log_scale_) {}

  bool Refit(const ResidualData& data, double* theta) override {
    function_.Bind(&data, theta);
    typename ceres::TinySolver<SmallSolverFunction<Model, N>>::Parameters x;
    for (int m = 0; m < N; ++m) {
      const double value = theta[free_[m]];
      if (log_scale_[free_[m]]) {
        x[m] = std::log(std::max(value, 1e-300));
      } else {
        x[m] = value;
      }
    }
    // The small solver's tolerances are absolute: scale them by the cost at
    // the start, and refuse a start where the model is undefined.
    residuals_.resize(data.size());
    if (!function_(x.data(), residuals_.data(), nullptr)) return false;
    const double cost0 = 0.5 * residuals_.squaredNorm();
    solver_.options.max_num_iterations = 100;
    solver_.options.function_tolerance = 1e-14 * cost0;
    solver_.options.gradient_tolerance = 1e-14 * std::sqrt(cost0);
    solver_.options.parameter_tolerance = 1e-11;
    solver_.options.cost_threshold = 1e-30 * cost0;
    const auto& summary = solver_.Solve(function_, &x);
    using Solver = ceres::TinySolver<SmallSolverFunction<Model, N>>;
    if (summary.status == Solver::HIT_MAX_ITERATIONS) return false;
    for (int m = 0; m < N; ++m) {
      if (!std::isfinite(x[m])) return false;
      theta[free_[m]] = function_.Natural(m, x[m]);
    }
    return std::isfinite(summary.final_cost);
  }

 private:
  std::vector<int> free_;
  std::vector<bool> log_scale_;
  SmallSolverFunction<Model, N> function_;
  ceres::TinySolver<SmallSolverFunction<Model, N>> solver_;
  Eigen::VectorXd residuals_;
};

template <class Model, int N>
std::unique_ptr<Refitter> MakeSmallSolverRefitter(const Model* model, const std::vector<int>& free,
                                                  const std::vector<bool>& log_scale) {
  if constexpr (N > kMaxSmallSolverParameters) {
    return nullptr;
  } else {
    if (static_cast<int>(free.size()) == N) {
      return std::make_unique<SmallSolverRefitter<Model, N>>(model, free, log_scale);
    }
    return MakeSmallSolverRefitter<Model, N + 1>(model, free, log_scale);
  }
}

// A ResidualSource for any Model (see the top of this file).
template <class Model>
class AutoDiffSource final : public ResidualSource {
 public:
  explicit AutoDiffSource(Model model) : model_(std::move(model)) {}

  int num_parameters() const override { return model_.num_parameters(); }
  int num_observations() const override { return model_.num_observations(); }
  bool Predict(int observation, const double* theta, double* value) const override {
    return model_.Predict(observation, theta, value) && std::isfinite(*value);
  }
  ceres::CostFunction* NewCostFunction(const ResidualData* data, int begin, int end,
                                       const Substitution* substitution) const override {
    auto* cost = new ceres::DynamicAutoDiffCostFunction<ResidualFunctor<Model>, 4>(
        new ResidualFunctor<Model>{&model_, data, begin, end, substitution});
    for (int j = 0; j < model_.num_parameters(); ++j) cost->AddParameterBlock(1);
    cost->SetNumResiduals(end - begin);
    return cost;
  }
  std::unique_ptr<Refitter> NewRefitter(const std::vector<int>& free,
                                        const std::vector<bool>& log_scale) const override {
    if (free.empty()) return nullptr;
    return MakeSmallSolverRefitter<Model, 1>(&model_, free, log_scale);
  }
  const Model& model() const { return model_; }

 private:
  Model model_;
};

// The result of FitGeneric: the solution, the asymptotic covariance and the
// standard errors s·√[(JᵀJ)⁻¹]ⱼⱼ (NaN for fixed parameters or when singular).
struct GenericFit {
  EngineSolution solution;
  CovarianceEstimate covariance;
  int n = 0;
  int num_free = 0;
  int dof = 0;
  std::vector<double> se;
  int restarts = 0;        // re-solves from the previous optimum that still improved
  int starts_solved = 0;   // the given start plus the multi-start ones
};

struct GenericFitOptions {
  EngineOptions engine;
  // Re-solve from the optimum until the objective stops falling.
  int max_restarts = 4;
  // Also start from the given point with one free parameter at a time
  // multiplied by 0.1 and by 10 (2·p more solves), and from the given point
  // with a cautious first step (trust region radius 1e-3 instead of 1e4);
  // keep the lowest objective: a cheap guard against flat regions far from
  // the optimum that a long first step can land in.
  bool multi_start = false;
  // √weights per observation; empty: unit weights.
  std::vector<double> sqrt_weight;
};

// Fits the model to responses y from specs' starts (and the multi-start
// points), re-solves from the best optimum until the objective stops falling,
// and computes the covariance with s² = SSR/(n − p).
template <class Model>
GenericFit FitGeneric(const Model& model, const std::vector<double>& y,
                      std::vector<ParameterSpec> specs, const GenericFitOptions& options = {}) {
  GenericFit fit;
  const AutoDiffSource<Model> source(model);
  const ResidualData data = ResidualData::Identity(y, options.sqrt_weight);
  std::vector<std::vector<double>> starts;
  std::vector<double> given;
  for (const ParameterSpec& spec : specs) given.push_back(spec.start);
  starts.push_back(given);
  if (options.multi_start) {
    starts.push_back(given);  // solved with the cautious first step
    for (size_t j = 0; j < specs.size(); ++j) {
      if (specs[j].fixed) continue;
      for (double factor : {0.1, 10.0}) {
        std::vector<double> start = given;
        start[j] = start[j] != 0.0 ? start[j] * factor : factor;
        starts.push_back(start);
      }
    }
  }
  LeastSquaresProblem problem(source, data, std::move(specs), options.engine);
  for (size_t s = 0; s < starts.size(); ++s) {
    problem.SetValues(starts[s]);
    problem.set_initial_trust_region_radius(s == 1 && options.multi_start
                                                ? 1e-3
                                                : options.engine.initial_trust_region_radius);
    const EngineSolution solution = problem.Solve();
    ++fit.starts_solved;
    // Another start must lower the objective beyond rounding to replace the
    // given start's solution (the same minimum found twice is not better).
    const bool better =
        solution.usable() &&
        (!fit.solution.usable() || solution.objective < fit.solution.objective * (1.0 - 1e-9) ||
         (fit.solution.termination != FitTermination::kConvergence &&
          solution.termination == FitTermination::kConvergence &&
          solution.objective <= fit.solution.objective));
    if (better || fit.solution.termination == FitTermination::kNotRun) fit.solution = solution;
  }
  problem.set_initial_trust_region_radius(options.engine.initial_trust_region_radius);
  for (int r = 0; r < options.max_restarts && fit.solution.usable(); ++r) {
    problem.SetValues(fit.solution.theta);
    EngineSolution again = problem.Solve();
    if (!again.usable() || again.objective > fit.solution.objective) break;
    const bool improved = again.objective < fit.solution.objective * (1.0 - 1e-15);
    fit.solution = again;
    if (!improved) break;
    ++fit.restarts;
  }
  problem.SetValues(fit.solution.theta);
  fit.n = data.size();
  for (const ParameterSpec& s : problem.specs()) fit.num_free += s.fixed ? 0 : 1;
  fit.dof = fit.n - fit.num_free;
  fit.se.assign(source.num_parameters(), std::numeric_limits<double>::quiet_NaN());
  if (fit.solution.usable() && fit.dof > 0) {
    fit.covariance = problem.Covariance(fit.solution.ssr / fit.dof);
    if (fit.covariance.ok) {
      for (size_t m = 0; m < fit.covariance.free.size(); ++m) {
        fit.se[fit.covariance.free[m]] = std::sqrt(fit.covariance.covariance(m, m));
      }
    }
  }
  return fit;
}

}  // namespace ratewell::detail
