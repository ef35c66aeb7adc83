// Initial rates from one well's absorbance trace.
//
// Background
// ----------
// In a continuous coupled assay the enzyme makes product at a rate v(t); a
// first-order coupling step with time constant τ turns product into the
// oxidation of NADH, and A340 falls. The product signal seen through NADH is
//
//     P(t) = F · (A(t) − A(first read))                                  (1)
//
// with F = product_uM_per_A, the signed Beer–Lambert factor of
// fitting/beer_lambert.h (negative when NADH is consumed, so product counts
// positive). The quantity wanted is the initial rate v0 = v(0): the rate at
// the start of the reaction, before substrate depletion bends the trace.
//
// Models (t in minutes from the start of the reaction, RateOptions::
// reaction_start_min on the reader's clock):
//
//   constant rate with the coupling lag (McClure 1969):
//     P(t) = p0 + v0 · L1(t; τ),      L1 = t − τ·(1 − e^(−t/τ))           (2)
//   (steady state after ≈ 4.6 τ, when the lag term is within 1 % of v0·τ);
//
//   slowly falling rate (first two Taylor terms of the enzyme's product
//   curve, v0·t − c·t², passed through the same first-order lag):
//     P(t) = p0 + v0 · L1(t; τ) − c · L2(t; τ),
//     L2 = t² − 2τt + 2τ²·(1 − e^(−t/τ))                                  (3)
//   For Michaelis–Menten kinetics the curvature is fixed by the rate itself:
//     c = ε_S · v0² / (2·S0),   ε_S = Km / (Km + S0) ∈ [0, 1]             (4)
//   (ε_S is the elasticity d ln v / d ln S at S0; with an inhibitor at fixed
//   concentration Km is the apparent one, still ε_S ∈ [0, 1]);
//
//   the whole progress curve (integrated Michaelis–Menten, closed form of
//   Schnell & Mendoza 1997 with the Lambert W function):
//     S(t) = Km · W0( (S0/Km) · exp((S0 − Vmax·t)/Km) ),
//     P(t) = p0 + lag[S0 − S(t)],   v0 = Vmax·S0/(Km + S0)                (5)
//   where lag[·] passes the enzyme's product through the first-order
//   coupling step (exact exponential integration between reads).
//
// Methods (RateMethod, declared in fitting/assay_settings.h):
//
//   kLinear   ordinary least squares line over the window, v = F · slope.
//             A window average: it reads low when the window starts inside
//             the coupling lag, and low by about ε_S·f/2 when a fraction f of
//             the substrate is used up over the window (≤ 5 % at f = 10 %).
//   kLag      model (2) fitted over the window (Ceres, τ ≥ 0). Handles the
//             lag; still a window average of the bend, like kLinear.
//   kProgress model (5) fitted to the whole usable trace, or the user window
//             (Ceres; p0, v0, ε_S and τ free, ε_S ∈ (0, 1), τ ≥ 0; ε_S with
//             the same weak prior as kAuto unless progress_elasticity_prior
//             is off). Needs S0. Uses every read up to the NADH and
//             absorbance limits, not the substrate rule, so it is the most
//             precise method where depletion is large — as long as the enzyme
//             follows Michaelis–Menten kinetics with no product inhibition
//             or loss of activity. ≈ 3 ms per well.
//   kAuto     model (3) over the automatic window (below). The bend is
//             estimated from the window's own data with prior knowledge (4):
//             ε_S is given a weak Gaussian prior (mean 0.5, sd 0.29, the
//             spread of a uniform [0, 1]), or a tight one around
//             Km/(Km + S0) when RateInput::km_apparent_uM is known. With
//             S0 unknown c is fitted freely. The lag τ is profiled with a
//             one-dimensional grid and Brent search, the other parameters
//             are a small linear least-squares problem solved from prefix
//             sums: no Ceres, ≈ 15 µs per well of 120 reads.
//
// Automatic window (kAuto; kLinear and kLag use it when no window is given):
// it starts at the first usable read (the lag is modelled, not cut away;
// kLinear then starts after 4.6 τ) and is the longest run of reads that
//   - holds no point over RateOptions::absorbance_ceiling and no saturated
//     point ("absorbance-ceiling" when one ends the window; such points
//     before the first usable read only delay the start);
//   - ends before A340 falls under RateOptions::nadh_floor_absorbance when
//     NADH is consumed ("nadh-low");
//   - ends before the enzyme has made max_substrate_consumed × S0 of product,
//     P_enzyme(t) = v0·t − c·t² from the fitted model ("substrate-consumed";
//     the window and the fit are iterated until they agree);
//   - bends no more than Michaelis–Menten allows and does not accelerate
//     beyond the lag ("nonlinear": the window is cut to 70 % until it
//     passes; see RateOptions::linearity_z);
// otherwise it runs to the last read ("end-of-read").
//
// Uncertainty: SE from the fit's covariance, s²·(JᵀJ + prior)⁻¹ with
// s² = SSR/(n − p), and a 95 % interval from the Student t quantile with
// n − p degrees of freedom (Boost.Math). A parameter that ends at a bound
// (τ = 0, ε_S = 0 or 1) stays in the covariance — holding it would
// understate the SE several-fold; at τ = 0 the Jacobian's τ column is taken
// half a read interval above the bound, the shortest lag the data cannot
// rule out. Only a parameter the data cannot determine at all (singular
// JᵀJ, e.g. τ of a flat trace) is held.
//
// Accuracy on simulated plates (tests/fitting/rate_accuracy_test.cc: τ up to
// 1 min, up to 30 % of S0 used, weakest wells moving 0.02 A, read noise
// 0.0005 A): kAuto median error 0.6 %, 95th percentile 3.4 %, 97 % of
// intervals hold the truth; kProgress 0.6 % / 2.4 % / 97 %.
//
// Points the instrument marked saturated or missing, and points above the
// absorbance ceiling, are never used.
//
// Example:
//   RateInput input;
//   input.series = &plate.at(channel, well);
//   input.product_uM_per_A = ProductMicromolarPerAbsorbance(detection, 0.55);
//   input.substrate_uM = 40.0;
//   RateEstimate estimate = EstimateInitialRate(input, RateOptions());
//   if (estimate.ok) std::cout << estimate.BriefReport() << "\n";
#pragma once

