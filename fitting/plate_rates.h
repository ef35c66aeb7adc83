// Plate rates: every well's initial rate, background-corrected and in the
// units a biochemist reports.
//
// For each well with data at the detection wavelength:
//   1. pathlength l (ComputePathlength: fixed, geometry, water peak or NADH
//      standards) and the signed Beer–Lambert factor F = ±1e6/(ε·l·n);
//   2. the initial rate of product formation v_raw (EstimateInitialRate) in
//      µM/min, with its SE and flags;
//   2b. the coupling lag τ is a property of the coupling system, the same in
//      every well of a plate: the inverse-variance weighted mean of the
//      wells' own τ (each SE floored at 0.6 s), when at least three wells
//      with enzyme have one and the pooled SE is below a quarter of τ plus
//      3 s, is held for a second pass over every well with enzyme. This roughly halves the SE of
//      weak wells whose windows are short; the spread of τ over the plate is
//      small next to what a single weak well could resolve. Method linear
//      models no lag and is left alone;
//   3. background: blank (no-enzyme) wells give the non-enzymatic rate b,
//      as the mean of all blanks ("plate-mean") or of the blanks at the same
//      substrate level ("matched", falling back to the plate mean with a
//      warning). Sample, no-substrate and standard wells get
//          v = v_raw − b,   SE(v) = √(SE(v_raw)² + SE(b)²),
//      and the 95 % interval v ± t(0.975, dof)·SE(v) with the well's degrees
//      of freedom (a slight over-coverage when the blank SE dominates).
//      SE(b) is the larger of the scatter of the blank rates (sd/√n) and
//      their propagated SEs (√Σ SE_i² / n), so one blank well still counts
//      its own uncertainty;
//   4. when the enzyme amount is known (layout enzyme_nM, else ASSAY.json
//      enzyme): turnover per enzyme v/[E] in s⁻¹, and with a mass
//      concentration (mg/mL, or nM and the molar mass) the specific activity
//      in U/mg (1 U = 1 µmol/min, NC-IUB 1979).
// Blank wells keep their own rate uncorrected (they are the background).
// Wells without data are left out; empty wells with readings are listed
// with no rate.
//
// The user's decisions (WellDecisions) enter here because they change the
// plate, not just one well: an excluded well keeps its own rate (shown,
// never used in a fit) and an excluded blank leaves the background. The
// pooled coupling lag comes from the automatic windows of the wells and
// depends on neither exclusions nor user windows, so
// excluding a sample well or choosing its window changes no other well's
// rate. A user window replaces the automatic window of that well
// ("user-window" flag).
#pragma once

#include <cmath>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "fitting/assay_settings.h"
#include "fitting/pathlength.h"
#include "fitting/rates.h"
#include "importers/layout.h"
#include "importers/plate.h"

namespace ratewell {

struct WellRate {
  int well = -1;             // index on the plate
  std::string name;          // "B03"
  WellRole role = WellRole::kEmpty;
  double substrate_uM = RateInput::kUnknown;
  double inhibitor_uM = 0.0;
  double enzyme_nM = RateInput::kUnknown;  // layout, else settings; NaN unknown
  std::string group;
  double pathlength_cm = RateInput::kUnknown;
  double pathlength_se_cm = 0.0;

  // The rate of the trace itself, before background subtraction.
  RateEstimate estimate;
  // Background subtracted (µM/min) and its SE; 0 when none was.
  double background_uM_per_min = 0.0;
  double background_se_uM_per_min = 0.0;
  // The corrected initial rate: what the kinetic fit uses. NaN when no rate
  // could be estimated (estimate.ok false).
  double rate_uM_per_min = RateInput::kUnknown;
  double se_uM_per_min = RateInput::kUnknown;
  double ci95_lo_uM_per_min = RateInput::kUnknown;
  double ci95_hi_uM_per_min = RateInput::kUnknown;
  // Derived, when the enzyme amount is known.
  std::optional<double> turnover_per_s;
  std::optional<double> specific_activity_U_per_mg;

  // Rate flags plus well-level ones ("no-rate", "pathlength-out-of-range").
  std::vector<std::string> flags;
  // Set by the user (the analysis document), never by this module.
  bool excluded = false;
  std::string exclusion_reason;

  bool HasRate() const { return estimate.ok && std::isfinite(rate_uM_per_min); }
};

// Decisions a person made about wells of one plate, by well index.
struct WellDecisions {
  // Rate window [start, end] in minutes from the first read.
  std::map<int, std::pair<double, double>> windows_min;
  // Excluded wells and the reason given.
  std::map<int, std::string> exclusions;
};

struct PlateRates {
  std::string plate;  // the plate file's path as given
  PathlengthResult pathlength;
  double background_uM_per_min = 0.0;  // plate-mean background (informative)
  double background_se_uM_per_min = 0.0;
  int blank_wells_used = 0;
  // The plate's coupling lag held in the second pass (step 2b), and from how
  // many wells; nullopt when it was not pooled.
  std::optional<double> coupling_tau_min;
  int coupling_tau_wells = 0;
  std::vector<WellRate> wells;  // in well order
  std::vector<std::string> warnings;
};

// progress(done, total) is called after each well, from the calling thread.
// Throws InputError when the plate lacks the detection wavelength or the
// pathlength cannot be found (see ComputePathlength); data problems in a
// well are flags, not exceptions.
PlateRates ComputePlateRates(const Plate& plate, const Layout& layout,
                             const AssaySettings& settings,
                             const std::function<void(int, int)>& progress = {},
                             const WellDecisions& decisions = {});

}  // namespace ratewell
