// Internal: where each well of a scenario's design goes (the order documented
// in simulate/scenario.h).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "importers/layout.h"
#include "simulate/scenario.h"

namespace ratewell::detail {

struct PlannedWell {
  WellRole role = WellRole::kEmpty;
  double substrate_uM = 0.0;
  double inhibitor_uM = 0.0;
  bool enzyme = false;       // the scenario's enzyme is in the well
  double standard_uM = 0.0;  // NADH of a standard well
  bool saturating = false;   // NADH raised so the first read is design.saturating_start_A
  std::string group;         // replicate group label for the layout
};

// One entry per well (index = row * columns + column); wells the design does
// not use are kEmpty. nullopt when the design does not fit the plate; then
// *wells_needed (if not null) is the number of wells it would need.
std::optional<std::vector<PlannedWell>> PlanPlate(const Scenario& scenario, int* wells_needed);

}  // namespace ratewell::detail
