// Kinetic fits: weighted nonlinear least squares of a rate law to initial
// rates, with honest confidence intervals.
//
// Background
// ----------
// For observations (Sᵢ, Iᵢ, vᵢ), i = 1..n, and a model f of
// fitting/kinetic_models.h with parameters θ (p of them free), the fit
// minimises
//
//     SSR(θ) = Σᵢ wᵢ·(vᵢ − f(Sᵢ, Iᵢ; θ))²                                   (1)
//
// (Ceres Solver, Levenberg–Marquardt, dense QR, tolerances 1e-12), or with a
// robust loss ρ the sum Σᵢ ρ(wᵢ·rᵢ²). Weights: none (wᵢ = 1), relative
// (wᵢ = 1/vᵢ², constant relative error), or inverse variance (wᵢ = 1/SEᵢ²
// from the well rates). Positive parameters (Vmax, Km, Ki, …) are kept ≥ 0
// by bounds, not by a log transform, so every estimate, SE and interval is on
// the natural scale of the parameter (the log10 IC50 form is the one
// exception: its IC50 is derived, SE by the delta method, interval
// back-transformed — said in the interval's note). Parameters whose limit at
// infinity is a simpler model (Km, Ksi, Khalf, Ki, Kiapp, IC50: 10⁶ × the
// largest concentration of their kind; alpha: 10⁶; h: 10³) are bounded above
// by such an "infinity", so a fit heading there ends on a bound, reported. Starting values are found
// automatically from the data (linearised forms and read-offs give starts
// only; the answer is always the least-squares optimum).
//
// With θ̂ the optimum, n − p degrees of freedom and s² = SSR(θ̂)/(n − p):
//
//   asymptotic   Cov(θ̂) = s²·(JᵀWJ)⁻¹ (J the Jacobian at θ̂), SE = √diag,
//                interval θ̂ ± t(1 − α/2, n − p)·SE (Student t from Boost.Math).
//   profile      each parameter fixed at b with the others re-optimised:
//                τ(b) = sign(b − θ̂)·√((SSR_b − SSR(θ̂))/s²), and the limits
//                solve τ(b) = ±t(1 − α/2, n − p) (Bates & Watts 1988, ch. 6).
//                This is the same interval as the F-based one,
//                SSR_b/SSR(θ̂) = 1 + F(1, n − p; 1 − α)/(n − p), because
//                F(1, ν; 1 − α) = t(1 − α/2, ν)².
//   bootstrap    B refits to resampled data (residuals or cases), percentile
//                interval of the B estimates (by default expanded for the
//                degrees of freedom, see bootstrap_expanded_percentile);
//                seeded, so a report can be reproduced, and the same for any
//                number of threads.
//
// A parameter whose covariance is singular, whose profile never reaches the
// threshold (unbounded interval) or whose bootstrap refits fail is reported
// as not determined, with the reason — never as a number that looks fine.
//
// Model choice (AICc, F test) is in fitting/model_selection.h.
//
// Example:
//   FitOptions options;
//   options.interval_method = IntervalMethod::kProfile;
//   KineticFit fit = FitKineticModel(data, KineticModel::kMichaelisMenten, options);
//   if (fit.summary.IsSolutionUsable()) {
//     const ParameterEstimate* km = fit.Find("Km");
//     std::cout << km->value << " " << km->unit << "\n" << fit.summary.BriefReport() << "\n";
//   }
#pragma once

#include <cstdint>
#include <functional>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "fitting/kinetic_models.h"

