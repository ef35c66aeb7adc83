// Warnings a reviewer needs: substrate range, parameters at bounds, runs of
// residuals, too few points, intervals not determined.
#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <sstream>
#include <tuple>

#include "fitting/detail/fit_kinetic.h"
#include "fitting/detail/fit_statistics.h"

namespace ratewell::detail {
namespace {

// Fewer points than this per fitted parameter draws a warning (our rule: a
// curve with two parameters wants at least six rates, better more).
constexpr int kMinPointsPerParameter = 3;
// The runs test flags systematic residuals below this one-sided p value.
constexpr double kRunsTestAlpha = 0.05;
// DESIGN §2: Km is well determined when [S] spans about 0.2–5 Km; warn when
// the top [S] is below 2 Km (common practice).
constexpr double kTopSubstrateOverKm = 2.0;

std::string Number(double x) {
  std::ostringstream out;
  out.precision(4);
  out << x;
  return out.str();
}

}  // namespace

void AddDiagnostics(const KineticData& data, const KineticProblem& kp, KineticFit* fit) {
  const ModelDescription& description = DescribeModel(kp.model);
  auto warn = [&](std::string_view code, const std::string& message) {
    fit->warnings.push_back({std::string(code), message});
  };

  if (!fit->converged) {
    warn(kFitWarningNotConverged,
         "the fit did not converge (" + std::string(FitTerminationToString(
                                            fit->summary.termination)) +
             "): estimates may not be the least-squares optimum");
  }

  // Too few points.
  std::set<std::pair<double, double>> design_points;
  for (const KineticObservation& p : data.points) {
    design_points.insert({p.substrate_uM, p.inhibitor_uM});
  }
  if (fit->n < kMinPointsPerParameter * fit->num_parameters) {
    warn(kFitWarningFewPoints, std::to_string(fit->n) + " points for " +
                                   std::to_string(fit->num_parameters) +
                                   " parameters (fewer than " +
                                   std::to_string(kMinPointsPerParameter) +
                                   " per parameter): estimates and intervals are fragile");
  } else if (static_cast<int>(design_points.size()) <= fit->num_parameters) {
    warn(kFitWarningFewPoints, "only " + std::to_string(design_points.size()) +
                                   " distinct concentrations for " +
                                   std::to_string(fit->num_parameters) + " parameters");
  }

  if (description.uses_substrate == false || description.uses_inhibitor == false) {
    if (!description.uses_inhibitor && data.HasInhibitor()) {
      warn(kFitWarningIgnoredInhibitor,
           std::string(description.id) +
               " ignores the inhibitor concentrations given with the data");
    }
  }

  // Parameters at bounds.
  for (size_t e = 0; e < fit->parameters.size(); ++e) {
    const ParameterEstimate& pe = fit->parameters[e];
    if (!pe.at_bound) continue;
    const bool lower = pe.value <= kp.specs[e].lower;
    warn(kFitWarningAtBound,
         pe.name + " = " + Number(pe.value) + " is at its " + (lower ? "lower" : "upper") +
             " bound" +
             (lower ? std::string()
                    : std::string(" (unless set, a stand-in for infinity)")) +
             ": the data push " + std::string(description.id) +
             " to a limiting case, which a simpler model may describe as well; the "
             "parameter's interval is not determined");
  }

  // Top [S] below 2·Km (or Khalf), per group.
  const int k = static_cast<int>(description.parameters.size());
  int km = ParameterIndex(kp.model, "Km");
  if (km < 0) km = ParameterIndex(kp.model, "Khalf");
  if (km >= 0 && fit->summary.IsSolutionUsable()) {
    for (int g = 0; g < kp.design.num_groups; ++g) {
      double top = 0.0;
      bool any = false;
      for (const KineticObservation& p : data.points) {
        if (p.group != g) continue;
        top = std::max(top, p.substrate_uM);
        any = true;
      }
      const int e = kp.design.slots[g * k + km];
      const double value = fit->parameters[e].value;
      if (any && top < kTopSubstrateOverKm * value) {
        const std::string group =
            data.group_names.empty() ? "" : " in group " + data.group_names[g];
        warn(kFitWarningSubstrateRange,
             "highest substrate concentration " + Number(top) + " " + data.concentration_unit +
                 group + " is below 2 x " + std::string(description.parameters[km].name) +
                 " (" + Number(value) + " " + data.concentration_unit +
                 "): Vmax and " + std::string(description.parameters[km].name) +
                 " are poorly determined; extend the series to about 5 x " +
                 std::string(description.parameters[km].name));
      }
    }
  }

  // Runs test on residual signs along the model's x within each series;
  // replicates averaged first.
  if (!fit->residuals.empty()) {
    const bool x_is_substrate = description.uses_substrate;
    std::map<std::tuple<int, double>, std::map<double, std::pair<double, int>>> series;
    for (size_t i = 0; i < data.points.size(); ++i) {
      const KineticObservation& p = data.points[i];
      const double x = x_is_substrate ? p.substrate_uM : p.inhibitor_uM;
      const double other = x_is_substrate ? p.inhibitor_uM : p.substrate_uM;
      auto& cell = series[{p.group, other}][x];
      cell.first += fit->residuals[i];
      ++cell.second;
    }
    std::vector<std::vector<int>> signs;
    for (const auto& [key, by_x] : series) {
      std::vector<int> s;
      for (const auto& [x, sum_count] : by_x) {
        const double mean = sum_count.first / sum_count.second;
        s.push_back(mean > 0.0 ? 1 : mean < 0.0 ? -1 : 0);
      }
      signs.push_back(s);
    }
    const RunsTestResult runs = RunsTest(signs);
    fit->runs_test.computed = runs.computed;
    fit->runs_test.runs = runs.runs;
    fit->runs_test.positive = runs.positive;
    fit->runs_test.negative = runs.negative;
    fit->runs_test.expected_runs = runs.expected_runs;
    fit->runs_test.p_value = runs.computed ? runs.p_value_few : fit->runs_test.p_value;
    if (runs.computed && runs.p_value_few < kRunsTestAlpha) {
      warn(kFitWarningSystematicResiduals,
           "residuals run in long stretches of one sign (" + std::to_string(runs.runs) +
               " runs, " + Number(runs.expected_runs) + " expected; runs test p = " +
               Number(runs.p_value_few) + "): the model misses a systematic trend");
    }
  }

  // Intervals not determined.
  for (const ParameterEstimate& pe : fit->parameters) {
    if (pe.fixed || pe.ci.determined || pe.at_bound) continue;
    warn(kFitWarningIntervalNotDetermined, pe.name + ": " +
                                               std::string(IntervalMethodToString(pe.ci.method)) +
                                               " interval not determined (" + pe.ci.reason + ")");
  }
}

}  // namespace ratewell::detail
