// Kinetic rate laws bound to data for the generic engine: observation i has
// (Sᵢ, Iᵢ, groupᵢ), and the rate law's parameter j for group g is θ[slots[g·k + j]]
// (k parameters per law), which is how a per-group parameter (one Vmax per
// group) and a shared one (one Km) live in one parameter vector.
#pragma once

#include <memory>
#include <vector>

#include "fitting/detail/fit_problem.h"
#include "fitting/kinetic_models.h"

namespace ratewell::detail {

struct KineticDesign {
  KineticModel model = KineticModel::kMichaelisMenten;
  std::vector<double> substrate;  // per observation
  std::vector<double> inhibitor;  // per observation
  std::vector<int> group;         // per observation, in [0, num_groups)
  int num_groups = 1;
  std::vector<int> slots;         // num_groups × (law's parameter count)
  int num_parameters = 0;         // length of θ
};

// A ResidualSource for design.model (automatic differentiation by Ceres).
std::unique_ptr<ResidualSource> MakeKineticSource(const KineticDesign& design);

// The rate law of a design as a Model for AutoDiffSource (fit_engine.h).
template <class Law>
class KineticLawModel {
 public:
  explicit KineticLawModel(KineticDesign design) : design_(std::move(design)) {}
  int num_parameters() const { return design_.num_parameters; }
  int num_observations() const { return static_cast<int>(design_.substrate.size()); }
  template <typename T>
  bool Predict(int i, const T* theta, T* value) const {
    T local[Law::kNumParameters];
    const int* slot = &design_.slots[design_.group[i] * Law::kNumParameters];
    for (int j = 0; j < Law::kNumParameters; ++j) local[j] = theta[slot[j]];
    *value = Law::Rate(local, design_.substrate[i], design_.inhibitor[i]);
    return true;
  }

 private:
  KineticDesign design_;
};

// Per family, one translation unit each (each instantiates Ceres templates).
std::unique_ptr<ResidualSource> MakeSubstrateFamilySource(const KineticDesign& design);
std::unique_ptr<ResidualSource> MakeInhibitionFamilySource(const KineticDesign& design);
std::unique_ptr<ResidualSource> MakeDoseResponseSource(const KineticDesign& design);

}  // namespace ratewell::detail
