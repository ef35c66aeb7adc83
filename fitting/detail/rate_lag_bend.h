// Profiled least squares for the lag-and-bend model of fitting/rates.h,
//
//     y(t) = p0 + v · L1(t; τ) − c · L2(t; τ),
//     L1 = t − τ(1 − e^(−t/τ)),   L2 = t² − 2τt + 2τ²(1 − e^(−t/τ)),
//
// over the first `end` points of a trace. For fixed τ the model is linear in
// (p0, v, c); τ ∈ [0, τ_max] is found by a coarse grid and a Brent search on
// the profiled sum of squares. Power sums of t and y are kept as prefix sums,
// so a fit over any leading window costs O(points where e^(−t/τ) is not
// negligible) per τ. No allocation per fit.
#pragma once

#include <vector>

namespace ratewell::detail {

enum class BendTerm {
  kNone,   // c = 0: the constant-rate lag model (McClure)
  kFree,   // c fitted freely
  kPrior,  // c with a Gaussian prior N(c_prior_mean, c_prior_sd²)
};

struct LagBendSettings {
  bool fit_lag = true;        // false: τ held at known_tau_min
  double known_tau_min = 0.0; // τ when fit_lag is false, ≥ 0
  double tau_max_min = 5.0;   // upper bound of τ (also capped at a third of the window)
  BendTerm bend = BendTerm::kNone;
  double c_prior_mean = 0.0;  // µM/min², kPrior only
  double c_prior_sd = 1.0;    // µM/min², kPrior only, > 0
  // σ² of y (µM²) that weights the prior against the data: the penalty is
  // σ²·(c − mean)²/sd², i.e. the prior counts as one observation of c.
  double noise_variance = 0.0;
  // Only the estimates (p0, v, c, τ): no residual pass, no standard errors.
  // For the intermediate steps of a window search.
  bool estimates_only = false;
};

struct LagBendResult {
  bool ok = false;
  double p0 = 0.0;    // µM
  double v = 0.0;     // µM/min
  double c = 0.0;     // µM/min²
  double tau = 0.0;   // min
  double se_v = 0.0;
  double se_c = 0.0;     // 0 when c is not fitted
  double se_tau = 0.0;   // 0 when τ is fixed
  // τ left out of the covariance: not fitted, or not identifiable (singular
  // JᵀJ). A τ at a bound stays in (see the .cc for τ = 0).
  bool tau_fixed = true;
  bool tau_at_upper = false;    // at the upper bound: the lag was not resolved
  double ssr = 0.0;             // data part only, µM²
  double sst = 0.0;             // Σ(y − ȳ)² over the window
  int n = 0;
  int num_parameters = 0;       // p0, v, and c and τ when fitted
  int dof = 0;                  // n − num_parameters
  // Free curvature at the fitted τ, with its SE (τ held): for the linearity
  // check. Only when bend != kNone.
  double c_free = 0.0;
  double se_c_free = 0.0;
  // Wald–Wolfowitz runs z score of the residual signs (0 when undefined).
  double runs_z = 0.0;
};

class LagBendFitter {
 public:
  // t: minutes from the start of the reaction, ≥ 0 and non-decreasing; y: the
  // product signal, µM. Same length.
  LagBendFitter(const std::vector<double>& t, const std::vector<double>& y);

  // Fits the points [0, end), 3 ≤ end ≤ size. Needs end ≥ parameters + 1.
  LagBendResult Fit(int end, const LagBendSettings& settings) const;

  int size() const { return static_cast<int>(t_.size()); }

 private:
  struct Sums;
  void ExpSums(int end, double tau, double scale, double* e0, double* e1, double* e2,
               double* ee, double* ey) const;

  std::vector<double> t_;
  std::vector<double> y_;
  // prefix_[k][m] = Σ_{i<m} t_i^k (k = 0..4); prefix_y_[k][m] = Σ y_i t_i^k (k = 0..2).
  std::vector<double> prefix_t_[5];
  std::vector<double> prefix_y_[3];
  std::vector<double> prefix_yy_;
  bool uniform_ = false;  // t_i = t_0 + i·Δ (to 1e-9 relative): e^(−t/τ) by recursion
  double step_ = 0.0;
};

}  // namespace ratewell::detail
