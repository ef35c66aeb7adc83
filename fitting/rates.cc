#include "fitting/rates.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <sstream>
#include <stdexcept>

#include "fitting/detail/rate_ceres_fits.h"
#include "fitting/detail/rate_lag_bend.h"
#include "fitting/detail/rate_lambert.h"
#include "fitting/detail/rate_statistics.h"

namespace ratewell {
namespace {

using detail::BendTerm;
using detail::LagBendFitter;
using detail::LagBendResult;
using detail::LagBendSettings;

// The coupling lag is over when e^(−t/τ) < 1 %, t = ln(100)·τ ≈ 4.6 τ
// (McClure 1969); kLinear starts its automatic window there.
constexpr double kLagSkipFactor = 4.605170185988091;
// The automatic window never shrinks below this many points: p0, v, c and τ
// plus two degrees of freedom.
constexpr int kMinAutoPoints = 6;
// A shortened ("nonlinear") window keeps this fraction of its length per step.
constexpr double kShrinkFactor = 0.7;
// Safety cap on the window iterations (they settle in 2–4).
constexpr int kMaxWindowIterations = 16;
// Residual RMS below this fraction of the largest product signal is below
// any reader's resolution (readers report 3–4 decimals of absorbance): the
// linearity checks then have nothing to test (exact data, where the lag
// search's own tolerance leaves residuals of that order).
constexpr double kNegligibleResidual = 1e-6;

constexpr std::array<std::string_view, 10> kFlagOrder = {
    kRateFlagLag,          kRateFlagSaturatedPoints, kRateFlagMissingPoints,
    kRateFlagNonlinear,    kRateFlagSubstrateDepleted, kRateFlagSubstrateUnknown,
    kRateFlagNadhLow,      kRateFlagNoisy,           kRateFlagFewPoints,
    kRateFlagNegative};

struct WindowEndName {
  WindowEnd reason;
  const char* name;
};
constexpr WindowEndName kWindowEndNames[] = {
    {WindowEnd::kNone, "none"},
    {WindowEnd::kSubstrateConsumed, "substrate-consumed"},
    {WindowEnd::kNadhLow, "nadh-low"},
    {WindowEnd::kAbsorbanceCeiling, "absorbance-ceiling"},
    {WindowEnd::kNonlinear, "nonlinear"},
    {WindowEnd::kEndOfRead, "end-of-read"},
    {WindowEnd::kUserWindow, "user-window"},
};

std::string Format(const char* format, double value) {
  char buffer[64];
  std::snprintf(buffer, sizeof(buffer), format, value);
  return buffer;
}

// The usable reads of one trace.
struct Prepared {
  std::vector<double> time_min;    // reader clock
  std::vector<double> t;           // minutes from the start of the reaction
  std::vector<double> absorbance;
  std::vector<double> product;     // F·(A − A of the first usable read), µM
  WindowEnd usable_end = WindowEnd::kEndOfRead;
  std::vector<double> saturated_times;  // saturated or over the ceiling
  std::vector<double> missing_times;
  bool below_floor_at_start = false;
  std::string problem;             // non-empty: the trace cannot be used
};

Prepared Prepare(const Series& series, double factor, const RateOptions& options) {
  Prepared p;
  const std::size_t n = series.size();
  double lo = options.reaction_start_min, hi = std::numeric_limits<double>::infinity();
  if (options.window_min && n > 0) {
    const double first_read = series.time_min[0];
    lo = std::max(lo, first_read + options.window_min->first);
    hi = first_read + options.window_min->second;
  }
  const bool consumed = factor < 0.0;
  bool started = false, stopped = false;
  double previous_time = -std::numeric_limits<double>::infinity();
  for (std::size_t i = 0; i < n; ++i) {
    const double time = series.time_min[i];
    if (!std::isfinite(time)) {
      p.missing_times.push_back(previous_time);
      continue;
    }
    if (time < previous_time) {
      p.problem = "read times go backwards at read " + std::to_string(i + 1);
      return p;
    }
    previous_time = time;
    if (time < lo) continue;
    if (time > hi) break;
    const PointStatus status = series.status[i];
    const double value = series.value[i];
    if (status == PointStatus::kMissing ||
        (status == PointStatus::kValid && !std::isfinite(value))) {
      p.missing_times.push_back(time);
      continue;
    }
    if (status == PointStatus::kSaturated || value > options.absorbance_ceiling) {
      p.saturated_times.push_back(time);
      if (started) {
        p.usable_end = WindowEnd::kAbsorbanceCeiling;
        stopped = true;
        break;
      }
      continue;
    }
    if (consumed && options.nadh_floor_absorbance > 0.0 &&
        value < options.nadh_floor_absorbance) {
      if (!started) p.below_floor_at_start = true;
      p.usable_end = WindowEnd::kNadhLow;
      stopped = true;
      break;
    }
    started = true;
    p.time_min.push_back(time);
    p.t.push_back(time - options.reaction_start_min);
    p.absorbance.push_back(value);
  }
  if (!stopped) p.usable_end = options.window_min ? WindowEnd::kUserWindow : WindowEnd::kEndOfRead;
  p.product.resize(p.absorbance.size());
  for (std::size_t i = 0; i < p.absorbance.size(); ++i) {
    p.product[i] = factor * (p.absorbance[i] - p.absorbance[0]);
  }
  return p;
}

// The automatic window and the lag-and-bend fit over it.
struct AutoResult {
  LagBendResult fit;
  int end = 0;
  WindowEnd reason = WindowEnd::kNone;
  bool nonlinear = false;
  bool depleted = false;       // the substrate rule wanted fewer than kMinAutoPoints
  bool lag_modelled = false;
  bool bend_modelled = false;
};

class AutoWindow {
 public:
  AutoWindow(const Prepared& prepared, const RateInput& input, const RateOptions& options)
      : p_(prepared), options_(options), fitter_(prepared.t, prepared.product) {
    s0_ = input.substrate_uM;
    substrate_known_ = std::isfinite(s0_) && s0_ > 0.0;
    no_substrate_ = std::isfinite(s0_) && s0_ == 0.0;
    elasticity_mean_ = options.elasticity_prior_mean;
    elasticity_sd_ = options.elasticity_prior_sd;
    if (substrate_known_ && std::isfinite(input.km_apparent_uM)) {
      elasticity_mean_ = input.km_apparent_uM / (input.km_apparent_uM + s0_);
      elasticity_sd_ = options.known_km_elasticity_sd;
    }
    known_tau_ = input.coupling_tau_min;
    for (double y : prepared.product) max_abs_product_ = std::max(max_abs_product_, std::abs(y));
    noise_variance_ = detail::SecondDifferenceVariance(
        prepared.product.data(), static_cast<int>(prepared.product.size()));
  }

