// Internal: the coupled-assay ODE of one well, integrated at the read times.
//
// State (µM): S substrate, X coupling intermediate (the primary product on its
// way through the coupling enzymes), N detected species (NADH). With
// v_E = EnzymeRate(kinetics, S, I) (0 without enzyme), g(N) the NADH limit
// and d the signed drift:
//
//   S' = −v_E
//   X' = v_E − X/τ · g(N)                       (τ > 0)
//   N' = ∓ per_turnover · X/τ · g(N) + d·[g(N) if d < 0]
//
// "∓": consumed (−, NADH oxidised; limited by g) or formed (+, no limit:
// NAD⁺ taken in excess). With τ = 0, X stays 0 and the flux X/τ is v_E
// itself. g(N) = N/(N + K_N) for K_N > 0 (the coupling step slows as NADH
// runs out) and, for K_N = 0, a clamp: 1 while N > 0, 0 at N ≤ 0. Reported N
// is max(N, 0).
//
// Integration: Dormand–Prince 5(4) with error control (Boost.Odeint),
// stepping exactly onto every requested time; the default tolerances keep the
// global error near 1e-10 relative (see simulator_test for checks against
// McClure's and Schnell–Mendoza's closed forms).
#pragma once

#include <vector>

#include "simulate/scenario.h"

namespace ratewell::detail {

struct CoupledWell {
  KineticTruth kinetics;  // vmax 0 for a well without enzyme
  double substrate0_uM = 0.0;
  double inhibitor_uM = 0.0;
  double nadh0_uM = 0.0;
  double tau_min = 0.0;
  double per_turnover = 1.0;
  bool consumed = true;
  double drift_uM_per_min = 0.0;  // signed: negative = NADH lost
  double nadh_half_saturation_uM = 0.0;
};

struct CoupledState {
  double substrate_uM = 0.0;
  double intermediate_uM = 0.0;
  double nadh_uM = 0.0;
};

struct IntegrationTolerances {
  double absolute_uM = 1e-11;
  double relative = 1e-12;
};

// The state at each of times_min (non-decreasing, ≥ 0), starting at t = 0
// from (substrate0, 0, nadh0).
std::vector<CoupledState> IntegrateCoupledWell(const CoupledWell& well,
                                               const std::vector<double>& times_min,
                                               const IntegrationTolerances& tolerances = {});

}  // namespace ratewell::detail
