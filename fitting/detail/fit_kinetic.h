// The pieces of FitKineticModel (nonlinear_fit.cc): checking and binding the
// data (fit_kinetic.cc), intervals and derived quantities (fit_intervals.cc)
// and the warnings (fit_diagnostics.cc).
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "fitting/detail/fit_problem.h"
#include "fitting/detail/model_sources.h"
#include "fitting/kinetic_models.h"
#include "fitting/nonlinear_fit.h"

namespace ratewell::detail {

// A kinetic model bound to checked data, with its parameter vector θ
// expanded for per-group parameters.
struct KineticProblem {
  KineticModel model = KineticModel::kMichaelisMenten;
  KineticDesign design;
  std::vector<ParameterSpec> specs;  // per θ entry: name, bounds, fixed, start
  std::vector<int> law_index;        // per θ entry: index in DescribeModel order
  std::vector<std::string> group;    // per θ entry: group name or ""
  std::vector<std::string> unit;     // per θ entry
  std::vector<char> start_given;     // per θ entry: start from ParameterControl
  std::vector<bool> log_scale;       // per θ entry: searched as ln θ by the small solver
  std::vector<double> response;      // per observation
  std::vector<double> sqrt_weight;   // per observation
  double sum_log_weights = 0.0;
  int num_free = 0;
};

// Checks data and options for `model` and builds the problem; false with
// *error saying which point (index and label) or option is wrong and what
// was expected.
bool BuildKineticProblem(const KineticData& data, KineticModel model, const FitOptions& options,
                         KineticProblem* problem, std::string* error);

// Starting vectors θ, lowest objective first (at most max_starts).
std::vector<std::vector<double>> RankedStarts(const KineticProblem& problem,
                                              const ResidualSource& source,
                                              const KineticData& data, const FitOptions& options,
                                              int max_starts);

// Everything the interval code needs about a finished fit.
struct FittedState {
  const KineticProblem* kinetic = nullptr;
  const ResidualSource* source = nullptr;
  const ResidualData* data = nullptr;
  LeastSquaresProblem* problem = nullptr;
  const FitOptions* options = nullptr;
  std::vector<double> theta_hat;
  std::vector<char> at_bound;          // per θ entry
  CovarianceEstimate covariance;       // over free entries not at a bound
  double objective_hat = 0.0;          // 2·cost at θ̂
  double s2 = 0.0;                     // objective_hat/(n − p)
  double t_quantile = 0.0;             // t((1 + level)/2, n − p)
  std::vector<double> predicted;           // per residual
  std::vector<double> weighted_residuals;  // per residual
  // Set when a profile re-optimisation found a lower objective than θ̂.
  bool found_better_minimum = false;
  std::vector<double> better_theta;
};

// Fills fit->parameters[*].ci (and se) by options->interval_method, and the
// bootstrap report and draws. Returns false when cancelled.
bool FillIntervals(FittedState& state, KineticFit* fit);
// Appends the derived quantities the options ask for to fit->derived.
void FillDerived(FittedState& state, const KineticData& data, KineticFit* fit);
// Appends the warnings and the runs test.
void AddDiagnostics(const KineticData& data, const KineticProblem& problem, KineticFit* fit);

}  // namespace ratewell::detail
