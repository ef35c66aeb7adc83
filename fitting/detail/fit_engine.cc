// LeastSquaresProblem: one ceres::Problem over a ResidualSource, re-solvable
// with parameters held, plus the covariance from the Jacobian at a point.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include <Eigen/QR>
#include <Eigen/SVD>
#include <ceres/ceres.h>

#include "fitting/detail/fit_problem.h"

namespace ratewell::detail {

ResidualData ResidualData::Identity(const std::vector<double>& response,
                                    const std::vector<double>& sqrt_weight) {
  ResidualData data;
  data.response = response;
  data.observation.resize(response.size());
  for (size_t k = 0; k < response.size(); ++k) data.observation[k] = static_cast<int>(k);
  data.sqrt_weight = sqrt_weight.empty() ? std::vector<double>(response.size(), 1.0) : sqrt_weight;
  return data;
}

namespace {

class CallbackAdapter final : public ceres::IterationCallback {
 public:
  explicit CallbackAdapter(const std::function<bool(int, double)>* callback)
      : callback_(callback) {}
  ceres::CallbackReturnType operator()(const ceres::IterationSummary& summary) override {
    return (*callback_)(summary.iteration, summary.cost) ? ceres::SOLVER_CONTINUE
                                                         : ceres::SOLVER_ABORT;
  }

 private:
  const std::function<bool(int, double)>* callback_;
};

std::unique_ptr<ceres::LossFunction> MakeLoss(RobustLoss loss, double scale) {
  switch (loss) {
    case RobustLoss::kHuber: return std::make_unique<ceres::HuberLoss>(scale);
    case RobustLoss::kCauchy: return std::make_unique<ceres::CauchyLoss>(scale);
    case RobustLoss::kNone: break;
  }
  return nullptr;
}

FitTermination FromCeres(ceres::TerminationType type) {
  switch (type) {
    case ceres::CONVERGENCE:
    case ceres::USER_SUCCESS: return FitTermination::kConvergence;
    case ceres::NO_CONVERGENCE: return FitTermination::kNoConvergence;
    case ceres::USER_FAILURE: return FitTermination::kUserAbort;
    case ceres::FAILURE: break;
  }
  return FitTermination::kFailure;
}

double Clamp(double value, const ParameterSpec& spec) {
  return std::min(std::max(value, spec.lower), spec.upper);
}

}  // namespace

struct LeastSquaresProblem::Impl {
  Impl(const ResidualSource& s, const ResidualData& d, std::vector<ParameterSpec> sp,
       EngineOptions o)
      : source(s), data(d), specs(std::move(sp)), options(std::move(o)) {}

  const ResidualSource& source;
  const ResidualData& data;
  std::vector<ParameterSpec> specs;
  EngineOptions options;
  std::vector<double> theta;
  std::vector<char> held;
  Substitution substitution;
  std::unique_ptr<ceres::LossFunction> loss;
  std::unique_ptr<ceres::Problem> problem;
  std::vector<ceres::CostFunction*> costs;  // owned by problem
  std::vector<std::pair<int, int>> ranges;  // residuals of each cost function

  int p() const { return static_cast<int>(theta.size()); }

  void Build() {
    if (problem) return;
    ceres::Problem::Options problem_options;
    problem_options.loss_function_ownership = ceres::DO_NOT_TAKE_OWNERSHIP;
    problem = std::make_unique<ceres::Problem>(problem_options);
    loss = MakeLoss(options.loss, options.loss_scale);
    const int m = data.size();
    // Without a loss one cost function covers every residual (fast); a
    // robust loss acts per residual, so then each residual is a block.
    const int chunk = loss ? 1 : std::max(m, 1);
    std::vector<double*> blocks(p());
    for (int j = 0; j < p(); ++j) blocks[j] = &theta[j];
    for (int begin = 0; begin < m; begin += chunk) {
      const int end = std::min(m, begin + chunk);
      ceres::CostFunction* cost = source.NewCostFunction(&data, begin, end, &substitution);
      problem->AddResidualBlock(cost, loss.get(), blocks);
      costs.push_back(cost);
      ranges.emplace_back(begin, end);
    }
    for (int j = 0; j < p(); ++j) {
      if (m == 0) break;
      if (std::isfinite(specs[j].lower)) problem->SetParameterLowerBound(&theta[j], 0, specs[j].lower);
      if (std::isfinite(specs[j].upper)) problem->SetParameterUpperBound(&theta[j], 0, specs[j].upper);
      if (held[j]) problem->SetParameterBlockConstant(&theta[j]);
    }
  }

  // θ with the substitution applied: what the model sees.
  std::vector<double> Effective() const {
    std::vector<double> t = theta;
    if (substitution.active()) t[substitution.target] = substitution.factor * t[substitution.base];
    return t;
  }

