// Confidence intervals of the parameters and of the derived quantities.
#include <algorithm>
#include <cmath>
#include <sstream>
#include <thread>

#include "fitting/detail/fit_kinetic.h"
#include "fitting/detail/fit_statistics.h"

namespace ratewell::detail {
namespace {

// More failed bootstrap refits than this fraction leave the percentile
// interval not determined: the successful draws would no longer represent
// the sampling distribution (failures are not random).
constexpr double kMaxBootstrapFailureFraction = 0.05;
constexpr double kLn10 = 2.302585092994045684;

std::string Number(double x) {
  std::ostringstream out;
  out.precision(6);
  out << x;
  return out.str();
}

double NormalCdf(double z) { return 0.5 * std::erfc(-z / std::sqrt(2.0)); }

std::string RobustNote(const FitOptions& options) {
  if (options.loss == RobustLoss::kNone) return "";
  return "approximate: robust loss (" + std::string(RobustLossToString(options.loss)) +
         "), IRLS weights at the optimum";
}

std::string Join(const std::string& a, const std::string& b) {
  if (a.empty()) return b;
  if (b.empty()) return a;
  return a + "; " + b;
}

int Threads(const FitOptions& options) {
  if (options.num_threads > 0) return options.num_threads;
  return std::max(1u, std::thread::hardware_concurrency());
}

ProfileSettings MakeProfileSettings(const FittedState& state, int* done, int total) {
  ProfileSettings settings;
  settings.objective_hat = state.objective_hat;
  settings.s2 = state.s2;
  settings.tau_target = state.t_quantile;
  const FitOptions* options = state.options;
  if (options->progress) {
    settings.keep_going = [options, done, total]() {
      FitProgress progress;
      progress.stage = "profile";
      progress.iteration = *done;
      progress.fraction = total > 0 ? std::min(1.0, static_cast<double>(*done) / total) : 1.0;
      return options->progress(progress);
    };
  }
  return settings;
}

void SetFromProfile(const ProfileResult& result, Interval* ci) {
  ci->lower = result.lower.found ? result.lower.value : ci->lower;
  ci->upper = result.upper.found ? result.upper.value : ci->upper;
  ci->determined = result.lower.found && result.upper.found;
  if (!result.lower.found) ci->reason = Join(ci->reason, "lower limit: " + result.lower.reason);
  if (!result.upper.found) ci->reason = Join(ci->reason, "upper limit: " + result.upper.reason);
}

}  // namespace

bool FillIntervals(FittedState& state, KineticFit* fit) {
  const FitOptions& options = *state.options;
  const KineticProblem& kp = *state.kinetic;
  const int p = static_cast<int>(kp.specs.size());
  const IntervalMethod method = options.interval_method;
  const double alpha = 1.0 - options.confidence_level;
  std::vector<int> to_do;
  for (int e = 0; e < p; ++e) {
    Interval& ci = fit->parameters[e].ci;
    ci = Interval();
    ci.method = method;
    ci.level = options.confidence_level;
    if (kp.specs[e].fixed) {
      ci.reason = "fixed, not fitted";
    } else if (state.at_bound[e]) {
      ci.reason = "the estimate is at its bound " + Number(fit->parameters[e].value) +
                  ": the sampling theory behind the interval does not apply";
    } else {
      to_do.push_back(e);
    }
  }

  if (method == IntervalMethod::kAsymptotic) {
    for (int e : to_do) {
      ParameterEstimate& pe = fit->parameters[e];
      if (!pe.se_determined) {
        pe.ci.reason = pe.se_reason;
        continue;
      }
      pe.ci.lower = pe.value - state.t_quantile * pe.se;
      pe.ci.upper = pe.value + state.t_quantile * pe.se;
      pe.ci.determined = true;
      pe.ci.note = RobustNote(options);
    }
    return true;
  }

  if (method == IntervalMethod::kProfile) {
    int done = 0;
    const ProfileSettings settings =
        MakeProfileSettings(state, &done, static_cast<int>(to_do.size()));
    for (int e : to_do) {
      ParameterEstimate& pe = fit->parameters[e];
      const double step = pe.se_determined ? state.t_quantile * pe.se : 0.0;
      const ProfileResult result = ProfileParameter(*state.problem, state.theta_hat, e, step,
                                                    settings);
      ++done;
      if (result.found_better_minimum &&
          (!state.found_better_minimum ||
           result.better_objective < state.objective_hat)) {
        state.found_better_minimum = true;
        state.better_theta = result.better_theta;
      }
      SetFromProfile(result, &pe.ci);
      pe.ci.note = RobustNote(options);
      if (result.cancelled) {
        pe.ci.reason = "cancelled";
        return false;
      }
    }
    return true;
  }

  // Bootstrap.
  BootstrapSettings settings;
  settings.scheme = options.bootstrap_scheme;
  settings.resamples = options.bootstrap_resamples;
  settings.seed = options.bootstrap_seed;
  settings.threads = Threads(options);
  settings.relative_weights = options.weighting == Weighting::kRelative;
  if (options.progress) {
    settings.progress = [&options](int done, int total) {
      FitProgress progress;
      progress.stage = "bootstrap";
      progress.iteration = done;
      progress.fraction = static_cast<double>(done) / total;
      return options.progress(progress);
    };
  }
  const BootstrapRun run =
      RunBootstrap(*state.source, *state.data, kp.specs, state.theta_hat, kp.log_scale,
                   state.predicted, state.weighted_residuals, settings);
  fit->bootstrap.run = true;
  fit->bootstrap.scheme = settings.scheme;
  fit->bootstrap.seed = settings.seed;
  fit->bootstrap.requested = settings.resamples;
  fit->bootstrap.succeeded = run.succeeded;
  fit->bootstrap.failed = run.failed;
  fit->bootstrap.threads = run.threads;
  fit->bootstrap_draws.clear();
  for (const std::vector<double>& draw : run.draws) {
    if (!draw.empty()) fit->bootstrap_draws.push_back(draw);
  }
  // Percentile levels: plain α/2, 1 − α/2, or expanded to Φ(∓z').
  double p_lower = 0.5 * alpha, p_upper = 1.0 - 0.5 * alpha;
  std::string level_note = "percentile";
  if (options.bootstrap_expanded_percentile) {
    const int n = state.data->size();
    const int dof = n - kp.num_free;
    double z = state.t_quantile;
    if (settings.scheme == BootstrapScheme::kCases) z *= std::sqrt(static_cast<double>(n) / dof);
    p_lower = NormalCdf(-z);
    p_upper = NormalCdf(z);
    level_note = "expanded percentile (levels " + Number(p_lower) + ", " + Number(p_upper) +
                 ": t(" + std::to_string(dof) + ") for the estimated variance)";
  }
  fit->bootstrap.lower_level = p_lower;
  fit->bootstrap.upper_level = p_upper;
  const bool too_many_failures =
      run.failed > kMaxBootstrapFailureFraction * settings.resamples || run.succeeded < 2;
  for (int e : to_do) {
    Interval& ci = fit->parameters[e].ci;
    if (run.cancelled) {
      ci.reason = "cancelled";
      continue;
    }
    if (too_many_failures) {
      ci.reason = std::to_string(run.failed) + " of " + std::to_string(settings.resamples) +
                  " bootstrap refits failed (more than " +
                  Number(100.0 * kMaxBootstrapFailureFraction) +
                  " %): the parameter is not determined well enough to resample";
      continue;
    }
    std::vector<double> values;
    for (const std::vector<double>& draw : fit->bootstrap_draws) values.push_back(draw[e]);
    std::sort(values.begin(), values.end());
    ci.lower = SortedQuantile(values, p_lower);
    ci.upper = SortedQuantile(values, p_upper);
    ci.determined = true;
    ci.note = Join(level_note + ", " + BootstrapSchemeToString(settings.scheme) +
                       " resampling, " + std::to_string(run.succeeded) + " refits",
                   RobustNote(options));
  }
  return !run.cancelled;
}

namespace {

// g(θ) = factor·T(θ[a]) (T identity, or 10^x when pow10), or
// factor·θ[a]/θ[b] when b ≥ 0.
struct DerivedSpec {
  std::string name;
  std::string unit;
  std::string group;
  int a = -1;
  int b = -1;
  double factor = 1.0;
  bool pow10 = false;
  std::string what;  // "kcat = Vmax/[E]" for notes
  // Cheng–Prusoff: d factor / d Km and the Km SE, for the delta method.
  double dfactor_dkm = 0.0;
  double km_se = 0.0;
};

double Transform(const DerivedSpec& d, double x) { return d.pow10 ? std::pow(10.0, x) : x; }

double ValueOf(const DerivedSpec& d, const std::vector<double>& theta) {
  if (d.b >= 0) return d.factor * theta[d.a] / theta[d.b];
  return d.factor * Transform(d, theta[d.a]);
}

// Position of θ entry e in the covariance matrix, or -1.
int CovarianceIndex(const CovarianceEstimate& covariance, int e) {
  for (size_t m = 0; m < covariance.free.size(); ++m) {
    if (covariance.free[m] == e) return static_cast<int>(m);
  }
  return -1;
}

// Entries a parameter estimate is usable for a derived interval; else why not.
std::string Unusable(const KineticFit& fit, const FittedState& state, int e) {
  if (state.kinetic->specs[e].fixed) return "";
  if (state.at_bound[e]) return fit.parameters[e].name + " is at its bound";
  return "";
}

std::vector<DerivedSpec> DerivedSpecs(const KineticData& data, const KineticProblem& kp,
                                      const FitOptions& options, KineticFit* fit) {
  std::vector<DerivedSpec> specs;
  const DerivedInputs& in = options.derived;
  const ModelDescription& description = DescribeModel(kp.model);
  const bool standard_units = data.rate_unit == "uM/min" && data.concentration_unit == "uM";
  const int k = static_cast<int>(description.parameters.size());
  const int vmax = ParameterIndex(kp.model, "Vmax");
  const int km = ParameterIndex(kp.model, "Km");
  auto suffix = [](const std::string& group) { return group.empty() ? "" : "[" + group + "]"; };
  auto skip = [&](const std::string& what) {
    fit->warnings.push_back({std::string(kFitWarningDerivedSkipped),
                             what + " not computed: it needs rates in uM/min and concentrations "
                                    "in uM, the data are in " +
                                 data.rate_unit + " and " + data.concentration_unit});
  };
  if ((in.enzyme_nM || in.enzyme_mg_per_mL) && vmax >= 0 && !standard_units) {
    skip("kcat, kcat/Km and specific activity are");
  } else if (vmax >= 0) {
    // Groups that have their own Vmax (or Km) each get their own value.
    std::vector<std::pair<int, int>> pairs;  // (Vmax entry, Km entry or -1)
    for (int g = 0; g < kp.design.num_groups; ++g) {
      const int a = kp.design.slots[g * k + vmax];
      const int b = km >= 0 ? kp.design.slots[g * k + km] : -1;
      if (std::find(pairs.begin(), pairs.end(), std::make_pair(a, b)) == pairs.end()) {
        pairs.emplace_back(a, b);
      }
    }
    for (const auto& [a, b] : pairs) {
      const std::string group = !kp.group[a].empty() ? kp.group[a]
                                : b >= 0           ? kp.group[b]
                                                   : "";
      if (in.enzyme_nM) {
        // Vmax µM/min over [E] = enzyme_nM·1e-3 µM gives min⁻¹; /60 gives s⁻¹.
        const double per_s = 1.0 / (*in.enzyme_nM * 1e-3 * 60.0);
        DerivedSpec kcat;
        kcat.name = "kcat" + suffix(kp.group[a]);
        kcat.unit = "1/s";
        kcat.group = kp.group[a];
        kcat.a = a;
        kcat.factor = per_s;
        kcat.what = "kcat = Vmax/[E]";
        if (std::none_of(specs.begin(), specs.end(),
                         [&](const DerivedSpec& d) { return d.name == kcat.name; })) {
          specs.push_back(kcat);
        }
        if (b >= 0) {
          // kcat/Km in s⁻¹·µM⁻¹, times 1e6 µM/M.
          DerivedSpec ratio;
          ratio.name = "kcat/Km" + suffix(group);
          ratio.unit = "1/(M*s)";
          ratio.group = group;
          ratio.a = a;
          ratio.b = b;
          ratio.factor = per_s * 1e6;
          ratio.what = "kcat/Km = Vmax/([E]*Km)";
          specs.push_back(ratio);
        }
      }
      if (in.enzyme_mg_per_mL) {
        // µmol/(L·min) over mg/L (= 1000·mg/mL) gives µmol/(min·mg) = U/mg.
        DerivedSpec activity;
        activity.name = "specific_activity" + suffix(kp.group[a]);
        activity.unit = "U/mg";
        activity.group = kp.group[a];
        activity.a = a;
        activity.factor = 1.0 / (1000.0 * *in.enzyme_mg_per_mL);
        activity.what = "specific activity = Vmax/(enzyme mg/mL * 1000)";
        if (std::none_of(specs.begin(), specs.end(),
                         [&](const DerivedSpec& d) { return d.name == activity.name; })) {
          specs.push_back(activity);
        }
      }
    }
  }
  const bool logistic = kp.model == KineticModel::kFourParameterLogistic ||
                        kp.model == KineticModel::kFourParameterLogisticLog10;
  const bool log_form = kp.model == KineticModel::kFourParameterLogisticLog10;
  if (logistic) {
    const int x50 = ParameterIndex(kp.model, log_form ? "log10_IC50" : "IC50");
    for (int g = 0; g < kp.design.num_groups; ++g) {
      const int a = kp.design.slots[g * k + x50];
      const std::string group = kp.group[a];
      if (g > 0 && group.empty()) break;
      if (log_form) {
        DerivedSpec ic50;
        ic50.name = "IC50" + suffix(group);
        ic50.unit = data.concentration_unit;
        ic50.group = group;
        ic50.a = a;
        ic50.pow10 = true;
        ic50.what = "IC50 = 10^log10_IC50";
        specs.push_back(ic50);
      }
      if (in.cheng_prusoff_mode) {
        const double s = in.cheng_prusoff_substrate_uM, kmv = in.cheng_prusoff_km_uM;
        DerivedSpec ki;
        ki.name = "Ki" + suffix(group);
        ki.unit = data.concentration_unit;
        ki.group = group;
        ki.a = a;
        ki.pow10 = log_form;
        ki.km_se = in.cheng_prusoff_km_se_uM;
        switch (*in.cheng_prusoff_mode) {
          case KineticModel::kCompetitive:
            ki.factor = kmv / (kmv + s);  // 1/(1 + S/Km)
            ki.dfactor_dkm = s / ((kmv + s) * (kmv + s));
            ki.what = "Cheng-Prusoff, competitive: Ki = IC50/(1 + S/Km)";
            break;
          case KineticModel::kUncompetitive:
            ki.factor = s / (s + kmv);  // 1/(1 + Km/S)
            ki.dfactor_dkm = -s / ((s + kmv) * (s + kmv));
            ki.what = "Cheng-Prusoff, uncompetitive: Ki = IC50/(1 + Km/S)";
            break;
          default:
            ki.factor = 1.0;
            ki.what = "Cheng-Prusoff, noncompetitive: Ki = IC50";
            break;
        }
        specs.push_back(ki);
      }
    }
  }
  return specs;
}

}  // namespace

void FillDerived(FittedState& state, const KineticData& data, KineticFit* fit) {
  const FitOptions& options = *state.options;
  const KineticProblem& kp = *state.kinetic;
  const std::vector<DerivedSpec> specs = DerivedSpecs(data, kp, options, fit);
  const IntervalMethod method = options.interval_method;
  for (const DerivedSpec& d : specs) {
    ParameterEstimate pe;
    pe.name = d.name;
    pe.unit = d.unit;
    pe.group = d.group;
    pe.value = ValueOf(d, state.theta_hat);
    pe.ci.method = method;
    pe.ci.level = options.confidence_level;
    const ParameterEstimate& pa = fit->parameters[d.a];
    std::string blocked = Unusable(*fit, state, d.a);
    if (blocked.empty() && d.b >= 0) blocked = Unusable(*fit, state, d.b);

    // Delta-method SE: var g = ∇gᵀ·Cov·∇g (+ Km's share for Cheng–Prusoff).
    const int ia = CovarianceIndex(state.covariance, d.a);
    const int ib = d.b >= 0 ? CovarianceIndex(state.covariance, d.b) : -1;
    const bool a_free = !kp.specs[d.a].fixed, b_free = d.b >= 0 && !kp.specs[d.b].fixed;
    const bool covariance_ok = state.covariance.ok && (!a_free || ia >= 0) &&
                               (!b_free || ib >= 0) && blocked.empty();
    if (covariance_ok) {
      double ga = 0.0, gb = 0.0;
      if (d.b >= 0) {
        ga = d.factor / state.theta_hat[d.b];
        gb = -d.factor * state.theta_hat[d.a] / (state.theta_hat[d.b] * state.theta_hat[d.b]);
      } else {
        ga = d.pow10 ? d.factor * kLn10 * Transform(d, state.theta_hat[d.a]) : d.factor;
      }
      const Eigen::MatrixXd& c = state.covariance.covariance;
      double var = 0.0;
      if (ia >= 0) var += ga * ga * c(ia, ia);
      if (ib >= 0) var += gb * gb * c(ib, ib) + 2.0 * ga * gb * c(ia, ib);
      if (d.km_se > 0.0 && d.factor > 0.0) {
        const double base = Transform(d, state.theta_hat[d.a]);
        var += base * base * d.dfactor_dkm * d.dfactor_dkm * d.km_se * d.km_se;
      }
      pe.se = std::sqrt(var);
      pe.se_determined = true;
    } else {
      pe.se_reason = !blocked.empty() ? blocked : pa.se_reason;
    }
    const std::string km_note =
        d.km_se > 0.0 && method != IntervalMethod::kAsymptotic
            ? "Km taken as exact (its SE enters the asymptotic interval only)"
            : "";

    if (!blocked.empty()) {
      pe.ci.reason = blocked;
    } else if (method == IntervalMethod::kAsymptotic) {
      if (!pe.se_determined) {
        pe.ci.reason = pe.se_reason;
      } else if (d.pow10) {
        // Back-transform of the log10-scale interval (asymmetric, > 0).
        double half = state.t_quantile * pa.se;
        if (d.km_se > 0.0) half = state.t_quantile * pe.se / (kLn10 * pe.value);
        pe.ci.lower = d.factor * std::pow(10.0, state.theta_hat[d.a] - half);
        pe.ci.upper = d.factor * std::pow(10.0, state.theta_hat[d.a] + half);
        pe.ci.determined = true;
        pe.ci.note = d.what + "; asymptotic interval on the log10 scale, back-transformed; "
                              "SE by the delta method";
      } else {
        pe.ci.lower = pe.value - state.t_quantile * pe.se;
        pe.ci.upper = pe.value + state.t_quantile * pe.se;
        pe.ci.determined = true;
        pe.ci.note = d.what + "; delta method";
      }
    } else if (method == IntervalMethod::kProfile) {
      if (d.b < 0) {
        // A monotone function of one parameter: its profile interval maps
        // over (profile intervals do not depend on the parameterisation).
        pe.ci.determined = pa.ci.determined;
        pe.ci.reason = pa.ci.reason;
        if (kp.specs[d.a].fixed) pe.ci.reason = "depends only on a fixed parameter";
        if (pa.ci.determined) {
          pe.ci.lower = d.factor * Transform(d, pa.ci.lower);
          pe.ci.upper = d.factor * Transform(d, pa.ci.upper);
        }
        pe.ci.note = Join(d.what + "; profile interval of " + pa.name + ", transformed", km_note);
      } else {
        // Ratio: profile the reparameterised model θa = q·θb.
        std::vector<ParameterSpec> specs_hat = kp.specs;
        for (size_t e = 0; e < specs_hat.size(); ++e) specs_hat[e].start = state.theta_hat[e];
        EngineOptions engine;
        engine.loss = options.loss;
        engine.loss_scale = options.loss_scale;
        engine.function_tolerance = options.function_tolerance;
        engine.gradient_tolerance = options.gradient_tolerance;
        engine.parameter_tolerance = options.parameter_tolerance;
        engine.max_iterations = options.max_iterations;
        LeastSquaresProblem ratio_problem(*state.source, *state.data, specs_hat, engine);
        ratio_problem.EnableRatio(d.a, d.b);
        int done = 0;
        const ProfileSettings settings = MakeProfileSettings(state, &done, 1);
        const double q_hat = state.theta_hat[d.a] / state.theta_hat[d.b];
        const double step = pe.se_determined ? state.t_quantile * pe.se / d.factor : 0.1 * q_hat;
        const ProfileResult result =
            ProfileRatio(ratio_problem, state.theta_hat, d.a, d.b, step, settings);
        SetFromProfile(result, &pe.ci);
        pe.ci.lower *= d.factor;
        pe.ci.upper *= d.factor;
        pe.ci.note = d.what + "; profile of the reparameterised model " + pa.name + " = q*" +
                     fit->parameters[d.b].name;
      }
      pe.ci.note = Join(pe.ci.note, RobustNote(options));
    } else {
      const BootstrapReport& report = fit->bootstrap;
      if (pa.ci.determined || kp.specs[d.a].fixed) {
        std::vector<double> values;
        for (const std::vector<double>& draw : fit->bootstrap_draws) {
          values.push_back(ValueOf(d, draw));
        }
        std::sort(values.begin(), values.end());
        if (values.size() >= 2 && (d.b < 0 || fit->parameters[d.b].ci.determined ||
                                   kp.specs[d.b].fixed)) {
          pe.ci.lower = SortedQuantile(values, report.lower_level);
          pe.ci.upper = SortedQuantile(values, report.upper_level);
          pe.ci.determined = true;
          pe.ci.note = Join(d.what + "; percentile of the derived value over " +
                                std::to_string(report.succeeded) + " bootstrap refits",
                            km_note);
        } else {
          pe.ci.reason = "the bootstrap did not determine its parameters";
        }
      } else {
        pe.ci.reason = pa.ci.reason;
      }
    }
    fit->derived.push_back(pe);
  }
}

}  // namespace ratewell::detail