namespace ratewell {

// ---------------------------------------------------------------------------
// Options.

enum class Weighting {
  // wᵢ = 1: constant absolute error.
  kNone,
  // wᵢ = 1/vᵢ²: constant relative error. Needs every rate ≠ 0.
  kRelative,
  // wᵢ = 1/SEᵢ² from KineticObservation::rate_se. Needs every SE > 0.
  kInverseVariance,
};
const char* WeightingToString(Weighting weighting);  // "none", "relative", "inverse-variance"
bool StringToWeighting(std::string_view name, Weighting* weighting);

// Robust loss on the weighted residual u = √w·r with scale a (Ceres'
// HuberLoss, CauchyLoss): Huber is quadratic for |u| ≤ a and linear beyond;
// Cauchy is a²·ln(1 + u²/a²). Start without one (Ceres' advice); a robust
// loss makes the intervals approximate (see FitOptions::loss).
enum class RobustLoss { kNone, kHuber, kCauchy };
const char* RobustLossToString(RobustLoss loss);  // "none", "huber", "cauchy"
bool StringToRobustLoss(std::string_view name, RobustLoss* loss);

enum class IntervalMethod { kAsymptotic, kProfile, kBootstrap };
const char* IntervalMethodToString(IntervalMethod method);  // "asymptotic", "profile", "bootstrap"
bool StringToIntervalMethod(std::string_view name, IntervalMethod* method);

enum class BootstrapScheme {
  // y*ᵢ = f̂ᵢ + e*ᵢ/√wᵢ with e* drawn from the centred weighted residuals
  // √wᵢ·rᵢ, inflated by √(n/(n − p)). Keeps the design fixed.
  kResiduals,
  // Draw n observations (Sᵢ, Iᵢ, vᵢ, wᵢ) with replacement. Robust to a
  // wrong error model; a draw that leaves too few distinct points fails.
  kCases,
};
const char* BootstrapSchemeToString(BootstrapScheme scheme);  // "residuals", "cases"
bool StringToBootstrapScheme(std::string_view name, BootstrapScheme* scheme);

// Fix, start or bound one parameter. `name` is a parameter name ("Km") —
// applying to every group of a per-group parameter — or a per-group name
// ("Vmax[treated]").
struct ParameterControl {
  std::string name;
  std::optional<double> fixed_value;  // hold at this value (not fitted)
  std::optional<double> start;        // instead of the automatic start
  std::optional<double> lower;        // replaces the default (0 for positive parameters)
  std::optional<double> upper;        // replaces the default ("infinity" above, or none)
};

// Progress of a fit, handed to FitOptions::progress.
struct FitProgress {
  std::string stage;       // "fit", "profile", "bootstrap"
  int iteration = 0;       // solver iteration ("fit"), refits done otherwise
  double cost = 0.0;       // current objective, ½·Σ wᵢrᵢ² ("fit" only)
  double fraction = 0.0;   // of the stage, in [0, 1]
};
// Return false to cancel: the fit stops with FitTermination::kUserAbort.
using FitProgressCallback = std::function<bool(const FitProgress&)>;

// Inputs for derived quantities (kcat, kcat/Km, specific activity,
// Cheng–Prusoff Ki). Each is computed only when its inputs are given, and
// only for data in µM and µM/min.
struct DerivedInputs {
  // Active enzyme concentration in the well: kcat = Vmax/[E] in s⁻¹ and
  // kcat/Km in M⁻¹·s⁻¹.
  std::optional<double> enzyme_nM;
  // Enzyme mass concentration in the well: specific activity
  // Vmax/(1000·mg/mL) in U/mg (1 U = 1 µmol/min, NC-IUB 1979).
  std::optional<double> enzyme_mg_per_mL;
  // Cheng–Prusoff (1973) Ki from a logistic IC50, for the stated mode
  // (kCompetitive: Ki = IC50/(1 + S/Km); kUncompetitive: Ki = IC50/(1 + Km/S);
  // kNoncompetitive: Ki = IC50). Needs substrate_uM and km_uM, in the data's
  // concentration unit (µM by default).
  std::optional<KineticModel> cheng_prusoff_mode;
  double cheng_prusoff_substrate_uM = 0.0;
  double cheng_prusoff_km_uM = 0.0;
  // Standard error of that Km (from its own fit), added by the delta method
  // to the asymptotic interval of Ki; the profile and bootstrap intervals
  // treat Km as exact and say so. 0: Km taken as exact everywhere.
  double cheng_prusoff_km_se_uM = 0.0;
};

struct FitOptions {
  // Error model, eq. (1). Default: unweighted.
  Weighting weighting = Weighting::kNone;

  // Robust loss and its scale a in units of the weighted residual √w·r.
  // With a loss the SSR reported is still Σ w·r²; the covariance uses the
  // loss's IRLS weights ρ'(u²) at the optimum and s² = Σρ(u²)/(n − p), and
  // the profile uses Σρ in place of SSR: approximations, said in the
  // interval notes.
  RobustLoss loss = RobustLoss::kNone;
  double loss_scale = 1.0;

  // Which interval fills ParameterEstimate::ci. The asymptotic SE is always
  // computed. Profile costs a few dozen refits per parameter; bootstrap
  // bootstrap_resamples refits.
  IntervalMethod interval_method = IntervalMethod::kProfile;
  // Two-sided coverage of the intervals, in (0, 1).
  double confidence_level = 0.95;

  // Bootstrap: number of resamples (≥ 100; percentile limits of a 95 %
  // interval need about 1000 or more to settle), scheme, seed, threads.
  // Resample b draws from its own random stream derived from (seed, b), so
  // the result depends on the seed only, not on num_threads.
  int bootstrap_resamples = 2000;
  BootstrapScheme bootstrap_scheme = BootstrapScheme::kResiduals;
  std::uint64_t bootstrap_seed = 20240611;
  // Worker threads; 0 = all cores (std::thread::hardware_concurrency()).
  int num_threads = 0;
  // Percentile limits at the expanded levels Φ(±z') with z' = t(1 − α/2, n − p)
  // (× √(n/(n − p)) for case resampling, whose draws carry the plug-in
  // variance): Hesterberg's expanded percentile interval (Am. Stat. 69:371,
  // 2015). The plain percentile interval (false) uses the levels α/2 and
  // 1 − α/2 and is too narrow with few degrees of freedom — about 93 %
  // coverage for a nominal 95 % at n − p = 14 — because it cannot see that
  // σ is estimated.
  bool bootstrap_expanded_percentile = true;

