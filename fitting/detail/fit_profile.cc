// Profile-likelihood limits: walk away from the estimate until the profile t
// statistic passes the threshold, then solve τ(b) = ±t with TOMS 748
// (Boost.Math). Each τ evaluation re-optimises the other parameters, warm
// started from the previous one.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <functional>
#include <limits>
#include <sstream>
#include <string>
#include <vector>

#include <boost/math/tools/roots.hpp>

#include "fitting/detail/fit_problem.h"

namespace ratewell::detail {
namespace {

// Limits are solved to about 36 bits (≈ 1e-10 relative), far below any
// digit a report shows and below the 1e-6 the reference tests ask for.
constexpr int kRootBits = 36;
constexpr std::uintmax_t kMaxRootIterations = 60;
// Outward steps before giving up on a limit.
constexpr int kMaxOutwardSteps = 40;
// A limit further than this many scales from the estimate counts as
// unbounded (the profile flattens below the threshold).
constexpr double kMaxSpanInScales = 1e6;
// Objective drops below the fit's optimum by more than this (relative) mean
// the fit was not at its minimum.
constexpr double kBetterMinimumTolerance = 1e-9;

std::string Format(double x) {
  std::ostringstream out;
  out.precision(6);
  out << x;
  return out.str();
}

class ProfileWalker {
 public:
  ProfileWalker(LeastSquaresProblem& problem, const std::vector<double>& theta_hat,
                const ProfileSettings& settings, std::function<void(double)> set_value,
                ProfileResult* result)
      : problem_(problem),
        theta_hat_(theta_hat),
        settings_(settings),
        set_value_(std::move(set_value)),
        result_(result) {}

  // |τ(b)|; false when the re-optimisation fails from both the warm start
  // and the estimate.
  bool AbsTau(double b, double* tau) {
    for (int attempt = 0; attempt < 2; ++attempt) {
      problem_.SetValues(attempt == 0 ? warm_ : theta_hat_);
      set_value_(b);
      const EngineSolution solution = problem_.Solve();
      ++result_->solves;
      if (!solution.usable()) continue;
      warm_ = solution.theta;
      const double excess = solution.objective - settings_.objective_hat;
      if (excess < -kBetterMinimumTolerance * settings_.objective_hat &&
          (!result_->found_better_minimum || solution.objective < result_->better_objective)) {
        result_->found_better_minimum = true;
        result_->better_objective = solution.objective;
        result_->better_theta = solution.theta;
      }
      *tau = std::sqrt(std::max(excess, 0.0) / settings_.s2);
      return true;
    }
    return false;
  }

  // One limit in direction ±1 within [feasible_lo, feasible_hi].
  ProfileLimit FindLimit(double estimate, int direction, double step_hint, double feasible_lo,
                         double feasible_hi) {
    ProfileLimit limit;
    warm_ = theta_hat_;
    const double target = settings_.tau_target;
    const double scale = std::max({std::abs(estimate), step_hint, 1e-300});
    double step = step_hint > 0.0 ? step_hint : 0.1 * scale;
    // The bound itself may be singular (e.g. Ki = 0): stop just inside it.
    const double edge = direction < 0 ? feasible_lo + 1e-12 * scale : feasible_hi - 1e-12 * scale;
    double b_in = estimate, tau_in = 0.0;
    double b = estimate + direction * step;
    for (int i = 0; i < kMaxOutwardSteps; ++i) {
      if (settings_.keep_going && !settings_.keep_going()) {
        result_->cancelled = true;
        limit.reason = "cancelled";
        return limit;
      }
      bool at_edge = false;
      if ((direction < 0 && b <= edge) || (direction > 0 && b >= edge)) {
        b = edge;
        at_edge = true;
      }
      double tau = 0.0;
      if (!AbsTau(b, &tau)) {
        limit.reason = "the other parameters could not be re-optimised at " + Format(b);
        return limit;
      }
      if (tau >= target) return Refine(b_in, tau_in, b, tau, limit);
      if (at_edge) {
        limit.reason = std::string("the profile stays below the threshold up to the bound ") +
                       Format(direction < 0 ? feasible_lo : feasible_hi) + " (t = " +
                       Format(tau) + " < " + Format(target) + "): no " +
                       (direction < 0 ? "lower" : "upper") + " limit";
        return limit;
      }
      if (std::abs(b - estimate) > kMaxSpanInScales * scale) {
        limit.reason = std::string("the profile flattens below the threshold (t = ") +
                       Format(tau) + " < " + Format(target) + " at " + Format(b) +
                       "): the interval is unbounded " + (direction < 0 ? "below" : "above");
        return limit;
      }
      // Linear extrapolation of τ from the estimate, moving at least ×1.5 and
      // at most ×10 further out.
      const double growth = tau > 0.0 ? std::clamp(1.1 * target / tau, 1.5, 10.0) : 10.0;
      b_in = b;
      tau_in = tau;
      b = estimate + (b - estimate) * growth;
    }
    limit.reason = "the profile did not reach the threshold within the search";
    return limit;
  }