  bool Residuals(std::vector<double>* u, std::vector<double>* f) const {
    const std::vector<double> t = Effective();
    const int m = data.size();
    u->resize(m);
    if (f != nullptr) f->resize(m);
    for (int k = 0; k < m; ++k) {
      double value = 0.0;
      if (!source.Predict(data.observation[k], t.data(), &value)) return false;
      (*u)[k] = data.sqrt_weight[k] * (data.response[k] - value);
      if (f != nullptr) (*f)[k] = value;
    }
    return true;
  }

  bool Objective(double* objective, double* ssr) const {
    std::vector<double> u;
    if (!Residuals(&u, nullptr)) return false;
    double sum = 0.0, robust = 0.0;
    for (double r : u) {
      sum += r * r;
      if (loss) {
        double rho[3];
        loss->Evaluate(r * r, rho);
        robust += rho[0];
      }
    }
    if (ssr != nullptr) *ssr = sum;
    if (objective != nullptr) *objective = loss ? robust : sum;
    return std::isfinite(sum) && std::isfinite(loss ? robust : sum);
  }

  // J (m × p, every parameter) of the weighted residuals u at the current
  // values, rows scaled by the IRLS weights √ρ'(u²) when there is a loss;
  // and u itself. False when not finite.
  bool Jacobian(Eigen::MatrixXd* jacobian, Eigen::VectorXd* u) {
    Build();
    const int m = data.size();
    jacobian->resize(m, p());
    u->resize(m);
    std::vector<const double*> parameters(p());
    for (int j = 0; j < p(); ++j) parameters[j] = &theta[j];
    std::vector<double> residuals;
    std::vector<std::vector<double>> columns(p());
    std::vector<double*> jacobians(p());
    for (size_t c = 0; c < costs.size(); ++c) {
      const auto [begin, end] = ranges[c];
      residuals.resize(end - begin);
      for (int j = 0; j < p(); ++j) {
        columns[j].resize(end - begin);
        jacobians[j] = columns[j].data();
      }
      if (!costs[c]->Evaluate(parameters.data(), residuals.data(), jacobians.data())) {
        return false;
      }
      for (int k = begin; k < end; ++k) {
        double row_weight = 1.0;
        if (loss) {
          double rho[3];
          loss->Evaluate(residuals[k - begin] * residuals[k - begin], rho);
          row_weight = std::sqrt(std::max(rho[1], 0.0));
        }
        (*u)[k] = residuals[k - begin];
        for (int j = 0; j < p(); ++j) (*jacobian)(k, j) = row_weight * columns[j][k - begin];
      }
    }
    return jacobian->allFinite() && u->allFinite();
  }

