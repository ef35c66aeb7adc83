#include "fitting/nonlinear_fit.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <memory>
#include <set>
#include <sstream>

#include "fitting/detail/fit_kinetic.h"
#include "fitting/detail/fit_problem.h"
#include "fitting/detail/fit_statistics.h"
#include "fitting/detail/model_sources.h"

namespace ratewell {
namespace {

template <typename Enum, size_t N>
const char* NameOf(Enum value, const std::pair<Enum, const char*> (&table)[N]) {
  for (const auto& [e, name] : table) {
    if (e == value) return name;
  }
  return "unknown";
}

template <typename Enum, size_t N>
bool ValueOf(std::string_view name, Enum* value, const std::pair<Enum, const char*> (&table)[N]) {
  for (const auto& [e, text] : table) {
    if (name == text) {
      *value = e;
      return true;
    }
  }
  return false;
}

constexpr std::pair<Weighting, const char*> kWeightings[] = {
    {Weighting::kNone, "none"},
    {Weighting::kRelative, "relative"},
    {Weighting::kInverseVariance, "inverse-variance"}};
constexpr std::pair<RobustLoss, const char*> kLosses[] = {
    {RobustLoss::kNone, "none"}, {RobustLoss::kHuber, "huber"}, {RobustLoss::kCauchy, "cauchy"}};
constexpr std::pair<IntervalMethod, const char*> kMethods[] = {
    {IntervalMethod::kAsymptotic, "asymptotic"},
    {IntervalMethod::kProfile, "profile"},
    {IntervalMethod::kBootstrap, "bootstrap"}};
constexpr std::pair<BootstrapScheme, const char*> kSchemes[] = {
    {BootstrapScheme::kResiduals, "residuals"}, {BootstrapScheme::kCases, "cases"}};
constexpr std::pair<FitTermination, const char*> kTerminations[] = {
    {FitTermination::kNotRun, "not-run"},
    {FitTermination::kConvergence, "convergence"},
    {FitTermination::kNoConvergence, "no-convergence"},
    {FitTermination::kFailure, "failure"},
    {FitTermination::kUserAbort, "user-abort"},
    {FitTermination::kInvalidInput, "invalid-input"}};

// Starting points solved from: the best few by their objective.
constexpr int kMaxStarts = 4;

std::string Number(double x, int precision = 6) {
  std::ostringstream out;
  out.precision(precision);
  out << x;
  return out.str();
}

bool Positive(double x) { return std::isfinite(x) && x > 0.0; }

}  // namespace

const char* WeightingToString(Weighting weighting) { return NameOf(weighting, kWeightings); }
bool StringToWeighting(std::string_view name, Weighting* weighting) {
  return ValueOf(name, weighting, kWeightings);
}
const char* RobustLossToString(RobustLoss loss) { return NameOf(loss, kLosses); }
bool StringToRobustLoss(std::string_view name, RobustLoss* loss) {
  return ValueOf(name, loss, kLosses);
}
const char* IntervalMethodToString(IntervalMethod method) { return NameOf(method, kMethods); }
bool StringToIntervalMethod(std::string_view name, IntervalMethod* method) {
  return ValueOf(name, method, kMethods);
}
const char* BootstrapSchemeToString(BootstrapScheme scheme) { return NameOf(scheme, kSchemes); }
bool StringToBootstrapScheme(std::string_view name, BootstrapScheme* scheme) {
  return ValueOf(name, scheme, kSchemes);
}
const char* FitTerminationToString(FitTermination termination) {
  return NameOf(termination, kTerminations);
}

bool FitOptions::IsValid(std::string* error) const {
  auto fail = [error](const std::string& message) {
    if (error != nullptr) *error = message;
    return false;
  };
  if (!Positive(loss_scale)) return fail("loss_scale must be > 0, got " + Number(loss_scale));
  if (!(confidence_level > 0.0 && confidence_level < 1.0)) {
    return fail("confidence_level must lie in (0, 1), got " + Number(confidence_level));
  }
  if (bootstrap_resamples < 100) {
    return fail("bootstrap_resamples must be >= 100, got " + std::to_string(bootstrap_resamples));
  }
  if (num_threads < 0) return fail("num_threads must be >= 0 (0 = all cores)");
  if (!Positive(function_tolerance) || !Positive(gradient_tolerance) ||
      !Positive(parameter_tolerance)) {
    return fail("solver tolerances must be > 0");
  }
  if (max_iterations <= 0) return fail("max_iterations must be > 0");
  if (enzyme_uM && !Positive(*enzyme_uM)) {
    return fail("enzyme_uM must be > 0, got " + Number(*enzyme_uM));
  }
  if (fit_enzyme && !enzyme_uM) return fail("fit_enzyme needs enzyme_uM as the start");
  std::set<std::string> seen;
  for (const std::string& name : per_group) {
    if (name.empty() || !seen.insert(name).second) {
      return fail("per_group names must be non-empty and unique");
    }
  }
  for (const ParameterControl& c : parameters) {
    if (c.name.empty()) return fail("a ParameterControl has no name");
    for (const std::optional<double>& v : {c.fixed_value, c.start}) {
      if (v && !std::isfinite(*v)) return fail("parameter " + c.name + ": values must be finite");
    }
    if ((c.lower && std::isnan(*c.lower)) || (c.upper && std::isnan(*c.upper))) {
      return fail("parameter " + c.name + ": bounds must be numbers");
    }
  }
  const DerivedInputs& d = derived;
  if (d.enzyme_nM && !Positive(*d.enzyme_nM)) return fail("derived.enzyme_nM must be > 0");
  if (d.enzyme_mg_per_mL && !Positive(*d.enzyme_mg_per_mL)) {
    return fail("derived.enzyme_mg_per_mL must be > 0");
  }
  if (d.cheng_prusoff_mode) {
    const KineticModel mode = *d.cheng_prusoff_mode;
    if (mode != KineticModel::kCompetitive && mode != KineticModel::kUncompetitive &&
        mode != KineticModel::kNoncompetitive) {
      return fail("derived.cheng_prusoff_mode must be competitive, uncompetitive or "
                  "noncompetitive");
    }
    if (!Positive(d.cheng_prusoff_km_uM)) return fail("derived.cheng_prusoff_km_uM must be > 0");
    if (!(std::isfinite(d.cheng_prusoff_substrate_uM) && d.cheng_prusoff_substrate_uM >= 0.0) ||
        (mode == KineticModel::kUncompetitive && !(d.cheng_prusoff_substrate_uM > 0.0))) {
      return fail("derived.cheng_prusoff_substrate_uM must be >= 0 (> 0 for uncompetitive)");
    }
    if (!(std::isfinite(d.cheng_prusoff_km_se_uM) && d.cheng_prusoff_km_se_uM >= 0.0)) {
      return fail("derived.cheng_prusoff_km_se_uM must be >= 0");
    }
  }
  return true;
}

bool FitSummary::IsSolutionUsable() const {
  return termination == FitTermination::kConvergence ||
         (termination == FitTermination::kUserAbort && final_cost >= 0.0 && iterations >= 0);
}

std::string FitSummary::BriefReport() const {
  std::ostringstream out;
  out << "Fit: " << FitTerminationToString(termination);
  if (iterations >= 0) {
    out << ", iterations " << iterations << ", starts " << starts_tried << ", cost "
        << Number(initial_cost, 6) << " -> " << Number(final_cost, 10);
  }
  if (termination != FitTermination::kConvergence) out << " (" << message << ")";
  return out.str();
}

std::string FitSummary::FullReport() const {
  std::ostringstream out;
  out << "Termination:          " << FitTerminationToString(termination) << "\n"
      << "Message:              " << message << "\n"
      << "Iterations:           " << iterations << "\n"
      << "Starts tried:         " << starts_tried << "\n"
      << "Initial cost:         " << Number(initial_cost, 10) << "\n"
      << "Final cost:           " << Number(final_cost, 15) << "\n"
      << "Fit time (s):         " << Number(fit_time_seconds, 4) << "\n"
      << "Interval time (s):    " << Number(interval_time_seconds, 4) << "\n"
      << "Usable:               " << (IsSolutionUsable() ? "yes" : "no") << "\n";
  return out.str();
}

const ParameterEstimate* KineticFit::Find(std::string_view name) const {
  for (const ParameterEstimate& p : parameters) {
    if (p.name == name) return &p;
  }
  for (const ParameterEstimate& p : derived) {
    if (p.name == name) return &p;
  }
  return nullptr;
}

double KineticFit::Predict(double substrate_uM, double inhibitor_uM, int group) const {
  if (group < 0 || group >= static_cast<int>(group_values.size())) {
    return std::numeric_limits<double>::quiet_NaN();
  }
  return EvaluateKineticModel(model, group_values[group], substrate_uM, inhibitor_uM);
}

bool KineticFit::HasWarning(std::string_view code) const {
  return std::any_of(warnings.begin(), warnings.end(),
                     [code](const FitWarning& w) { return w.code == code; });
}

KineticFit FitKineticModel(const KineticData& data, KineticModel model,
                           const FitOptions& options) {
  const auto clock_start = std::chrono::steady_clock::now();
  auto seconds_since = [](std::chrono::steady_clock::time_point t) {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - t).count();
  };
  KineticFit fit;
  fit.model = model;
  fit.weighting = options.weighting;
  fit.loss = options.loss;
  fit.n = static_cast<int>(data.points.size());
  std::string error;
  if (!options.IsValid(&error)) {
    fit.summary.termination = FitTermination::kInvalidInput;
    fit.summary.message = "invalid options: " + error;
    return fit;
  }
  detail::KineticProblem kp;
  if (!detail::BuildKineticProblem(data, model, options, &kp, &error)) {
    fit.summary.termination = FitTermination::kInvalidInput;
    fit.summary.message = error;
    return fit;
  }
  const std::unique_ptr<detail::ResidualSource> source = detail::MakeKineticSource(kp.design);
  const detail::ResidualData rdata = detail::ResidualData::Identity(kp.response, kp.sqrt_weight);

