#include "fitting/detail/model_sources.h"

namespace ratewell::detail {

std::unique_ptr<ResidualSource> MakeKineticSource(const KineticDesign& design) {
  switch (design.model) {
    case KineticModel::kMichaelisMenten:
    case KineticModel::kSubstrateInhibition:
    case KineticModel::kHill: return MakeSubstrateFamilySource(design);
    case KineticModel::kCompetitive:
    case KineticModel::kUncompetitive:
    case KineticModel::kNoncompetitive:
    case KineticModel::kMixed: return MakeInhibitionFamilySource(design);
    case KineticModel::kMorrison:
    case KineticModel::kFourParameterLogistic:
    case KineticModel::kFourParameterLogisticLog10: return MakeDoseResponseSource(design);
  }
  return nullptr;
}

}  // namespace ratewell::detail
