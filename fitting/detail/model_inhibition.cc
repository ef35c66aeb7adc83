// Ceres instantiations for the inhibition family: competitive,
// uncompetitive, noncompetitive, mixed.
#include "fitting/detail/fit_engine.h"
#include "fitting/detail/model_rate_laws.h"
#include "fitting/detail/model_sources.h"

namespace ratewell::detail {

std::unique_ptr<ResidualSource> MakeInhibitionFamilySource(const KineticDesign& design) {
  switch (design.model) {
    case KineticModel::kCompetitive:
      return std::make_unique<AutoDiffSource<KineticLawModel<CompetitiveLaw>>>(
          KineticLawModel<CompetitiveLaw>(design));
    case KineticModel::kUncompetitive:
      return std::make_unique<AutoDiffSource<KineticLawModel<UncompetitiveLaw>>>(
          KineticLawModel<UncompetitiveLaw>(design));
    case KineticModel::kNoncompetitive:
      return std::make_unique<AutoDiffSource<KineticLawModel<NoncompetitiveLaw>>>(
          KineticLawModel<NoncompetitiveLaw>(design));
    case KineticModel::kMixed:
      return std::make_unique<AutoDiffSource<KineticLawModel<MixedLaw>>>(
          KineticLawModel<MixedLaw>(design));
    default: return nullptr;
  }
}

}  // namespace ratewell::detail
