// Model choice: fit every candidate of a family, compare them, name one.
//
// Background
// ----------
// Two tools, both on the same data and weights:
//
//   AICc (Akaike's criterion with the small-sample correction; KineticFit::aicc)
//     for any set of candidates: lower is better; Δᵢ = AICcᵢ − min AICc and
//     the Akaike weights exp(−Δᵢ/2)/Σ exp(−Δⱼ/2) are reported.
//
//   Extra-sum-of-squares F test for a nested pair (Bates & Watts 1988, §3.9):
//     the simpler model s is the larger model l with parameters held,
//       F = ((SSRₛ − SSRₗ)/(dofₛ − dofₗ)) / (SSRₗ/dofₗ),
//     p = P(F(dofₛ − dofₗ, dofₗ) > F) (Boost.Math). The simpler model is kept
//     unless p < α (0.05).
//
// Nesting in the two families:
//   - michaelis-menten ⊂ hill at h = 1: an interior point, the F test holds.
//   - michaelis-menten ⊂ substrate-inhibition as Ksi → ∞ (1/Ksi = 0, on the
//     edge of the allowed region): the F test is used, and is conservative
//     there (it rejects michaelis-menten a little less often than α).
//   - noncompetitive ⊂ mixed at alpha = 1: interior, the F test holds.
//   - competitive is mixed with alpha → ∞, uncompetitive is mixed with
//     Ki → ∞ and alpha·Ki finite: limits, not points of the mixed model, so
//     the F test's distribution does not apply. These pairs are compared by
//     AICc; their F statistic is still reported, marked not proper.
//
// `auto` (FitAndChooseModel):
//   substrate family: michaelis-menten is kept unless the F test rejects it
//     against substrate-inhibition or hill; if both reject, the one of the
//     two with the lower AICc.
//   inhibition family: of competitive, uncompetitive and noncompetitive (one
//     inhibition constant each, so equal parameter counts) the lowest AICc;
//     then mixed replaces it only if the F test rejects noncompetitive, or,
//     for competitive and uncompetitive, if mixed has the lower AICc.
// Every candidate's fit is kept; a candidate whose fit is not usable is
// left out of the choice and named in the reason.
#pragma once

#include <limits>
#include <string>
#include <vector>

#include "fitting/kinetic_models.h"
#include "fitting/nonlinear_fit.h"

namespace ratewell {

struct NestedComparison {
  KineticModel simpler = KineticModel::kMichaelisMenten;
  KineticModel larger = KineticModel::kMichaelisMenten;
  // The simpler model is an interior point of the larger one, so the F
  // distribution applies; false for limits (compared by AICc instead).
  bool proper_nesting = false;
  bool computed = false;
  std::string reason;  // why not computed
  double f = std::numeric_limits<double>::quiet_NaN();
  int df_numerator = 0;
  int df_denominator = 0;
  double p_value = std::numeric_limits<double>::quiet_NaN();
  // p < alpha (only meaningful when proper_nesting).
  bool rejects_simpler = false;
  std::string note;
};

// The F test of `simpler` against `larger`, two fits to the same data with
// the same weights (larger has more parameters). proper_nesting and note
// come from the models (true for a pair not listed above, e.g. a shared
// parameter against per-group ones; the caller knows its design).
NestedComparison ExtraSumOfSquaresTest(const KineticFit& simpler, const KineticFit& larger,
                                       double alpha = 0.05);

struct ModelChoice {
  ModelFamily family = ModelFamily::kSubstrate;
  std::vector<KineticFit> fits;     // every candidate, CandidateModels(family) order
  std::vector<double> delta_aicc;   // per fit; +infinity when not usable
  std::vector<double> akaike_weights;
  std::vector<NestedComparison> tests;
  bool chosen = false;              // false when no candidate fit is usable
  KineticModel preferred = KineticModel::kMichaelisMenten;
  std::string reason;               // a sentence for the report

  const KineticFit* Preferred() const;
  const KineticFit* Find(KineticModel model) const;
};

// Fits every model of the family with `options` and chooses as above.
// per_group names and ParameterControls a candidate does not have (Km for
// hill) are left out for that candidate.
ModelChoice FitAndChooseModel(const KineticData& data, ModelFamily family,
                              const FitOptions& options = FitOptions(), double alpha = 0.05);
// The family from the data (FamilyForData): `--model auto`.
ModelChoice FitAndChooseModel(const KineticData& data, const FitOptions& options = FitOptions(),
                              double alpha = 0.05);

}  // namespace ratewell