  // Gauss–Newton steps from a converged point, as reference codes polish a
  // least-squares solution: the cost function flattens to rounding level
  // (≈ 1e-10 relative in the parameters) before the gradient vanishes, so
  // the solver's cost-change test stops short of the stationary point.
  // Parameters held or sitting on a bound stay; a step that leaves the
  // bounds or raises the objective beyond rounding ends the polish.
  int Polish(int max_steps) {
    if (loss || max_steps <= 0) return 0;
    std::vector<int> free;
    for (int j = 0; j < p(); ++j) {
      if (!held[j] && theta[j] > specs[j].lower && theta[j] < specs[j].upper) free.push_back(j);
    }
    const int q = static_cast<int>(free.size());
    if (q == 0 || data.size() < q) return 0;
    double objective = 0.0;
    if (!Objective(&objective, nullptr)) return 0;
    int steps = 0;
    Eigen::MatrixXd jacobian;
    Eigen::VectorXd u;
    for (int step = 0; step < max_steps; ++step) {
      if (!Jacobian(&jacobian, &u)) break;
      Eigen::MatrixXd reduced(jacobian.rows(), q);
      for (int c = 0; c < q; ++c) reduced.col(c) = jacobian.col(free[c]);
      const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(reduced);
      if (qr.rank() < q) break;
      const Eigen::VectorXd delta = -qr.solve(u);
      if (!delta.allFinite()) break;
      const std::vector<double> saved = theta;
      double largest = 0.0;
      bool inside = true;
      for (int c = 0; c < q; ++c) {
        const int j = free[c];
        theta[j] += delta[c];
        inside = inside && theta[j] > specs[j].lower && theta[j] < specs[j].upper;
        largest = std::max(largest, std::abs(delta[c]) / std::max(std::abs(saved[j]), 1e-300));
      }
      double trial = 0.0;
      if (!inside || !Objective(&trial, nullptr) || trial > objective * (1.0 + 1e-13)) {
        theta = saved;
        break;
      }
      objective = std::min(objective, trial);
      ++steps;
      if (largest < 1e-15) break;
    }
    return steps;
  }
};

LeastSquaresProblem::LeastSquaresProblem(const ResidualSource& source, const ResidualData& data,
                                         std::vector<ParameterSpec> specs, EngineOptions options)
    : impl_(std::make_unique<Impl>(source, data, std::move(specs), std::move(options))) {
  const int p = source.num_parameters();
  impl_->specs.resize(p);
  impl_->theta.resize(p);
  impl_->held.resize(p);
  for (int j = 0; j < p; ++j) {
    impl_->theta[j] = Clamp(impl_->specs[j].start, impl_->specs[j]);
    impl_->held[j] = impl_->specs[j].fixed ? 1 : 0;
  }
}

LeastSquaresProblem::~LeastSquaresProblem() = default;

void LeastSquaresProblem::EnableRatio(int target, int base) {
  impl_->substitution = Substitution{target, base, 0.0};
  impl_->held[target] = 1;
  if (impl_->problem) impl_->problem->SetParameterBlockConstant(&impl_->theta[target]);
}

void LeastSquaresProblem::set_ratio_factor(double factor) { impl_->substitution.factor = factor; }

void LeastSquaresProblem::set_initial_trust_region_radius(double radius) {
  impl_->options.initial_trust_region_radius = radius;
}

void LeastSquaresProblem::set_iteration_callback(std::function<bool(int, double)> callback) {
  impl_->options.iteration_callback = std::move(callback);
}

const std::vector<double>& LeastSquaresProblem::values() const { return impl_->theta; }

void LeastSquaresProblem::SetValues(const std::vector<double>& theta) {
  for (int j = 0; j < impl_->p(); ++j) impl_->theta[j] = Clamp(theta[j], impl_->specs[j]);
}

void LeastSquaresProblem::Hold(int j, double value) {
  impl_->theta[j] = Clamp(value, impl_->specs[j]);
  impl_->held[j] = 1;
  if (impl_->problem) impl_->problem->SetParameterBlockConstant(&impl_->theta[j]);
}

void LeastSquaresProblem::Release(int j) {
  if (impl_->specs[j].fixed || j == impl_->substitution.target) return;
  impl_->held[j] = 0;
  if (impl_->problem) impl_->problem->SetParameterBlockVariable(&impl_->theta[j]);
}

bool LeastSquaresProblem::IsHeld(int j) const { return impl_->held[j] != 0; }

EngineSolution LeastSquaresProblem::Solve() {
  const auto start = std::chrono::steady_clock::now();
  Impl& s = *impl_;
  s.Build();
  EngineSolution solution;
  double objective0 = 0.0;
  const bool start_ok = s.Objective(&objective0, nullptr);
  solution.initial_cost = start_ok ? 0.5 * objective0 : -1.0;
  const bool any_free = std::any_of(s.held.begin(), s.held.end(), [](char h) { return h == 0; });
  if (!start_ok) {
    solution.termination = FitTermination::kFailure;
    solution.message = "the model cannot be evaluated at the starting values";
  } else if (!any_free || s.data.size() == 0) {
    solution.termination = FitTermination::kConvergence;
    solution.message = "no free parameters: evaluated only";
  } else {
    ceres::Solver::Options o;
    o.linear_solver_type = ceres::DENSE_QR;
    o.function_tolerance = s.options.function_tolerance;
    o.gradient_tolerance = s.options.gradient_tolerance;
    o.parameter_tolerance = s.options.parameter_tolerance;
    o.max_num_iterations = s.options.max_iterations;
    o.initial_trust_region_radius = s.options.initial_trust_region_radius;
    o.logging_type = ceres::SILENT;
    o.minimizer_progress_to_stdout = false;
    o.num_threads = 1;
    std::unique_ptr<CallbackAdapter> callback;
    if (s.options.iteration_callback) {
      callback = std::make_unique<CallbackAdapter>(&s.options.iteration_callback);
      o.callbacks.push_back(callback.get());
    }
    ceres::Solver::Summary summary;
    ceres::Solve(o, s.problem.get(), &summary);
    solution.termination = FromCeres(summary.termination_type);
    solution.message = summary.message;
    solution.iterations = static_cast<int>(summary.iterations.size()) - 1;
    if (solution.termination == FitTermination::kConvergence) {
      solution.polish_steps = s.Polish(s.options.polish_steps);
    }
  }
  double objective = 0.0, ssr = 0.0;
  if (solution.termination != FitTermination::kFailure && !s.Objective(&objective, &ssr)) {
    solution.termination = FitTermination::kFailure;
    solution.message = "the model cannot be evaluated at the solution";
  }
  solution.theta = s.Effective();
  solution.objective = objective;
  solution.cost = 0.5 * objective;
  solution.ssr = ssr;
  solution.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return solution;
}

bool LeastSquaresProblem::Evaluate(double* objective, double* ssr) const {
  return impl_->Objective(objective, ssr);
}

bool LeastSquaresProblem::Residuals(std::vector<double>* weighted,
                                    std::vector<double>* predicted) const {
  return impl_->Residuals(weighted, predicted);
}

CovarianceEstimate LeastSquaresProblem::Covariance(double s2, double rank_tolerance) const {
  Impl& s = *impl_;
  s.Build();
  CovarianceEstimate result;
  result.s2 = s2;
  for (int j = 0; j < s.p(); ++j) {
    if (!s.held[j]) result.free.push_back(j);
  }
  const int m = s.data.size();
  const int q = static_cast<int>(result.free.size());
  if (q == 0) {
    result.reason = "no free parameters";
    return result;
  }
  if (m < q) {
    result.reason = "fewer observations than free parameters";
    return result;
  }
  Eigen::MatrixXd jacobian;
  Eigen::VectorXd u;
  if (!s.Jacobian(&jacobian, &u)) {
    result.reason = "the Jacobian cannot be evaluated (or is not finite) at the solution";
    return result;
  }
  Eigen::MatrixXd free_jacobian(m, q);
  Eigen::VectorXd scale(q);
  for (int c = 0; c < q; ++c) {
    free_jacobian.col(c) = jacobian.col(result.free[c]);
    scale[c] = free_jacobian.col(c).norm();
    if (!(scale[c] > 0.0)) {
      result.reason = "the model does not depend on " + s.specs[result.free[c]].name +
                      " at the solution (zero Jacobian column)";
      return result;
    }
    free_jacobian.col(c) /= scale[c];
  }
  const Eigen::JacobiSVD<Eigen::MatrixXd> svd(free_jacobian, Eigen::ComputeThinV);
  const Eigen::VectorXd sigma = svd.singularValues();
  result.rcond = sigma[q - 1] / sigma[0];
  result.rank = 0;
  for (int c = 0; c < q; ++c) result.rank += sigma[c] > rank_tolerance * sigma[0] ? 1 : 0;
  if (result.rank < q) {
    result.reason = "covariance singular: the Jacobian has rank " + std::to_string(result.rank) +
                    " of " + std::to_string(q) +
                    " (parameters not separately identifiable from these data)";
    return result;
  }
  const Eigen::MatrixXd v = svd.matrixV();
  const Eigen::VectorXd inverse_sigma2 = sigma.array().square().inverse();
  const Eigen::MatrixXd scaled = v * inverse_sigma2.asDiagonal() * v.transpose();
  const Eigen::VectorXd inverse_scale = scale.array().inverse();
  result.covariance = s2 * (inverse_scale.asDiagonal() * scaled * inverse_scale.asDiagonal());
  result.ok = true;
  return result;
}

const ResidualSource& LeastSquaresProblem::source() const { return impl_->source; }
const ResidualData& LeastSquaresProblem::data() const { return impl_->data; }
const std::vector<ParameterSpec>& LeastSquaresProblem::specs() const { return impl_->specs; }

namespace {

class CeresRefitter final : public Refitter {
 public:
  CeresRefitter(const ResidualSource& source, const std::vector<ParameterSpec>& specs,
                int num_residuals) {
    data_.observation.resize(num_residuals);
    data_.response.resize(num_residuals);
    data_.sqrt_weight.resize(num_residuals);
    EngineOptions options;
    options.function_tolerance = 1e-12;
    options.parameter_tolerance = 1e-12;
    options.gradient_tolerance = 1e-12;
    problem_ = std::make_unique<LeastSquaresProblem>(source, data_, specs, options);
  }

  bool Refit(const ResidualData& data, double* theta) override {
    if (data.size() != data_.size()) return false;
    std::copy(data.observation.begin(), data.observation.end(), data_.observation.begin());
    std::copy(data.response.begin(), data.response.end(), data_.response.begin());
    std::copy(data.sqrt_weight.begin(), data.sqrt_weight.end(), data_.sqrt_weight.begin());
    const int p = static_cast<int>(problem_->values().size());
    problem_->SetValues(std::vector<double>(theta, theta + p));
    const EngineSolution solution = problem_->Solve();
    if (solution.termination != FitTermination::kConvergence) return false;
    std::copy(solution.theta.begin(), solution.theta.end(), theta);
    return true;
  }

 private:
  ResidualData data_;
  std::unique_ptr<LeastSquaresProblem> problem_;
};

}  // namespace

std::unique_ptr<Refitter> NewCeresRefitter(const ResidualSource& source,
                                           const std::vector<ParameterSpec>& specs,
                                           int num_residuals) {
  return std::make_unique<CeresRefitter>(source, specs, num_residuals);
}

}  // namespace ratewell::detail