  detail::EngineOptions engine;
  engine.loss = options.loss;
  engine.loss_scale = options.loss_scale;
  engine.function_tolerance = options.function_tolerance;
  engine.gradient_tolerance = options.gradient_tolerance;
  engine.parameter_tolerance = options.parameter_tolerance;
  engine.max_iterations = options.max_iterations;
  if (options.progress) {
    engine.iteration_callback = [&options](int iteration, double cost) {
      FitProgress progress;
      progress.stage = "fit";
      progress.iteration = iteration;
      progress.cost = cost;
      return options.progress(progress);
    };
  }
  detail::LeastSquaresProblem problem(*source, rdata, kp.specs, engine);
  const int p = static_cast<int>(kp.specs.size());
  fit.num_parameters = kp.num_free;
  fit.dof = fit.n - kp.num_free;

  // --- solve from the best starts, keep the lowest objective.
  std::vector<std::vector<double>> starts =
      detail::RankedStarts(kp, *source, data, options, kMaxStarts);
  detail::EngineSolution best;
  auto solve_from = [&](const std::vector<double>& start) {
    problem.SetValues(start);
    detail::EngineSolution solution = problem.Solve();
    ++fit.summary.starts_tried;
    const bool better =
        solution.usable() &&
        (!best.usable() || solution.objective < best.objective ||
         (best.termination != FitTermination::kConvergence &&
          solution.termination == FitTermination::kConvergence));
    if (better || best.termination == FitTermination::kNotRun) best = solution;
    return solution;
  };
  for (size_t s = 0; s < starts.size(); ++s) {
    const detail::EngineSolution solution = solve_from(starts[s]);
    if (solution.termination == FitTermination::kUserAbort) {
      best = solution;
      break;
    }
    // Two converged starts that agree are enough.
    if (s >= 1 && best.termination == FitTermination::kConvergence) break;
  }