#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "fitting/assay_settings.h"  // RateMethod and its string round trip
#include "fitting/units.h"
#include "importers/plate.h"

namespace ratewell {

// Flags attached to a rate (our own codes). A flag is information for the
// person reading the result; whether a flagged well is excluded is decided
// elsewhere.
//
// "lag": the fit resolved a coupling lag (τ more than 1.96 SE above 0 and
// 4.6 τ longer than one read interval), or τ ran into max_lag_min (then the
// message says the lag was not resolved); for kLinear, the automatic window
// was started after 4.6 τ.
inline constexpr std::string_view kRateFlagLag = "lag";
// Saturated reads or reads over the absorbance ceiling up to the window's
// end. They are never used.
inline constexpr std::string_view kRateFlagSaturatedPoints = "saturated-points";
// Missing reads (empty cells, non-finite values) up to the window's end.
inline constexpr std::string_view kRateFlagMissingPoints = "missing-points";
// The linearity rule shortened the window (or failed at the shortest window).
inline constexpr std::string_view kRateFlagNonlinear = "nonlinear";
// The substrate limit was reached within the first 6 reads; the window kept
// 6 reads and so consumes more than max_substrate_consumed.
inline constexpr std::string_view kRateFlagSubstrateDepleted = "substrate-depleted";
// S0 was not given: no substrate rule, the bend fitted freely.
inline constexpr std::string_view kRateFlagSubstrateUnknown = "substrate-unknown";
// The NADH floor ended the window.
inline constexpr std::string_view kRateFlagNadhLow = "nadh-low";
// Residual SD above RateOptions::noisy_residual_sd_absorbance.
inline constexpr std::string_view kRateFlagNoisy = "noisy";
// Fewer than RateOptions::min_points reads in the window.
inline constexpr std::string_view kRateFlagFewPoints = "few-points";
// The whole 95 % interval is below zero: the trace runs the wrong way (A
// rises in an NADH-consuming assay). A rate whose interval holds 0 is not
// flagged, however its estimate falls.
inline constexpr std::string_view kRateFlagNegative = "negative";

// Which rule ended the rate window.
enum class WindowEnd {
  kNone,               // "none": no window (the estimate failed)
  kSubstrateConsumed,  // "substrate-consumed": max_substrate_consumed reached
  kNadhLow,            // "nadh-low": A340 under nadh_floor_absorbance next
  kAbsorbanceCeiling,  // "absorbance-ceiling": a point over the ceiling or saturated next
  kNonlinear,          // "nonlinear": more bend than the model allows
  kEndOfRead,          // "end-of-read": the last usable read
  kUserWindow,         // "user-window": RateOptions::window_min
};
const char* WindowEndToString(WindowEnd reason);
// Exact names as above; false (and *reason untouched) otherwise.
bool StringToWindowEnd(std::string_view text, WindowEnd* reason);

struct RateOptions {
  // The method; kAuto unless the user asked for another.
  RateMethod method = RateMethod::kAuto;

