// Ceres fits behind RateMethod::kLag and RateMethod::kProgress (fitting/rates.h):
// the McClure lag model (2) and the integrated Michaelis–Menten progress curve
// with a coupling lag (5). Times are minutes from the start of the reaction,
// the signal y is product in µM. Both fits use dense QR, tolerances 1e-12 and
// bounds τ ∈ [0, τ_max]; standard errors come from s²·(JᵀJ)⁻¹, s² = SSR/(n − p),
// over every fitted parameter, also one that ended at a bound (only one the
// data cannot determine at all is held).
#pragma once

#include <string>
#include <vector>

namespace ratewell::detail {

struct CeresRateFit {
  bool ok = false;
  std::string message;        // why not ok
  double p0 = 0.0;            // µM
  double v = 0.0;             // initial rate, µM/min
  double tau = 0.0;           // min
  double elasticity = 0.0;    // progress only: Km/(Km + S0)
  double se_v = 0.0;
  double se_tau = 0.0;        // 0 when τ is held
  double se_elasticity = 0.0; // 0 when held or not fitted
  bool tau_fixed = true;      // left out of the covariance (not fitted, or not identifiable)
  bool tau_at_upper = false;  // τ at τ_max: the lag was not resolved
  bool elasticity_fixed = true;  // left out of the covariance (not identifiable)
  double ssr = 0.0;
  int n = 0;
  int num_parameters = 0;
  int dof = 0;
};

// Bounds on the progress elasticity: e = 1e-7 is S0 = 1e7·Km (zero order in
// practice), 1 − 1e-7 is S0 = 1e-7·Km (first order in practice).
inline constexpr double kMinElasticity = 1e-7;
inline constexpr double kMaxElasticity = 1.0 - 1e-7;

// y = p0 + v·(t − τ(1 − e^(−t/τ))) over the points [0, end). tau_max = 0 holds
// τ at the value given.
CeresRateFit FitLagWithCeres(const std::vector<double>& t, const std::vector<double>& y,
                             int end, double p0, double v, double tau, double tau_max);

// Optional Gaussian prior on the elasticity e, added as one pseudo-residual
// noise_sd·(e − mean)/sd: the penalty counts as one observation of e with
// standard deviation sd against data of noise standard deviation noise_sd.
struct ElasticityPrior {
  bool enabled = false;
  double mean = 0.5;
  double sd = 0.29;
  double noise_sd = 0.0;  // µM; ≤ 0 disables the prior
};

// y = p0 + lag_τ[S0 − S(t)] with S(t) the integrated Michaelis–Menten equation
// in the (v0, e) form of rate_lambert.h, over the points [0, end).
// tau_max = 0 holds τ at the value given (0: no lag). ssr in the result is the
// data part only.
CeresRateFit FitProgressWithCeres(const std::vector<double>& t, const std::vector<double>& y,
                                  int end, double s0, double p0, double v0, double elasticity,
                                  double tau, double tau_max,
                                  const ElasticityPrior& prior = ElasticityPrior());

// The detected product lag_τ[S0 − S(t)] at the given times (≥ 0, non-decreasing),
// by the integrator the fit uses: exact exponential integration of the lag
// with the product interpolated linearly over steps of at most
// kProgressStepMin. τ = 0: no lag, the closed form itself.
inline constexpr double kProgressStepMin = 0.5;
std::vector<double> ProgressCurve(const std::vector<double>& t, double s0, double v0,
                                  double elasticity, double tau);

}  // namespace ratewell::detail