  // Profile re-optimisations report through the profile stage instead.
  problem.set_iteration_callback({});
  auto finish_failed = [&](detail::EngineSolution& solution) {
    fit.summary.termination = solution.termination;
    fit.summary.message = solution.message;
    fit.summary.fit_time_seconds = seconds_since(clock_start);
    return fit;
  };
  if (!best.usable()) return finish_failed(best);

  // --- statistics and intervals; a profile that finds a lower minimum
  // restarts the fit from there (once).
  detail::FittedState state;
  for (int pass = 0; pass < 2; ++pass) {
    problem.SetValues(best.theta);
    fit.summary.termination = best.termination;
    fit.summary.message = best.message;
    fit.summary.iterations = best.iterations;
    fit.summary.initial_cost = best.initial_cost;
    fit.summary.final_cost = best.cost;
    fit.summary.fit_time_seconds = seconds_since(clock_start);
    fit.converged = best.termination == FitTermination::kConvergence;
    fit.ssr = best.ssr;
    fit.residual_sd = std::sqrt(best.ssr / fit.dof);
    const double m2ll =
        detail::GaussianMinusTwoLogLikelihood(best.ssr, fit.n, kp.sum_log_weights);
    fit.aic = detail::Aic(m2ll, fit.n, kp.num_free);
    fit.aicc = detail::Aicc(m2ll, fit.n, kp.num_free);

    state = detail::FittedState();
    state.kinetic = &kp;
    state.source = source.get();
    state.data = &rdata;
    state.problem = &problem;
    state.options = &options;
    state.theta_hat = best.theta;
    state.objective_hat = best.objective;
    state.s2 = best.objective / fit.dof;
    state.t_quantile =
        detail::StudentTQuantile(0.5 * (1.0 + options.confidence_level), fit.dof);
    problem.Residuals(&state.weighted_residuals, &state.predicted);

    // Parameters; those on a bound are held for the covariance.
    fit.parameters.assign(p, ParameterEstimate());
    state.at_bound.assign(p, 0);
    for (int e = 0; e < p; ++e) {
      ParameterEstimate& pe = fit.parameters[e];
      const detail::ParameterSpec& spec = kp.specs[e];
      pe.name = spec.name;
      pe.unit = kp.unit[e];
      pe.group = kp.group[e];
      pe.value = best.theta[e];
      pe.fixed = spec.fixed;
      pe.at_bound = !spec.fixed && (pe.value <= spec.lower || pe.value >= spec.upper);
      state.at_bound[e] = pe.at_bound ? 1 : 0;
      if (pe.at_bound) problem.Hold(e, pe.value);
    }
    state.covariance = problem.Covariance(state.s2);
    for (int e = 0; e < p; ++e) {
      if (state.at_bound[e]) problem.Release(e);
    }
    fit.covariance_names.clear();
    fit.covariance.clear();
    for (int e = 0; e < p; ++e) {
      ParameterEstimate& pe = fit.parameters[e];
      if (pe.fixed) {
        pe.se_reason = "fixed, not fitted";
      } else if (pe.at_bound) {
        pe.se_reason = "at its bound";
      } else if (!state.covariance.ok) {
        pe.se_reason = state.covariance.reason;
      }
    }
    if (state.covariance.ok) {
      const int q = static_cast<int>(state.covariance.free.size());
      for (int a = 0; a < q; ++a) {
        ParameterEstimate& pe = fit.parameters[state.covariance.free[a]];
        pe.se = std::sqrt(state.covariance.covariance(a, a));
        pe.se_determined = true;
        fit.covariance_names.push_back(pe.name);
        for (int b = 0; b < q; ++b) fit.covariance.push_back(state.covariance.covariance(a, b));
      }
    }
    fit.fitted = state.predicted;
    fit.residuals.resize(fit.n);
    for (int i = 0; i < fit.n; ++i) fit.residuals[i] = kp.response[i] - state.predicted[i];
    fit.group_values.assign(kp.design.num_groups, {});
    const int k = static_cast<int>(DescribeModel(model).parameters.size());
    for (int g = 0; g < kp.design.num_groups; ++g) {
      for (int j = 0; j < k; ++j) {
        fit.group_values[g].push_back(best.theta[kp.design.slots[g * k + j]]);
      }
    }

    const auto interval_start = std::chrono::steady_clock::now();
    fit.derived.clear();
    fit.warnings.clear();
    const bool finished = detail::FillIntervals(state, &fit);
    fit.summary.interval_time_seconds = seconds_since(interval_start);
    if (!finished) {
      fit.summary.termination = FitTermination::kUserAbort;
      fit.summary.message = "cancelled while computing intervals";
      break;
    }
    if (state.found_better_minimum && pass == 0) {
      const detail::EngineSolution restart = solve_from(state.better_theta);
      if (restart.usable() && restart.objective < state.objective_hat) {
        best = restart;
        continue;
      }
    }
    break;
  }
  if (fit.summary.IsSolutionUsable()) detail::FillDerived(state, data, &fit);
  detail::AddDiagnostics(data, kp, &fit);
  if (state.found_better_minimum) {
    fit.warnings.push_back({std::string(kFitWarningNotConverged),
                            "a profile re-optimisation found a lower sum of squares than the "
                            "fit (refitted from there once): the objective is flat or has "
                            "several minima; treat the estimates with care"});
  }
  fit.summary.fit_time_seconds =
      seconds_since(clock_start) - std::max(0.0, fit.summary.interval_time_seconds);
  return fit;
}

}  // namespace ratewell