  // Parameters fitted once per group (KineticData::group_names), the others
  // shared: {"Vmax"} fits one Vmax per group with one Km for all. Names must
  // be parameters of the model.
  std::vector<std::string> per_group;

  // Fixed values, starts and bounds by name.
  std::vector<ParameterControl> parameters;

  // Morrison: the enzyme concentration E in the data's concentration unit.
  // Required for the morrison model. fit_enzyme = true fits E too, starting
  // from enzyme_uM.
  std::optional<double> enzyme_uM;
  bool fit_enzyme = false;

  // Derived quantities and their inputs.
  DerivedInputs derived;

  // Solver stopping rules (Ceres): stop when |Δcost|/cost < function_tolerance,
  // or max|gradient| < gradient_tolerance, or |Δθ| < parameter_tolerance·(|θ| +
  // parameter_tolerance). The Ceres defaults (1e-6, 1e-10, 1e-8) stop small
  // fits early. After convergence a few Gauss–Newton steps (without a robust
  // loss) take the estimate to the stationary point JᵀWr = 0, where the
  // cost-change test cannot reach: the cost is flat to rounding while the
  // parameters are still ≈ 1e-10 relative away.
  double function_tolerance = 1e-12;
  double gradient_tolerance = 1e-12;
  double parameter_tolerance = 1e-12;
  int max_iterations = 200;

  // Called every solver iteration and after every profile or bootstrap
  // refit; return false to cancel. Called from the calling thread only.
  FitProgressCallback progress;

  // Checks every field; on failure *error says which and why.
  bool IsValid(std::string* error) const;
};

// ---------------------------------------------------------------------------
// Results.

enum class FitTermination {
  // FitKineticModel was not called: the sentinel of a default FitSummary.
  kNotRun,
  // The solver met a stopping rule: the estimates are a least-squares optimum.
  kConvergence,
  // Out of iterations: estimates are updated but may not be the optimum;
  // intervals are computed but should not be trusted.
  kNoConvergence,
  // The solver could not make progress (e.g. the model cannot be evaluated
  // at the start). No estimates.
  kFailure,
  // Cancelled by FitOptions::progress. Estimates are reported if the main
  // fit had finished; intervals not yet computed are not determined.
  kUserAbort,
  // The data or options were unusable (message says which point or field and
  // what was expected). Nothing was fitted.
  kInvalidInput,
};
const char* FitTerminationToString(FitTermination termination);

struct FitSummary {
  FitTermination termination = FitTermination::kNotRun;
  std::string message = "Fit was not run.";
  int iterations = -1;           // solver iterations of the accepted fit
  int starts_tried = 0;          // automatic starting points solved from
  double initial_cost = -1.0;    // ½·SSR at the start (robust: ½·Σρ)
  double final_cost = -1.0;      // ½·SSR at the optimum (robust: ½·Σρ)
  double fit_time_seconds = -1.0;       // solver, all starts
  double interval_time_seconds = -1.0;  // profile or bootstrap

  // True for kConvergence (and kUserAbort after the main fit converged).
  bool IsSolutionUsable() const;
  // One line: model-independent outcome, iterations, costs.
  std::string BriefReport() const;
  // Several lines with every field.
  std::string FullReport() const;
};

struct Interval {
  bool determined = false;
  double lower = std::numeric_limits<double>::quiet_NaN();
  double upper = std::numeric_limits<double>::quiet_NaN();
  IntervalMethod method = IntervalMethod::kAsymptotic;
  double level = 0.95;
  // Why not determined ("covariance singular: …", "profile: no upper limit …").
  std::string reason;
  // How it was obtained when that needs saying (delta method, back-transform,
  // robust-loss approximation, …). Empty for the plain method.
  std::string note;
};

struct ParameterEstimate {
  std::string name;   // "Vmax", or "Vmax[treated]" for a per-group parameter
  std::string unit;   // "uM/min", "uM", "dimensionless", …
  std::string group;  // group name for a per-group parameter, else ""
  double value = std::numeric_limits<double>::quiet_NaN();
  bool fixed = false;     // held by ParameterControl (or Morrison's E)
  bool at_bound = false;  // the optimum sits on a bound

  // Asymptotic standard error s·√[(JᵀWJ)⁻¹]ⱼⱼ.
  bool se_determined = false;
  double se = std::numeric_limits<double>::quiet_NaN();
  std::string se_reason;  // why not determined