  bool substrate_known() const { return substrate_known_; }

  // Settings for a fit over `end` points, with the bend prior built from the
  // current rate estimate v (NaN: none yet, curvature free).
  LagBendSettings Settings(int end, double v, bool* lag, bool* bend) const {
    LagBendSettings s;
    s.fit_lag = options_.max_lag_min > 0.0 && !std::isfinite(known_tau_);
    s.tau_max_min = options_.max_lag_min;
    if (std::isfinite(known_tau_)) s.known_tau_min = known_tau_;
    s.bend = no_substrate_ ? BendTerm::kNone : BendTerm::kFree;
    if (substrate_known_ && std::isfinite(v)) {
      const double c_max = v * v / (2.0 * s0_);
      if (c_max > 0.0) {
        s.bend = BendTerm::kPrior;
        s.c_prior_mean = elasticity_mean_ * c_max * (v > 0.0 ? 1.0 : 0.0);
        s.c_prior_sd = elasticity_sd_ * c_max;
        s.noise_variance = noise_variance_;
      } else {
        s.bend = BendTerm::kNone;
      }
    }
    // Two degrees of freedom beyond the parameters: drop τ first, then c.
    auto parameters = [&] { return 2 + (s.bend != BendTerm::kNone) + (s.fit_lag ? 1 : 0); };
    if (end < parameters() + 2) s.fit_lag = false;
    if (end < parameters() + 2) s.bend = BendTerm::kNone;
    *lag = s.fit_lag || std::isfinite(known_tau_);
    *bend = s.bend != BendTerm::kNone;
    return s;
  }

  // A fit over `end` points; full: with standard errors and the checks.
  LagBendResult Fit(int end, double v, bool full, AutoResult* out) const {
    LagBendSettings s = Settings(end, v, &out->lag_modelled, &out->bend_modelled);
    s.estimates_only = !full;
    return fitter_.Fit(end, s);
  }

  // Number of points the enzyme needs to consume max_substrate_consumed·S0,
  // from the fitted P_enzyme(t) = v·t − c·t²; size() when it never does.
  int SubstrateLimit(const LagBendResult& fit) const {
    const int n = static_cast<int>(p_.t.size());
    if (!substrate_known_ || !(fit.v > 0.0)) return n;
    const double target = options_.max_substrate_consumed * s0_;
    const double discriminant = fit.v * fit.v - 4.0 * fit.c * target;
    if (discriminant < 0.0) return n;
    const double t_limit = 2.0 * target / (fit.v + std::sqrt(discriminant));
    return static_cast<int>(std::upper_bound(p_.t.begin(), p_.t.end(), t_limit) - p_.t.begin());
  }

