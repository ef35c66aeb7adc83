#include "fitting/kinetic_models.h"

#include <cmath>
#include <limits>

#include "fitting/detail/model_rate_laws.h"

namespace ratewell {
namespace {

using PK = ParameterKind;

std::vector<ModelDescription> MakeDescriptions() {
  const ParameterDescription vmax{"Vmax", PK::kRate, true, "limiting rate at saturating substrate"};
  const ParameterDescription km{"Km", PK::kConcentration, true,
                                "Michaelis constant: substrate concentration at half Vmax"};
  const ParameterDescription ki{"Ki", PK::kConcentration, true,
                                "inhibition constant (dissociation constant of EI)"};
  return {
      {KineticModel::kMichaelisMenten, "michaelis-menten", "v = Vmax*S/(Km + S)", {vmax, km},
       true, false, false},
      {KineticModel::kSubstrateInhibition, "substrate-inhibition",
       "v = Vmax*S/(Km + S + S^2/Ksi)",
       {vmax, km, {"Ksi", PK::kConcentration, true, "substrate inhibition constant"}},
       true, false, false},
      {KineticModel::kHill, "hill", "v = Vmax*S^h/(Khalf^h + S^h)",
       {vmax,
        {"Khalf", PK::kConcentration, true, "substrate concentration at half Vmax"},
        {"h", PK::kDimensionless, true, "Hill coefficient"}},
       true, false, false},
      {KineticModel::kCompetitive, "competitive", "v = Vmax*S/(Km*(1 + I/Ki) + S)",
       {vmax, km, ki}, true, true, false},
      {KineticModel::kUncompetitive, "uncompetitive", "v = Vmax*S/(Km + S*(1 + I/Ki))",
       {vmax, km, ki}, true, true, false},
      {KineticModel::kNoncompetitive, "noncompetitive", "v = Vmax*S/((Km + S)*(1 + I/Ki))",
       {vmax, km, ki}, true, true, false},
      {KineticModel::kMixed, "mixed", "v = Vmax*S/(Km*(1 + I/Ki) + S*(1 + I/(alpha*Ki)))",
       {vmax, km, ki,
        {"alpha", PK::kDimensionless, true,
         "ratio of the ESI to the EI dissociation constant (alpha*Ki binds ES)"}},
       true, true, false},
      {KineticModel::kMorrison, "morrison",
       "v = v0*(1 - ((E + I + Kiapp) - sqrt((E + I + Kiapp)^2 - 4*E*I))/(2*E))",
       {{"v0", PK::kRate, true, "rate without inhibitor"},
        {"Kiapp", PK::kConcentration, true, "apparent inhibition constant (tight binding)"},
        {"E", PK::kConcentration, true, "active enzyme concentration in the well"}},
       false, true, true},
      {KineticModel::kFourParameterLogistic, "four-parameter-logistic",
       "v = bottom + (top - bottom)/(1 + (I/IC50)^h)",
       {{"top", PK::kRate, false, "response without inhibitor"},
        {"bottom", PK::kRate, false, "response at saturating inhibitor"},
        {"IC50", PK::kConcentration, true, "inhibitor concentration at the half-way response"},
        {"h", PK::kDimensionless, true, "slope (Hill) coefficient"}},
       false, true, false},
      {KineticModel::kFourParameterLogisticLog10, "four-parameter-logistic-log10",
       "v = bottom + (top - bottom)/(1 + 10^(h*(log10(I) - log10_IC50)))",
       {{"top", PK::kRate, false, "response without inhibitor"},
        {"bottom", PK::kRate, false, "response at saturating inhibitor"},
        {"log10_IC50", PK::kLog10Concentration, false, "log10 of the IC50"},
        {"h", PK::kDimensionless, true, "slope (Hill) coefficient"}},
       false, true, false},
  };
}

const std::vector<ModelDescription>& Descriptions() {
  static const std::vector<ModelDescription> descriptions = MakeDescriptions();
  return descriptions;
}

}  // namespace

const std::vector<KineticModel>& AllKineticModels() {
  static const std::vector<KineticModel> models = [] {
    std::vector<KineticModel> all;
    for (const ModelDescription& d : Descriptions()) all.push_back(d.model);
    return all;
  }();
  return models;
}

const char* KineticModelToString(KineticModel model) {
  return DescribeModel(model).id.data();
}

bool StringToKineticModel(std::string_view id, KineticModel* model) {
  for (const ModelDescription& d : Descriptions()) {
    if (d.id == id) {
      *model = d.model;
      return true;
    }
  }
  return false;
}

const char* ModelFamilyToString(ModelFamily family) {
  return family == ModelFamily::kSubstrate ? "substrate" : "inhibition";
}

const std::vector<KineticModel>& CandidateModels(ModelFamily family) {
  static const std::vector<KineticModel> substrate = {
      KineticModel::kMichaelisMenten, KineticModel::kSubstrateInhibition, KineticModel::kHill};
  static const std::vector<KineticModel> inhibition = {
      KineticModel::kCompetitive, KineticModel::kUncompetitive, KineticModel::kNoncompetitive,
      KineticModel::kMixed};
  return family == ModelFamily::kSubstrate ? substrate : inhibition;
}

const ModelDescription& DescribeModel(KineticModel model) {
  for (const ModelDescription& d : Descriptions()) {
    if (d.model == model) return d;
  }
  return Descriptions().front();
}

int ParameterIndex(KineticModel model, std::string_view name) {
  const ModelDescription& d = DescribeModel(model);
  for (size_t j = 0; j < d.parameters.size(); ++j) {
    if (d.parameters[j].name == name) return static_cast<int>(j);
  }
  return -1;
}

bool KineticData::HasInhibitor() const {
  for (const KineticObservation& p : points) {
    if (p.inhibitor_uM > 0.0) return true;
  }
  return false;
}

ModelFamily FamilyForData(const KineticData& data) {
  return data.HasInhibitor() ? ModelFamily::kInhibition : ModelFamily::kSubstrate;
}

std::string ParameterUnit(ParameterKind kind, const KineticData& data) {
  switch (kind) {
    case ParameterKind::kRate: return data.rate_unit;
    case ParameterKind::kConcentration: return data.concentration_unit;
    case ParameterKind::kDimensionless: return "dimensionless";
    case ParameterKind::kLog10Concentration: return "log10(" + data.concentration_unit + ")";
  }
  return "";
}

double EvaluateKineticModel(KineticModel model, const std::vector<double>& values,
                            double substrate_uM, double inhibitor_uM) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  return detail::DispatchRateLaw(model, [&](auto law) {
    using Law = decltype(law);
    if (values.size() != static_cast<size_t>(Law::kNumParameters)) return kNaN;
    const double v = Law::Rate(values.data(), substrate_uM, inhibitor_uM);
    return std::isfinite(v) ? v : kNaN;
  });
}

}  // namespace ratewell