  // The interval of FitOptions::interval_method at FitOptions::confidence_level.
  Interval ci;
};

// A warning a reviewer needs, with a code for tables and a sentence for people.
struct FitWarning {
  std::string code;     // kFitWarning* below
  std::string message;
};
inline constexpr std::string_view kFitWarningSubstrateRange = "substrate-range";
inline constexpr std::string_view kFitWarningAtBound = "parameter-at-bound";
inline constexpr std::string_view kFitWarningSystematicResiduals = "systematic-residuals";
inline constexpr std::string_view kFitWarningFewPoints = "few-points";
inline constexpr std::string_view kFitWarningNotConverged = "not-converged";
inline constexpr std::string_view kFitWarningIntervalNotDetermined = "interval-not-determined";
inline constexpr std::string_view kFitWarningIgnoredInhibitor = "inhibitor-ignored";
inline constexpr std::string_view kFitWarningDerivedSkipped = "derived-skipped";

// Wald–Wolfowitz runs test on the signs of the residuals, in order of the
// model's x variable within each series (a series is one group at one
// inhibitor level for the substrate and inhibition models, one group at one
// substrate level for morrison and the logistic). Replicates at the same x
// are averaged first. The p value is exact (the run-count distributions of
// the series convolved) and one-sided: few runs = systematic deviation.
struct RunsTest {
  bool computed = false;   // false with fewer than 2 signs of each kind
  int runs = 0;
  int positive = 0;
  int negative = 0;
  double expected_runs = 0.0;
  double p_value = std::numeric_limits<double>::quiet_NaN();
};

struct BootstrapReport {
  bool run = false;
  BootstrapScheme scheme = BootstrapScheme::kResiduals;
  std::uint64_t seed = 0;
  int requested = 0;
  int succeeded = 0;
  int failed = 0;
  int threads = 0;
  // The quantile levels the limits were read at (see
  // FitOptions::bootstrap_expanded_percentile).
  double lower_level = 0.025;
  double upper_level = 0.975;
};

struct KineticFit {
  KineticModel model = KineticModel::kMichaelisMenten;
  FitSummary summary;

  int n = 0;                // observations
  int num_parameters = 0;   // fitted (free) parameters p
  int dof = 0;              // n − p
  double ssr = std::numeric_limits<double>::quiet_NaN();  // Σ w·r², eq. (1)
  double residual_sd = std::numeric_limits<double>::quiet_NaN();  // s = √(SSR/(n − p))
  // Akaike's criterion from the Gaussian log-likelihood with σ² estimated
  // (k = p + 1 parameters, as R's logLik for nls):
  //   AIC = n·(ln(2π·SSR/n) + 1) − Σ ln wᵢ + 2k,  AICc = AIC + 2k(k + 1)/(n − k − 1).
  // AICc is +infinity when n ≤ k + 1 (too few points to compare).
  double aic = std::numeric_limits<double>::quiet_NaN();
  double aicc = std::numeric_limits<double>::quiet_NaN();
  bool converged = false;
  Weighting weighting = Weighting::kNone;
  RobustLoss loss = RobustLoss::kNone;

  // Every parameter (free and fixed): the rate law's parameters in
  // DescribeModel order, a per-group one expanded in group order.
  std::vector<ParameterEstimate> parameters;
  // Asymptotic covariance of the free parameters (row-major, size p×p,
  // scaled by s²) and their names in matrix order. Empty when singular.
  std::vector<std::string> covariance_names;
  std::vector<double> covariance;

  // Derived quantities with intervals (kcat, kcat/Km, specific activity,
  // Ki by Cheng–Prusoff, IC50 from the log10 form), by the same interval
  // method; Interval::note names how each was obtained.
  std::vector<ParameterEstimate> derived;

  // Per observation, in data order: the model value and v − f.
  std::vector<double> fitted;
  std::vector<double> residuals;
  RunsTest runs_test;
  BootstrapReport bootstrap;
  // The bootstrap estimates, one vector per successful resample, each in
  // `parameters` order (for derived quantities and plots).
  std::vector<std::vector<double>> bootstrap_draws;

  std::vector<FitWarning> warnings;

  // The rate law's values for each group, in DescribeModel order.
  std::vector<std::vector<double>> group_values;

  const ParameterEstimate* Find(std::string_view name) const;
  // Model value at (S, I) for a group, e.g. to draw the fitted curve. NaN
  // when the fit has no estimates.
  double Predict(double substrate_uM, double inhibitor_uM, int group = 0) const;
  bool HasWarning(std::string_view code) const;
};

// Fits `model` to `data`. Never throws for bad data or options: those give
// summary.termination == kInvalidInput and a message naming the point (by
// index and label) or the option, and what was expected.
KineticFit FitKineticModel(const KineticData& data, KineticModel model,
                           const FitOptions& options = FitOptions());

}  // namespace ratewell