  // With S0 known: the free curvature lies outside [0, v²/(2 S0)] by more
  // than z SE. With S0 unknown (curvature free anyway): the residual signs
  // run together (runs z below −z).
  // Residuals far below any reader's resolution carry no evidence either way.
  bool Nonlinear(const LagBendResult& fit) const {
    const double z = options_.linearity_z;
    const double scale = fit.n > 0 ? max_abs_product_ : 0.0;
    if (!(std::sqrt(fit.ssr / std::max(1, fit.n)) > kNegligibleResidual * scale)) return false;
    if (!substrate_known_) return fit.runs_z < -z;
    if (fit.se_c_free > 0.0) {
      const double c_max = fit.v * fit.v / (2.0 * s0_);
      if (fit.c_free - z * fit.se_c_free > c_max) return true;
      if (fit.c_free + z * fit.se_c_free < 0.0) return true;
    }
    return false;
  }

  AutoResult Run(bool apply_rules) const {
    AutoResult out;
    const int n = static_cast<int>(p_.t.size());
    const double kNoRate = std::numeric_limits<double>::quiet_NaN();
    int end = n;
    int cap = n;  // set by the linearity rule
    // First pass: curvature free, to get a rate for the prior. Intermediate
    // fits carry estimates only; the checks need a full fit.
    LagBendResult fit = Fit(end, kNoRate, false, &out);
    if (!fit.ok) fit = Fit(end, 0.0, false, &out);
    bool full = false;
    double prior_rate = kNoRate;
    WindowEnd reason = p_.usable_end;
    std::vector<int> visited = {end};
    for (int iteration = 0; iteration < kMaxWindowIterations && apply_rules; ++iteration) {
      if (!fit.ok) break;
      int next = cap;
      WindowEnd next_reason = cap < n ? WindowEnd::kNonlinear : p_.usable_end;
      const int limit = SubstrateLimit(fit);
      if (limit < next) {
        next = limit;
        next_reason = WindowEnd::kSubstrateConsumed;
      }
      if (next < kMinAutoPoints) {
        out.depleted = next_reason == WindowEnd::kSubstrateConsumed;
        next = std::min(n, kMinAutoPoints);
      }
      if (next != end) {
        const bool cycle = std::find(visited.begin(), visited.end(), next) != visited.end();
        // In a cycle between two neighbouring ends keep the shorter one.
        if (cycle && next > end) break;
        visited.push_back(next);
        end = next;
        reason = next_reason;
        prior_rate = fit.v;
        fit = Fit(end, prior_rate, false, &out);
        full = false;
        if (cycle) break;
        continue;
      }
      reason = next_reason;
      prior_rate = fit.v;
      fit = Fit(end, prior_rate, true, &out);
      full = true;
      if (fit.ok && Nonlinear(fit)) {
        out.nonlinear = true;
        const double t_cut = kShrinkFactor * p_.t[end - 1];
        int shorter = static_cast<int>(
            std::upper_bound(p_.t.begin(), p_.t.begin() + end, t_cut) - p_.t.begin());
        shorter = std::max(shorter, std::min(n, kMinAutoPoints));
        if (shorter < end) {
          cap = shorter;
          end = shorter;
          reason = WindowEnd::kNonlinear;
          visited.assign({end});
          prior_rate = fit.v;
          fit = Fit(end, prior_rate, false, &out);
          full = false;
          continue;
        }
      }
      break;
    }
    // The final fit is a full one with the prior built from (nearly) its own
    // rate.
    if (fit.ok && (!full || !(std::abs(fit.v - prior_rate) <= 0.01 * std::abs(fit.v)))) {
      fit = Fit(end, fit.v, true, &out);
      full = true;
    }
    if (!full) fit.ok = false;
    out.fit = fit;
    out.end = end;
    out.reason = reason;
    return out;
  }

