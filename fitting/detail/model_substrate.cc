// Ceres instantiations for the substrate family: michaelis-menten,
// substrate-inhibition, hill.
#include "fitting/detail/fit_engine.h"
#include "fitting/detail/model_rate_laws.h"
#include "fitting/detail/model_sources.h"

namespace ratewell::detail {

std::unique_ptr<ResidualSource> MakeSubstrateFamilySource(const KineticDesign& design) {
  switch (design.model) {
    case KineticModel::kMichaelisMenten:
      return std::make_unique<AutoDiffSource<KineticLawModel<MichaelisMentenLaw>>>(
          KineticLawModel<MichaelisMentenLaw>(design));
    case KineticModel::kSubstrateInhibition:
      return std::make_unique<AutoDiffSource<KineticLawModel<SubstrateInhibitionLaw>>>(
          KineticLawModel<SubstrateInhibitionLaw>(design));
    case KineticModel::kHill:
      return std::make_unique<AutoDiffSource<KineticLawModel<HillLaw>>>(
          KineticLawModel<HillLaw>(design));
    default: return nullptr;
  }
}

}  // namespace ratewell::detail