 private:
  ProfileLimit Refine(double b_in, double tau_in, double b_out, double tau_out,
                      ProfileLimit limit) {
    const double target = settings_.tau_target;
    bool failed = false;
    auto f = [&](double b) {
      double tau = 0.0;
      if (failed || !AbsTau(b, &tau)) {
        failed = true;
        return 0.0;  // ends the search; reported below
      }
      return tau - target;
    };
    double a = b_in, c = b_out;
    double fa = tau_in - target, fc = tau_out - target;
    if (a > c) {
      std::swap(a, c);
      std::swap(fa, fc);
    }
    std::uintmax_t iterations = kMaxRootIterations;
    try {
      const auto root = boost::math::tools::toms748_solve(
          f, a, c, fa, fc, boost::math::tools::eps_tolerance<double>(kRootBits), iterations);
      if (failed) {
        limit.reason = "the other parameters could not be re-optimised near the limit";
        return limit;
      }
      limit.found = true;
      limit.value = 0.5 * (root.first + root.second);
    } catch (const std::exception& e) {
      limit.reason = std::string("root search failed: ") + e.what();
    }
    return limit;
  }

  LeastSquaresProblem& problem_;
  const std::vector<double>& theta_hat_;
  const ProfileSettings& settings_;
  std::function<void(double)> set_value_;
  ProfileResult* result_;
  std::vector<double> warm_;
};

}  // namespace

ProfileResult ProfileParameter(LeastSquaresProblem& problem, const std::vector<double>& theta_hat,
                               int j, double step_hint, const ProfileSettings& settings) {
  ProfileResult result;
  const ParameterSpec& spec = problem.specs()[j];
  ProfileWalker walker(problem, theta_hat, settings,
                       [&](double b) { problem.Hold(j, b); }, &result);
  result.lower = walker.FindLimit(theta_hat[j], -1, step_hint, spec.lower, spec.upper);
  if (!result.cancelled) {
    result.upper = walker.FindLimit(theta_hat[j], +1, step_hint, spec.lower, spec.upper);
  }
  problem.Release(j);
  problem.SetValues(theta_hat);
  return result;
}

ProfileResult ProfileRatio(LeastSquaresProblem& problem, const std::vector<double>& theta_hat,
                           int target, int base, double step_hint,
                           const ProfileSettings& settings) {
  ProfileResult result;
  const double estimate = theta_hat[target] / theta_hat[base];
  const bool positive = problem.specs()[target].lower >= 0.0 && problem.specs()[base].lower >= 0.0;
  const double lo = positive ? 0.0 : -std::numeric_limits<double>::infinity();
  const double hi = std::numeric_limits<double>::infinity();
  ProfileWalker walker(problem, theta_hat, settings,
                       [&](double q) { problem.set_ratio_factor(q); }, &result);
  result.lower = walker.FindLimit(estimate, -1, step_hint, lo, hi);
  if (!result.cancelled) result.upper = walker.FindLimit(estimate, +1, step_hint, lo, hi);
  problem.SetValues(theta_hat);
  return result;
}

}  // namespace ratewell::detail