 private:
  const Prepared& p_;
  const RateOptions& options_;
  LagBendFitter fitter_;
  double s0_ = 0.0;
  bool substrate_known_ = false;
  bool no_substrate_ = false;
  double elasticity_mean_ = 0.5;
  double elasticity_sd_ = 0.29;
  double noise_variance_ = 0.0;
  double known_tau_ = std::numeric_limits<double>::quiet_NaN();
  double max_abs_product_ = 0.0;
};

void AddFlag(RateEstimate* estimate, std::string_view flag) {
  if (!estimate->HasFlag(flag)) estimate->flags.emplace_back(flag);
}

void SortFlags(RateEstimate* estimate) {
  auto rank = [](const std::string& flag) {
    return std::find(kFlagOrder.begin(), kFlagOrder.end(), flag) - kFlagOrder.begin();
  };
  std::stable_sort(estimate->flags.begin(), estimate->flags.end(),
                   [&](const std::string& a, const std::string& b) { return rank(a) < rank(b); });
}

RateEstimate Failure(RateMethod method, std::string message) {
  RateEstimate estimate;
  estimate.method_used = method;
  estimate.ok = false;
  estimate.message = std::move(message);
  return estimate;
}

// Fills the fields every method shares. The window is the prepared points
// [begin, end).
void Finish(const Prepared& p, const RateInput& input, const RateOptions& options, int begin,
            int end, double rate, double se, int dof, double ssr, double sst,
            RateEstimate* estimate) {
  const double factor = input.product_uM_per_A;
  estimate->ok = true;
  estimate->rate_uM_per_min = rate;
  estimate->se_uM_per_min = se;
  estimate->degrees_of_freedom = dof;
  const double half = detail::StudentT975(dof) * se;
  estimate->ci95_lo_uM_per_min = rate - half;
  estimate->ci95_hi_uM_per_min = rate + half;
  estimate->points = end - begin;
  estimate->window_start_min = p.time_min[begin];
  estimate->window_end_min = p.time_min[end - 1];
  const detail::LineFit line =
      detail::FitLine(p.time_min.data() + begin, p.absorbance.data() + begin, end - begin);
  estimate->slope_A_per_min = line.ok ? line.slope : 0.0;
  estimate->r_squared = sst > 0.0 ? std::max(0.0, 1.0 - ssr / sst) : 0.0;
  estimate->residual_sd_absorbance = dof > 0 ? std::sqrt(ssr / dof) / std::abs(factor) : 0.0;

  // The region a method looked at: everything read up to the window's end
  // (a saturated start that pushed the window later counts).
  const double region_end = estimate->window_end_min;
  auto in_region = [&](double time) { return time <= region_end; };
  if (std::any_of(p.saturated_times.begin(), p.saturated_times.end(), in_region)) {
    AddFlag(estimate, kRateFlagSaturatedPoints);
  }
  if (std::any_of(p.missing_times.begin(), p.missing_times.end(), in_region)) {
    AddFlag(estimate, kRateFlagMissingPoints);
  }
  if (estimate->window_end == WindowEnd::kNadhLow) AddFlag(estimate, kRateFlagNadhLow);
  if (estimate->residual_sd_absorbance > options.noisy_residual_sd_absorbance) {
    AddFlag(estimate, kRateFlagNoisy);
  }
  if (estimate->points < options.min_points) AddFlag(estimate, kRateFlagFewPoints);
  if (estimate->ci95_hi_uM_per_min < 0.0) AddFlag(estimate, kRateFlagNegative);
  if (!(std::isfinite(input.substrate_uM))) AddFlag(estimate, kRateFlagSubstrateUnknown);
  SortFlags(estimate);
}

// A lag worth telling the reader about: resolved (τ > 1.96 SE) and longer
// than one read interval once 4.6 τ is counted.
bool LagResolved(double tau, double se_tau, bool fixed, const Prepared& p, int end) {
  if (fixed || !(tau > 0.0) || end < 2) return false;
  const double interval = (p.t[end - 1] - p.t[0]) / (end - 1);
  return tau - 1.96 * se_tau > 0.0 && kLagSkipFactor * tau > interval;
}

void SetLag(const Prepared& p, int end, double tau, double se_tau, bool fixed, bool at_upper,
            RateEstimate* estimate, std::vector<std::string>* notes) {
  estimate->lag_tau_min = tau;
  if (!fixed) estimate->lag_tau_se_min = se_tau;
  if (LagResolved(tau, se_tau, fixed, p, end)) AddFlag(estimate, kRateFlagLag);
  if (at_upper) {
    AddFlag(estimate, kRateFlagLag);
    notes->push_back("coupling lag not resolved: tau at its bound " + Format("%.3g", tau) +
                     " min");
  }
}

std::string JoinNotes(const std::vector<std::string>& notes, const char* fallback) {
  if (notes.empty()) return fallback;
  std::string out;
  for (const auto& note : notes) {
    if (!out.empty()) out += "; ";
    out += note;
  }
  return out;
}

RateEstimate EstimateAuto(const Prepared& p, const RateInput& input,
                          const RateOptions& options) {
  const AutoWindow window(p, input, options);
  const AutoResult result = window.Run(!options.window_min.has_value());
  if (!result.fit.ok) {
    return Failure(RateMethod::kAuto, "the lag-and-bend fit failed over " +
                                          std::to_string(result.end) + " points");
  }
  const LagBendResult& fit = result.fit;
  RateEstimate estimate;
  estimate.method_used = RateMethod::kAuto;
  estimate.window_end = result.reason;
  std::vector<std::string> notes;
  if (result.lag_modelled) {
    SetLag(p, result.end, fit.tau, fit.se_tau, fit.tau_fixed, fit.tau_at_upper, &estimate,
           &notes);
  }
  if (window.substrate_known()) {
    const double t_end = p.t[result.end - 1];
    estimate.substrate_consumed_fraction =
        (fit.v * t_end - fit.c * t_end * t_end) / input.substrate_uM;
    if (result.bend_modelled && fit.v != 0.0) {
      estimate.elasticity = 2.0 * fit.c * input.substrate_uM / (fit.v * fit.v);
    }
  }
  if (result.nonlinear) {
    AddFlag(&estimate, kRateFlagNonlinear);
    notes.push_back(window.substrate_known()
                        ? "the trace bends more than Michaelis-Menten depletion allows"
                        : "the residuals run together: the trace is not a smooth bend");
  }
  if (result.depleted) {
    AddFlag(&estimate, kRateFlagSubstrateDepleted);
    notes.push_back("more than " + Format("%.0f", 100.0 * options.max_substrate_consumed) +
                    " % of the substrate was used within the first " +
                    std::to_string(kMinAutoPoints) + " reads");
  }
  if (!window.substrate_known() && !std::isfinite(input.substrate_uM)) {
    notes.push_back("substrate unknown: no substrate rule, curvature fitted freely");
  }
  Finish(p, input, options, 0, result.end, fit.v, fit.se_v, fit.dof, fit.ssr, fit.sst,
         &estimate);
  estimate.message = JoinNotes(notes, "initial rate from the lag-and-bend model");
  return estimate;
}

RateEstimate EstimateLinear(const Prepared& p, const RateInput& input,
                            const RateOptions& options) {
  const int n = static_cast<int>(p.t.size());
  int begin = 0, end = n;
  RateEstimate estimate;
  estimate.method_used = RateMethod::kLinear;
  estimate.window_end = p.usable_end;
  std::vector<std::string> notes;
  if (!options.window_min) {
    const AutoWindow window(p, input, options);
    const AutoResult result = window.Run(true);
    if (result.fit.ok) {
      end = result.end;
      estimate.window_end = result.reason;
      if (result.nonlinear) AddFlag(&estimate, kRateFlagNonlinear);
      if (result.depleted) AddFlag(&estimate, kRateFlagSubstrateDepleted);
      if (result.lag_modelled && result.fit.tau > 0.0) {
        const double skip = kLagSkipFactor * result.fit.tau;
        begin = static_cast<int>(std::lower_bound(p.t.begin(), p.t.begin() + end, skip) -
                                 p.t.begin());
        begin = std::min(begin, end - 3);
        if (begin > 0) {
          AddFlag(&estimate, kRateFlagLag);
          notes.push_back("window starts after 4.6 tau = " + Format("%.3g", skip) + " min");
        }
      }
    }
  }
  const detail::LineFit line =
      detail::FitLine(p.t.data() + begin, p.product.data() + begin, end - begin);
  if (!line.ok) return Failure(RateMethod::kLinear, "all usable reads are at the same time");
  double sst = 0.0, mean = 0.0;
  for (int i = begin; i < end; ++i) mean += p.product[i];
  mean /= (end - begin);
  for (int i = begin; i < end; ++i) sst += (p.product[i] - mean) * (p.product[i] - mean);
  Finish(p, input, options, begin, end, line.slope, line.slope_se, end - begin - 2, line.ssr,
         sst, &estimate);
  estimate.message = JoinNotes(notes, "least-squares line over the window");
  return estimate;
}

RateEstimate EstimateLag(const Prepared& p, const RateInput& input, const RateOptions& options) {
  const int n = static_cast<int>(p.t.size());
  if (n < 4) {
    return Failure(RateMethod::kLag, "the lag model needs at least 4 usable reads, found " +
                                         std::to_string(n));
  }
  RateEstimate estimate;
  estimate.method_used = RateMethod::kLag;
  estimate.window_end = p.usable_end;
  int end = n;
  if (!options.window_min) {
    const AutoWindow window(p, input, options);
    const AutoResult result = window.Run(true);
    if (result.fit.ok) {
      end = std::max(result.end, 4);
      estimate.window_end = result.reason;
      if (result.nonlinear) AddFlag(&estimate, kRateFlagNonlinear);
      if (result.depleted) AddFlag(&estimate, kRateFlagSubstrateDepleted);
    }
  }
  // Start from the profiled fit of the same model, then polish with Ceres.
  const LagBendFitter fitter(p.t, p.product);
  const bool tau_known = std::isfinite(input.coupling_tau_min);
  LagBendSettings settings;
  settings.fit_lag = options.max_lag_min > 0.0 && !tau_known;
  settings.tau_max_min = options.max_lag_min;
  if (tau_known) settings.known_tau_min = input.coupling_tau_min;
  const LagBendResult start = fitter.Fit(end, settings);
  const double tau_max =
      settings.fit_lag ? std::min(options.max_lag_min, p.t[end - 1] / 3.0) : 0.0;
  const detail::CeresRateFit fit = detail::FitLagWithCeres(
      p.t, p.product, end, start.ok ? start.p0 : 0.0, start.ok ? start.v : 0.0,
      tau_known ? input.coupling_tau_min : (start.ok ? start.tau : 0.0), tau_max);
  if (!fit.ok) return Failure(RateMethod::kLag, fit.message);
  std::vector<std::string> notes;
  if (settings.fit_lag || tau_known) {
    SetLag(p, end, fit.tau, fit.se_tau, fit.tau_fixed, fit.tau_at_upper, &estimate, &notes);
  }
  double sst = 0.0, mean = 0.0;
  for (int i = 0; i < end; ++i) mean += p.product[i];
  mean /= end;
  for (int i = 0; i < end; ++i) sst += (p.product[i] - mean) * (p.product[i] - mean);
  Finish(p, input, options, 0, end, fit.v, fit.se_v, fit.dof, fit.ssr, sst, &estimate);
  estimate.message = JoinNotes(notes, "McClure lag model over the window");
  return estimate;
}

RateEstimate EstimateProgress(const Prepared& p, const RateInput& input,
                              const RateOptions& options) {
  const double s0 = input.substrate_uM;
  if (!(std::isfinite(s0) && s0 > 0.0)) {
    return Failure(RateMethod::kProgress,
                   "the progress curve needs the well's substrate concentration (S0 > 0)");
  }
  const int n = static_cast<int>(p.t.size());
  if (n < 5) {
    return Failure(RateMethod::kProgress,
                   "the progress curve needs at least 5 usable reads, found " + std::to_string(n));
  }
  // Starting values from the lag-and-bend model with free curvature.
  const LagBendFitter fitter(p.t, p.product);
  const bool tau_known = std::isfinite(input.coupling_tau_min);
  LagBendSettings settings;
  settings.fit_lag = options.max_lag_min > 0.0 && !tau_known;
  settings.tau_max_min = options.max_lag_min;
  if (tau_known) settings.known_tau_min = input.coupling_tau_min;
  settings.bend = BendTerm::kFree;
  const LagBendResult start = fitter.Fit(n, settings);
  const double v_start = start.ok && start.v != 0.0 ? start.v : 1e-3 * s0;
  double e_start = start.ok ? 2.0 * start.c * s0 / (v_start * v_start) : 0.5;
  if (!std::isfinite(e_start)) e_start = 0.5;
  e_start = std::clamp(e_start, 0.05, 0.95);
  const double tau_max = settings.fit_lag ? std::min(options.max_lag_min, p.t[n - 1] / 3.0) : 0.0;
  const double tau_start = tau_known ? input.coupling_tau_min : (start.ok ? start.tau : 0.0);
  const double p0_start = start.ok ? start.p0 : 0.0;
  detail::ElasticityPrior prior;
  prior.enabled = options.progress_elasticity_prior;
  prior.mean = options.elasticity_prior_mean;
  prior.sd = options.elasticity_prior_sd;
  if (std::isfinite(input.km_apparent_uM)) {
    prior.enabled = true;
    prior.mean = input.km_apparent_uM / (input.km_apparent_uM + s0);
    prior.sd = options.known_km_elasticity_sd;
  }
  prior.noise_sd = std::sqrt(detail::SecondDifferenceVariance(p.product.data(), n));
  detail::CeresRateFit fit = detail::FitProgressWithCeres(
      p.t, p.product, n, s0, p0_start, v_start, e_start, tau_start, tau_max, prior);
  // A second start in the middle of the elasticity range guards against a
  // poor first guess; the smaller sum of squares wins.
  if (std::abs(e_start - 0.5) > 0.1) {
    const detail::CeresRateFit other = detail::FitProgressWithCeres(
        p.t, p.product, n, s0, p0_start, v_start, 0.5, tau_start, tau_max, prior);
    if (other.ok && (!fit.ok || other.ssr < fit.ssr)) fit = other;
  }
  if (!fit.ok) return Failure(RateMethod::kProgress, fit.message);
  RateEstimate estimate;
  estimate.method_used = RateMethod::kProgress;
  estimate.window_end = p.usable_end;
  std::vector<std::string> notes;
  if (settings.fit_lag || tau_known) {
    SetLag(p, n, fit.tau, fit.se_tau, fit.tau_fixed, fit.tau_at_upper, &estimate, &notes);
  }
  estimate.elasticity = fit.elasticity;
  const double t_end = p.t[n - 1];
  const double remaining = detail::SubstrateRemaining(
      t_end, s0, fit.v, fit.elasticity,
      detail::SubstrateExponent(t_end, s0, fit.v, fit.elasticity));
  estimate.substrate_consumed_fraction = 1.0 - remaining / s0;
  double sst = 0.0, mean = 0.0;
  for (int i = 0; i < n; ++i) mean += p.product[i];
  mean /= n;
  for (int i = 0; i < n; ++i) sst += (p.product[i] - mean) * (p.product[i] - mean);
  Finish(p, input, options, 0, n, fit.v, fit.se_v, fit.dof, fit.ssr, sst, &estimate);
  estimate.message = JoinNotes(notes, "integrated Michaelis-Menten progress curve");
  return estimate;
}

void CheckInput(const RateInput& input, const RateOptions& options) {
  std::string error;
  if (!options.IsValid(&error)) throw std::invalid_argument("RateOptions: " + error);
  if (input.series == nullptr) throw std::invalid_argument("RateInput.series: null");
  const Series& s = *input.series;
  if (s.value.size() != s.time_min.size() || s.status.size() != s.time_min.size()) {
    throw std::invalid_argument("RateInput.series: time_min, value and status differ in length");
  }
  if (!std::isfinite(input.product_uM_per_A) || input.product_uM_per_A == 0.0) {
    throw std::invalid_argument("RateInput.product_uM_per_A: expected a finite, non-zero factor");
  }
  if (!std::isnan(input.substrate_uM) &&
      !(std::isfinite(input.substrate_uM) && input.substrate_uM >= 0.0)) {
    throw std::invalid_argument(
        "RateInput.substrate_uM: expected NaN (unknown) or a finite value >= 0");
  }
  if (!std::isnan(input.coupling_tau_min) &&
      !(std::isfinite(input.coupling_tau_min) && input.coupling_tau_min >= 0.0)) {
    throw std::invalid_argument(
        "RateInput.coupling_tau_min: expected NaN (unknown) or a finite value >= 0");
  }
  if (!std::isnan(input.km_apparent_uM) &&
      !(std::isfinite(input.km_apparent_uM) && input.km_apparent_uM > 0.0)) {
    throw std::invalid_argument(
        "RateInput.km_apparent_uM: expected NaN (unknown) or a finite value > 0");
  }
}

}  // namespace

const char* WindowEndToString(WindowEnd reason) {
  for (const auto& entry : kWindowEndNames) {
    if (entry.reason == reason) return entry.name;
  }
  return "unknown";
}

bool StringToWindowEnd(std::string_view text, WindowEnd* reason) {
  for (const auto& entry : kWindowEndNames) {
    if (text == entry.name) {
      *reason = entry.reason;
      return true;
    }
  }
  return false;
}

bool RateOptions::IsValid(std::string* error) const {
  auto fail = [&](const char* message) {
    if (error != nullptr) *error = message;
    return false;
  };
  if (window_min) {
    if (!std::isfinite(window_min->first) || !std::isfinite(window_min->second) ||
        window_min->first < 0.0 || !(window_min->first < window_min->second)) {
      return fail("window_min: expected finite [start, end] with 0 <= start < end");
    }
  }
  if (!std::isfinite(reaction_start_min)) return fail("reaction_start_min: expected a finite time");
  if (!(max_substrate_consumed > 0.0 && max_substrate_consumed < 1.0)) {
    return fail("max_substrate_consumed: expected a fraction in (0, 1)");
  }
  if (!(absorbance_ceiling > 0.0) || !std::isfinite(absorbance_ceiling)) {
    return fail("absorbance_ceiling: expected a finite value > 0");
  }
  if (!(nadh_floor_absorbance >= 0.0) || !std::isfinite(nadh_floor_absorbance)) {
    return fail("nadh_floor_absorbance: expected a finite value >= 0");
  }
  if (!(nadh_floor_absorbance < absorbance_ceiling)) {
    return fail("nadh_floor_absorbance: expected a value below absorbance_ceiling");
  }
  if (!(max_lag_min >= 0.0) || !std::isfinite(max_lag_min)) {
    return fail("max_lag_min: expected a finite value >= 0");
  }
  if (!std::isfinite(elasticity_prior_mean)) {
    return fail("elasticity_prior_mean: expected a finite value");
  }
  if (!(elasticity_prior_sd > 0.0) || !std::isfinite(elasticity_prior_sd)) {
    return fail("elasticity_prior_sd: expected a finite value > 0");
  }
  if (!(known_km_elasticity_sd > 0.0) || !std::isfinite(known_km_elasticity_sd)) {
    return fail("known_km_elasticity_sd: expected a finite value > 0");
  }
  if (!(linearity_z > 0.0) || !std::isfinite(linearity_z)) {
    return fail("linearity_z: expected a finite value > 0");
  }
  if (min_points < 3) return fail("min_points: expected at least 3");
  if (!(noisy_residual_sd_absorbance > 0.0) || !std::isfinite(noisy_residual_sd_absorbance)) {
    return fail("noisy_residual_sd_absorbance: expected a finite value > 0");
  }
  return true;
}

bool RateEstimate::HasFlag(std::string_view flag) const {
  return std::find(flags.begin(), flags.end(), flag) != flags.end();
}

bool RateEstimate::IsUsable() const {
  return ok && std::isfinite(rate_uM_per_min) && std::isfinite(se_uM_per_min);
}

std::string RateEstimate::BriefReport() const {
  if (!ok) return std::string("no rate (") + RateMethodToString(method_used) + "): " + message;
  std::ostringstream out;
  out << Format("%.6g", rate_uM_per_min) << " ± " << Format("%.3g", se_uM_per_min)
      << " µM/min (" << RateMethodToString(method_used) << ", " << points << " points, "
      << Format("%.2f", window_start_min) << "–" << Format("%.2f", window_end_min) << " min, "
      << WindowEndToString(window_end) << ")";
  return out.str();
}

std::string RateEstimate::FullReport() const {
  std::ostringstream out;
  out << "Initial rate (" << RateMethodToString(method_used) << "): "
      << (ok ? "estimated" : "not estimated") << "\n";
  out << "  message           " << message << "\n";
  if (!ok) return out.str();
  out << "  rate              " << Format("%.6g", rate_uM_per_min) << " µM/min\n";
  out << "  SE                " << Format("%.3g", se_uM_per_min) << " µM/min\n";
  out << "  95 % CI           [" << Format("%.6g", ci95_lo_uM_per_min) << ", "
      << Format("%.6g", ci95_hi_uM_per_min) << "] µM/min, " << degrees_of_freedom << " dof\n";
  out << "  slope             " << Format("%.6g", slope_A_per_min) << " A/min\n";
  out << "  window            " << Format("%.3f", window_start_min) << " – "
      << Format("%.3f", window_end_min) << " min, " << points << " points, ended by "
      << WindowEndToString(window_end) << "\n";
  out << "  R²                " << Format("%.6f", r_squared) << "\n";
  out << "  residual SD       " << Format("%.3g", residual_sd_absorbance) << " A\n";
  if (lag_tau_min) {
    out << "  lag τ             " << Format("%.4g", *lag_tau_min) << " min";
    if (lag_tau_se_min) out << " ± " << Format("%.3g", *lag_tau_se_min);
    out << "\n";
  }
  if (substrate_consumed_fraction) {
    out << "  substrate used    " << Format("%.1f", 100.0 * *substrate_consumed_fraction)
        << " % at window end\n";
  }
  if (elasticity) out << "  elasticity Km/(Km+S0) " << Format("%.3g", *elasticity) << "\n";
  out << "  flags            ";
  if (flags.empty()) out << " none";
  for (const auto& flag : flags) out << " " << flag;
  out << "\n";
  return out.str();
}

RateEstimate EstimateInitialRate(const RateInput& input, const RateOptions& options) {
  CheckInput(input, options);
  const Prepared p = Prepare(*input.series, input.product_uM_per_A, options);
  if (!p.problem.empty()) return Failure(options.method, p.problem);
  const int n = static_cast<int>(p.t.size());
  if (n < 3) {
    std::string why = "needs at least 3 usable reads, found " + std::to_string(n);
    if (input.series->empty()) {
      why = "the well has no reads";
    } else if (p.below_floor_at_start) {
      why += " (A340 is below the NADH floor " + Format("%.3g", options.nadh_floor_absorbance) +
             " from the start)";
    } else if (!p.saturated_times.empty() || !p.missing_times.empty()) {
      why += " (" + std::to_string(p.saturated_times.size()) + " saturated or over the ceiling, " +
             std::to_string(p.missing_times.size()) + " missing)";
    }
    RateEstimate failure = Failure(options.method, why);
    if (!p.saturated_times.empty()) AddFlag(&failure, kRateFlagSaturatedPoints);
    if (!p.missing_times.empty()) AddFlag(&failure, kRateFlagMissingPoints);
    if (n > 0) AddFlag(&failure, kRateFlagFewPoints);
    SortFlags(&failure);
    return failure;
  }
  switch (options.method) {
    case RateMethod::kLinear:
      return EstimateLinear(p, input, options);
    case RateMethod::kLag:
      return EstimateLag(p, input, options);
    case RateMethod::kProgress:
      return EstimateProgress(p, input, options);
    case RateMethod::kAuto:
    default:
      return EstimateAuto(p, input, options);
  }
}

}  // namespace ratewell
