#include "fitting/model_selection.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "fitting/detail/fit_statistics.h"

namespace ratewell {
namespace {

std::string P(double p) {
  std::ostringstream out;
  out.precision(2);
  out << p;
  return out.str();
}

const char* Id(KineticModel model) { return KineticModelToString(model); }

bool Usable(const KineticFit* fit) { return fit != nullptr && fit->summary.IsSolutionUsable(); }

// Whether simpler is an interior point of larger, and what to say about it.
bool ProperNesting(KineticModel simpler, KineticModel larger, std::string* note) {
  using M = KineticModel;
  if (simpler == M::kMichaelisMenten && larger == M::kHill) {
    *note = "michaelis-menten is hill with h = 1";
    return true;
  }
  if (simpler == M::kMichaelisMenten && larger == M::kSubstrateInhibition) {
    *note = "michaelis-menten is substrate-inhibition with 1/Ksi = 0, on the edge of the "
            "allowed region: the F test is conservative there";
    return true;
  }
  if (simpler == M::kNoncompetitive && larger == M::kMixed) {
    *note = "noncompetitive is mixed with alpha = 1";
    return true;
  }
  if (simpler == M::kCompetitive && larger == M::kMixed) {
    *note = "competitive is the limit alpha -> infinity of mixed, not a point of it: the F "
            "distribution does not apply; compared by AICc";
    return false;
  }
  if (simpler == M::kUncompetitive && larger == M::kMixed) {
    *note = "uncompetitive is the limit Ki -> infinity (alpha*Ki finite) of mixed, not a point "
            "of it: the F distribution does not apply; compared by AICc";
    return false;
  }
  *note = "";
  return true;
}

// The options with the per-group names and parameter controls the model
// does not have left out (Km of michaelis-menten is Khalf in hill).
FitOptions OptionsFor(KineticModel model, const FitOptions& options) {
  FitOptions own = options;
  auto known = [model](const std::string& name) {
    return ParameterIndex(model, name.substr(0, name.find('['))) >= 0;
  };
  own.per_group.clear();
  for (const std::string& name : options.per_group) {
    if (known(name)) own.per_group.push_back(name);
  }
  own.parameters.clear();
  for (const ParameterControl& control : options.parameters) {
    if (known(control.name)) own.parameters.push_back(control);
  }
  return own;
}

}  // namespace

NestedComparison ExtraSumOfSquaresTest(const KineticFit& simpler, const KineticFit& larger,
                                       double alpha) {
  NestedComparison test;
  test.simpler = simpler.model;
  test.larger = larger.model;
  test.proper_nesting = ProperNesting(simpler.model, larger.model, &test.note);
  if (!simpler.summary.IsSolutionUsable() || !larger.summary.IsSolutionUsable()) {
    test.reason = "a fit is not usable";
    return test;
  }
  if (simpler.n != larger.n || larger.dof >= simpler.dof || larger.dof <= 0) {
    test.reason = "the fits are not a nested pair on the same data (n " +
                  std::to_string(simpler.n) + "/" + std::to_string(larger.n) + ", dof " +
                  std::to_string(simpler.dof) + "/" + std::to_string(larger.dof) + ")";
    return test;
  }
  test.df_numerator = simpler.dof - larger.dof;
  test.df_denominator = larger.dof;
  // A larger model cannot fit worse; a negative difference is rounding.
  const double extra = std::max(simpler.ssr - larger.ssr, 0.0);
  test.f = (extra / test.df_numerator) / (larger.ssr / test.df_denominator);
  test.p_value = detail::FisherFUpperTail(test.f, test.df_numerator, test.df_denominator);
  test.rejects_simpler = test.p_value < alpha;
  test.computed = true;
  return test;
}

const KineticFit* ModelChoice::Preferred() const { return chosen ? Find(preferred) : nullptr; }

const KineticFit* ModelChoice::Find(KineticModel model) const {
  for (const KineticFit& fit : fits) {
    if (fit.model == model) return &fit;
  }
  return nullptr;
}

ModelChoice FitAndChooseModel(const KineticData& data, const FitOptions& options, double alpha) {
  return FitAndChooseModel(data, FamilyForData(data), options, alpha);
}

ModelChoice FitAndChooseModel(const KineticData& data, ModelFamily family,
                              const FitOptions& options, double alpha) {
  ModelChoice choice;
  choice.family = family;
  for (KineticModel model : CandidateModels(family)) {
    choice.fits.push_back(FitKineticModel(data, model, OptionsFor(model, options)));
  }
  // AICc differences and weights over the usable fits.
  double best_aicc = std::numeric_limits<double>::infinity();
  for (const KineticFit& fit : choice.fits) {
    if (Usable(&fit) && std::isfinite(fit.aicc)) best_aicc = std::min(best_aicc, fit.aicc);
  }
  double weight_sum = 0.0;
  for (const KineticFit& fit : choice.fits) {
    const double delta = Usable(&fit) && std::isfinite(fit.aicc) && std::isfinite(best_aicc)
                             ? fit.aicc - best_aicc
                             : std::numeric_limits<double>::infinity();
    choice.delta_aicc.push_back(delta);
    const double w = std::isfinite(delta) ? std::exp(-0.5 * delta) : 0.0;
    choice.akaike_weights.push_back(w);
    weight_sum += w;
  }
  for (double& w : choice.akaike_weights) w = weight_sum > 0.0 ? w / weight_sum : 0.0;

  std::string unusable;
  for (const KineticFit& fit : choice.fits) {
    if (!Usable(&fit)) {
      unusable += std::string(unusable.empty() ? "" : ", ") + Id(fit.model) + " (" +
                  FitTerminationToString(fit.summary.termination) + ")";
    }
  }
  const std::string left_out = unusable.empty() ? "" : "; left out, fit not usable: " + unusable;
  auto choose = [&](KineticModel model, const std::string& reason) {
    choice.chosen = true;
    choice.preferred = model;
    choice.reason = std::string(Id(model)) + " preferred: " + reason + left_out;
  };
  auto lowest_aicc = [&](const std::vector<KineticModel>& among) {
    const KineticFit* best = nullptr;
    for (KineticModel m : among) {
      const KineticFit* fit = choice.Find(m);
      if (Usable(fit) && (best == nullptr || fit->aicc < best->aicc)) best = fit;
    }
    return best;
  };
  auto test = [&](KineticModel simpler, KineticModel larger) {
    choice.tests.push_back(ExtraSumOfSquaresTest(*choice.Find(simpler), *choice.Find(larger),
                                                 alpha));
    return choice.tests.back();
  };
  const std::string level = "at p < " + P(alpha);

  if (family == ModelFamily::kSubstrate) {
    using M = KineticModel;
    const NestedComparison vs_si = test(M::kMichaelisMenten, M::kSubstrateInhibition);
    const NestedComparison vs_hill = test(M::kMichaelisMenten, M::kHill);
    if (!Usable(choice.Find(M::kMichaelisMenten))) {
      const KineticFit* best = lowest_aicc({M::kSubstrateInhibition, M::kHill});
      if (best != nullptr) choose(best->model, "lowest AICc (michaelis-menten could not be fitted)");
    } else if (vs_si.rejects_simpler && vs_hill.rejects_simpler) {
      const KineticFit* best = lowest_aicc({M::kSubstrateInhibition, M::kHill});
      choose(best->model, "the F test rejects michaelis-menten against substrate-inhibition (p = " +
                              P(vs_si.p_value) + ") and hill (p = " + P(vs_hill.p_value) +
                              "); of the two, the lower AICc");
    } else if (vs_si.rejects_simpler || vs_hill.rejects_simpler) {
      const NestedComparison& t = vs_si.rejects_simpler ? vs_si : vs_hill;
      choose(t.larger, "the F test rejects michaelis-menten against " + std::string(Id(t.larger)) +
                           " (p = " + P(t.p_value) + ", " + level + ")");
    } else {
      auto describe = [](const NestedComparison& t) {
        return std::string(Id(t.larger)) +
               (t.computed ? " (p = " + P(t.p_value) + ")" : " (not tested: " + t.reason + ")");
      };
      choose(M::kMichaelisMenten, "kept as the simpler model: the F test does not reject it " +
                                      level + " against " + describe(vs_si) + " or " +
                                      describe(vs_hill));
    }
    return choice;
  }

  using M = KineticModel;
  const NestedComparison vs_non = test(M::kNoncompetitive, M::kMixed);
  test(M::kCompetitive, M::kMixed);
  test(M::kUncompetitive, M::kMixed);
  const KineticFit* simple = lowest_aicc({M::kCompetitive, M::kUncompetitive, M::kNoncompetitive});
  const KineticFit* mixed = choice.Find(M::kMixed);
  if (simple == nullptr) {
    if (Usable(mixed)) choose(M::kMixed, "the only usable fit");
    return choice;
  }
  const std::string simple_reason =
      std::string(Id(simple->model)) +
      " has the lowest AICc of the one-constant modes (equal parameter counts)";
  if (!Usable(mixed)) {
    choose(simple->model, simple_reason);
  } else if (simple->model == M::kNoncompetitive) {
    if (vs_non.rejects_simpler) {
      choose(M::kMixed, simple_reason + ", but the F test rejects it against mixed (p = " +
                            P(vs_non.p_value) + ", " + level + ")");
    } else {
      choose(M::kNoncompetitive, simple_reason + ", and the F test does not reject it against "
                                                 "mixed (p = " + P(vs_non.p_value) + ")");
    }
  } else if (mixed->aicc < simple->aicc) {
    choose(M::kMixed, simple_reason + ", but mixed has a lower AICc still (" +
                          std::string(Id(simple->model)) +
                          " is a limit of mixed, not nested in it, so AICc decides)");
  } else {
    choose(simple->model, simple_reason + ", and mixed does not lower AICc (" +
                              std::string(Id(simple->model)) +
                              " is a limit of mixed, not nested in it, so AICc decides)");
  }
  return choice;
}

}  // namespace ratewell
