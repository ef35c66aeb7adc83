// Small builders the kinetic-fit tests share.
#pragma once

#include "fitting/kinetic_models.h"

namespace ratewell::testing {

// One observation (replicates are separate points).
inline KineticObservation Point(double substrate_uM, double inhibitor_uM, double rate) {
  KineticObservation p;
  p.substrate_uM = substrate_uM;
  p.inhibitor_uM = inhibitor_uM;
  p.rate = rate;
  return p;
}

}  // namespace ratewell::testing
