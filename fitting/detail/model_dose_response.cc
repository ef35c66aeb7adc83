// Ceres instantiations for the inhibitor-only models: morrison and the
// four-parameter logistic (IC50 and log10 IC50 forms).
#include "fitting/detail/fit_engine.h"
#include "fitting/detail/model_rate_laws.h"
#include "fitting/detail/model_sources.h"

namespace ratewell::detail {

std::unique_ptr<ResidualSource> MakeDoseResponseSource(const KineticDesign& design) {
  switch (design.model) {
    case KineticModel::kMorrison:
      return std::make_unique<AutoDiffSource<KineticLawModel<MorrisonLaw>>>(
          KineticLawModel<MorrisonLaw>(design));
    case KineticModel::kFourParameterLogistic:
      return std::make_unique<AutoDiffSource<KineticLawModel<FourParameterLogisticLaw>>>(
          KineticLawModel<FourParameterLogisticLaw>(design));
    case KineticModel::kFourParameterLogisticLog10:
      return std::make_unique<AutoDiffSource<KineticLawModel<FourParameterLogisticLog10Law>>>(
          KineticLawModel<FourParameterLogisticLog10Law>(design));
    default: return nullptr;
  }
}

}  // namespace ratewell::detail