  // A window chosen by the user, [start, end] in minutes from the first read
  // (the convention of AssaySettings::Rate::window_min), 0 ≤ start < end.
  // When set it replaces the automatic window (kProgress fits the curve over
  // it instead of the whole trace); saturated, missing and over-ceiling
  // points inside it are still left out, and the NADH floor still applies.
  // nullopt: automatic window.
  std::optional<std::pair<double, double>> window_min;

  // Time on the reader's clock (minutes) at which the reaction started; the
  // lag and progress models count time from here. 0: the reader's zero is
  // the start (common when the plate goes in right after mixing). Reads
  // before this time are not used.
  double reaction_start_min = 0.0;

  // The window ends before the enzyme has consumed more than this fraction
  // of S0 (10 %, common practice). Needs RateInput::substrate_uM. In (0, 1).
  double max_substrate_consumed = kDefaultMaxSubstrateConsumed;

  // Readings above this absorbance are never used (detector no longer
  // linear; 2.5 is common practice). > 0.
  double absorbance_ceiling = kDefaultAbsorbanceCeiling;

  // When NADH is consumed (product_uM_per_A < 0), the window ends before the
  // raw A340 reading falls below this value: the coupling enzyme slows down
  // when NADH runs short. The reading includes the plate and buffer
  // baseline (≈ 0.04–0.1, not known per well), so 0.2 keeps roughly
  // 20–50 µM NADH in a 0.5 cm well — common practice is to stop well above
  // the coupling enzyme's Km for NADH (values from memory). ≥ 0; 0 disables.
  double nadh_floor_absorbance = 0.2;

  // Upper bound on the coupling time constant τ (minutes) for kAuto, kLag
  // and kProgress; also never more than a third of the window. A fitted τ
  // at this bound means the lag could not be resolved. 0 switches lag
  // modelling off (τ = 0). ≥ 0.
  double max_lag_min = 5.0;

  // Weak prior on the elasticity ε_S of (4) when Km is not known: mean and
  // standard deviation. The defaults are the mean and spread of a uniform
  // distribution on [0, 1]: the bend correction is then never more than
  // ±ε_S·f/2 ≈ ±2.5 % wrong at f = 10 %, and that uncertainty is in the SE.
  // sd > 0.
  double elasticity_prior_mean = 0.5;
  double elasticity_prior_sd = 0.29;
  // Prior sd on ε_S around Km/(Km + S0) when RateInput::km_apparent_uM is
  // given (for kAuto and kProgress). > 0.
  double known_km_elasticity_sd = 0.05;
  // Whether kProgress also uses the weak prior on ε_S above. It costs
  // nothing where the trace bends clearly and keeps the fit from spending
  // precision on a curvature the data cannot see (wells with little
  // depletion). false: ε_S fitted freely within [0, 1].
  bool progress_elasticity_prior = true;

  // Window shortening for "nonlinear" (kAuto, and the automatic window of
  // kLinear and kLag). With S0 known, the curvature c fitted freely over the
  // window is compared with the range Michaelis–Menten allows, [0, v0²/(2 S0)];
  // with S0 unknown (c free anyway) the signs of the residuals are checked
  // for runs (Wald–Wolfowitz). The window is nonlinear when the curvature
  // lies outside its range, or the runs z score is below −z, by more than
  // this many standard errors. Higher: fewer shortened windows, more bias
  // from curvature that is not Michaelis–Menten. > 0.
  double linearity_z = 3.0;

  // Fewer points than this in the window earns the "few-points" flag. A rate
  // needs at least 3 points (line + one degree of freedom); the lag and bend
  // terms are fitted only when there are at least 2 more points than
  // parameters. ≥ 3.
  int min_points = 8;

  // "noisy" flag: residual standard deviation of the fit, in absorbance,
  // above this (reader noise is typically 0.0005–0.001 A; value from memory).
  // > 0.
  double noisy_residual_sd_absorbance = 0.005;

