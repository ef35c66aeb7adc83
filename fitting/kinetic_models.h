// Kinetic models: the rate laws ratewell fits to initial rates, and the data
// they are fitted to.
//
// Background
// ----------
// An enzyme assay gives one initial rate v per well at a substrate
// concentration S and an inhibitor concentration I. A kinetic model is a rate
// law v = f(S, I; θ) with a small parameter vector θ. The models and their
// ids (DESIGN §2; the usual names stay):
//
//   michaelis-menten          v = Vmax·S/(Km + S)
//   substrate-inhibition      v = Vmax·S/(Km + S + S²/Ksi)
//   hill                      v = Vmax·Sʰ/(Khalfʰ + Sʰ)
//   competitive               v = Vmax·S/(Km·(1 + I/Ki) + S)
//   uncompetitive             v = Vmax·S/(Km + S·(1 + I/Ki))
//   noncompetitive            v = Vmax·S/((Km + S)·(1 + I/Ki))
//   mixed                     v = Vmax·S/(Km·(1 + I/Ki) + S·(1 + I/(alpha·Ki)))
//   morrison                  v = v0·(1 − ((E + I + Kiapp) − √((E + I + Kiapp)² − 4·E·I))/(2·E))
//                             (tight binding, Morrison 1969; evaluated as
//                             v0·(1 − 2·I/(b + √(b² − 4·E·I))), b = E + I + Kiapp,
//                             the same value without cancellation at small I)
//   four-parameter-logistic   v = bottom + (top − bottom)/(1 + (I/IC50)ʰ)
//   four-parameter-logistic-log10
//                             the same curve with log10_IC50 = log10(IC50) as
//                             the parameter: v = bottom + (top − bottom)/(1 + 10^(h·(log10 I − log10_IC50)))
//
// The inhibition models (competitive … mixed) are fitted globally to the
// whole [S]×[I] matrix. Morrison's E is the enzyme concentration in the
// well: known (fixed, FitOptions::enzyme_uM) unless asked to be fitted.
// Morrison and the logistic use I only; the substrate models use S only.
//
// Units: the parameters take the data's units (KineticData::rate_unit and
// ::concentration_unit, µM/min and µM by default): Vmax, v0, top and bottom
// are rates; Km, Ksi, Khalf, Ki, Kiapp, IC50 and E are concentrations; h and
// alpha are dimensionless; log10_IC50 is log10 of a concentration.
//
// Example:
//   KineticData data;
//   KineticObservation point;
//   point.substrate_uM = 5.0;
//   point.rate = 1.2;
//   data.points.push_back(point);
//   ...
//   const ModelDescription& mm = DescribeModel(KineticModel::kMichaelisMenten);
//   double v = EvaluateKineticModel(KineticModel::kMichaelisMenten, {10.0, 2.0}, 5.0, 0.0);
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace ratewell {

enum class KineticModel {
  kMichaelisMenten,
  kSubstrateInhibition,
  kHill,
  kCompetitive,
  kUncompetitive,
  kNoncompetitive,
  kMixed,
  kMorrison,
  kFourParameterLogistic,
  kFourParameterLogisticLog10,
};

// Every model, in the order above.
const std::vector<KineticModel>& AllKineticModels();

// "michaelis-menten", "substrate-inhibition", … (the ids of the table above).
const char* KineticModelToString(KineticModel model);
// The inverse; false (and *model untouched) for an unknown id.
bool StringToKineticModel(std::string_view id, KineticModel* model);

// The candidate sets `auto` chooses within (DESIGN §4, --model auto).
enum class ModelFamily {
  // No inhibitor: michaelis-menten, substrate-inhibition, hill.
  kSubstrate,
  // With inhibitor: competitive, uncompetitive, noncompetitive, mixed.
  kInhibition,
};
const char* ModelFamilyToString(ModelFamily family);
const std::vector<KineticModel>& CandidateModels(ModelFamily family);

// What a parameter measures, which decides its unit.
enum class ParameterKind {
  kRate,                // KineticData::rate_unit
  kConcentration,       // KineticData::concentration_unit
  kDimensionless,       // "dimensionless"
  kLog10Concentration,  // "log10(" + concentration_unit + ")"
};

struct ParameterDescription {
  std::string_view name;     // exactly as DESIGN §2: "Vmax", "Km", …
  ParameterKind kind;
  // Kept > 0 during the fit (lower bound 0) unless the caller sets bounds.
  bool positive;
  std::string_view meaning;  // one line for reports and tooltips
};

struct ModelDescription {
  KineticModel model;
  std::string_view id;        // KineticModelToString(model)
  std::string_view equation;  // as in the table above
  std::vector<ParameterDescription> parameters;  // the order of every value vector
  bool uses_substrate;        // the rate law reads S
  bool uses_inhibitor;        // the rate law reads I
  // Morrison: the parameter "E" is fixed at FitOptions::enzyme_uM unless
  // FitOptions::fit_enzyme is set.
  bool has_enzyme_parameter;
};
const ModelDescription& DescribeModel(KineticModel model);

// Index of `name` in DescribeModel(model).parameters, or -1.
int ParameterIndex(KineticModel model, std::string_view name);

// One initial rate: replicates are separate observations.
struct KineticObservation {
  double substrate_uM = 0.0;
  double inhibitor_uM = 0.0;
  double rate = 0.0;  // in KineticData::rate_unit (µM/min by default)
  // Standard error of the rate, used by Weighting::kInverseVariance; NaN or
  // absent otherwise.
  std::optional<double> rate_se;
  // Index into KineticData::group_names (0 when there are no groups).
  int group = 0;
  // Where the rate came from ("plate1.csv:B03"), for messages only.
  std::string label;
};

struct KineticData {
  std::vector<KineticObservation> points;
  // Names of the groups for "by group" fits (FitOptions::per_group), e.g. one
  // per plate or per enzyme variant. Empty: all points form one group.
  std::vector<std::string> group_names;
  std::string rate_unit = "uM/min";
  std::string concentration_unit = "uM";

  int num_groups() const { return group_names.empty() ? 1 : static_cast<int>(group_names.size()); }
  // True when some point has an inhibitor concentration above 0.
  bool HasInhibitor() const;
};

// The family `auto` uses for these data: kInhibition when any point has an
// inhibitor, kSubstrate otherwise.
ModelFamily FamilyForData(const KineticData& data);

// The unit of a parameter of this kind for these data.
std::string ParameterUnit(ParameterKind kind, const KineticData& data);

// The model's rate at (S, I) for parameter values in DescribeModel order
// (Morrison: v0, Kiapp, E). NaN when values has the wrong size or the rate
// law is undefined there (e.g. Km + S = 0).
double EvaluateKineticModel(KineticModel model, const std::vector<double>& values,
                            double substrate_uM, double inhibitor_uM);

}  // namespace ratewell