  // True when every value is usable; otherwise false and, if error is not
  // null, "field: what was expected" for the first problem found.
  bool IsValid(std::string* error) const;
};

// One well at one wavelength.
struct RateInput {
  // The trace (importers/plate.h): read times in minutes, absorbances and
  // point statuses. Not owned; must outlive the call. nullptr is an error.
  const Series* series = nullptr;
  // Signed Beer–Lambert factor F of (1), µM of product per absorbance unit
  // (ProductMicromolarPerAbsorbance). Negative when NADH is consumed.
  // Finite and non-zero.
  double product_uM_per_A = 0.0;
  // Substrate at the start, S0 in µM, from the layout. NaN: unknown — the
  // substrate rule cannot be applied and the bend is fitted freely (flag
  // "substrate-unknown"); kProgress fails. 0 (a no-substrate control): no
  // substrate rule and no bend. Otherwise finite, > 0.
  double substrate_uM = kUnknown;
  // Apparent Km of this well (µM) if already known, e.g. from a first pass
  // of the kinetic fit; tightens the bend correction of kAuto and kProgress
  // (prior on ε_S around Km/(Km + S0)). NaN: unknown. Otherwise > 0.
  double km_apparent_uM = kUnknown;
  // Coupling time constant τ (minutes) if already known, e.g. from the
  // plate's strongest wells (τ belongs to the coupling system, not to the
  // well). kAuto, kLag and kProgress then hold τ at this value instead of
  // fitting it, which roughly halves the SE of weak wells whose window is
  // short. NaN: fitted. ≥ 0.
  double coupling_tau_min = kUnknown;

  static constexpr double kUnknown = std::numeric_limits<double>::quiet_NaN();
};

// The result for one well. Starts at sentinels ("not estimated").
struct RateEstimate {
  // Whether a rate was estimated. When false, message says why, the rate is
  // 0 with an infinite SE and interval (no information, never a plausible
  // number), and no other field should be used.
  bool ok = false;
  std::string message = "EstimateInitialRate was not called";
  RateMethod method_used = RateMethod::kAuto;

  // Initial rate of product formation at the start of the reaction, µM/min:
  // the coupling lag accounted for and, for kAuto and kProgress, the bend
  // from substrate depletion corrected. Positive when product forms.
  double rate_uM_per_min = 0.0;
  double se_uM_per_min = kInfinity;
  double ci95_lo_uM_per_min = -kInfinity;
  double ci95_hi_uM_per_min = kInfinity;
  int degrees_of_freedom = 0;

  // Raw least-squares slope of the absorbance over the window, A/min, sign
  // as measured (negative when A falls).
  double slope_A_per_min = 0.0;
  // 1 − SSR/SST of the fitted model over the window (0 when the trace is
  // flat, as scipy.stats.linregress reports r = 0 then).
  double r_squared = 0.0;
  // Residual standard deviation of the fit, in absorbance.
  double residual_sd_absorbance = 0.0;
  // Points used, and the window on the reader's clock (first and last point
  // used), minutes.
  int points = 0;
  double window_start_min = 0.0;
  double window_end_min = 0.0;
  WindowEnd window_end = WindowEnd::kNone;

  // Coupling time constant τ (min) and its SE when the method models the lag
  // (kAuto, kLag, kProgress); nullopt otherwise. A τ that was held (given as
  // RateInput::coupling_tau_min, or not identifiable) has no SE.
  std::optional<double> lag_tau_min;
  std::optional<double> lag_tau_se_min;
  // Fraction of S0 the enzyme had consumed at window_end_min according to the
  // fitted model; nullopt when S0 is unknown.
  std::optional<double> substrate_consumed_fraction;
  // ε_S of (4) as estimated (kAuto with S0 known, kProgress); nullopt when
  // the bend was not modelled.
  std::optional<double> elasticity;

  // Codes from the kRateFlag... list, each at most once, in a fixed order.
  std::vector<std::string> flags;

  static constexpr double kInfinity = std::numeric_limits<double>::infinity();

  bool HasFlag(std::string_view flag) const;
  // ok, and the rate and its SE are finite.
  bool IsUsable() const;
  // One line: "1.234 ± 0.021 µM/min (auto, 40 points, 0.00–7.50 min, substrate-consumed)".
  std::string BriefReport() const;
  // Several lines: every field, for logs and the inspect command.
  std::string FullReport() const;
};

// Estimates the initial rate of one well. Never throws for data problems
// (empty, saturated, flat or reversed traces): those give ok = false or
// flags. Invalid options or input (RateOptions::IsValid false, series null,
// factor zero or not finite) throw std::invalid_argument naming the field.
RateEstimate EstimateInitialRate(const RateInput& input, const RateOptions& options);

}  // namespace ratewell
