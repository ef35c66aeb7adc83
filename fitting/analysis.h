// Analysis: the whole job on one experiment, without a display.
//
// An experiment is one or more plate files read with one layout and one set
// of assay settings (replicate plates of the same design, or plates of one
// study). RunAnalysis reads every input, estimates every well's initial rate
// (ComputePlateRates), applies the user's decisions (excluded wells, rate
// windows), fits the kinetic model(s) to the usable sample wells
// (FitAndChooseModel or one named model) and collects warnings. The CLI and
// the GUI both call it; report/ turns the result into results.json, CSV and
// PDF.
//
// Which wells the kinetic fit uses: sample wells with a rate (WellRate::
// HasRate), not excluded, with a known substrate concentration; replicates
// and replicate plates are separate points of one group. Each point's rate
// SE is carried for inverse-variance weighting.
//
// The GUI changes one thing at a time: SetExclusion / SetWindow edit the
// request and the affected wells, then FitKinetics refits (the rates of
// other wells are not recomputed).
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "fitting/assay_settings.h"
#include "fitting/model_selection.h"
#include "fitting/nonlinear_fit.h"
#include "fitting/plate_rates.h"
#include "importers/layout.h"
#include "importers/plate.h"
#include "importers/read_plate.h"

namespace ratewell {

// A well the user set aside, and why (recorded in the analysis document).
struct WellExclusion {
  int plate = 0;        // index into AnalysisRequest::plate_paths
  std::string well;     // "B03" (zero-padded, as Plate well names)
  std::string reason;   // non-empty
  bool operator==(const WellExclusion&) const = default;
};

// A rate window the user chose for one well in place of the automatic one
// (or of AssaySettings::rate.window_min), minutes from the first read.
struct WindowOverride {
  int plate = 0;
  std::string well;
  double start_min = 0.0;  // 0 <= start < end
  double end_min = 0.0;
  bool operator==(const WindowOverride&) const = default;
};

struct AnalysisRequest {
  std::vector<std::string> plate_paths;  // at least one
  std::string layout_path;               // required
  std::string assay_path;                // "" : defaults of AssaySettings
  ReadOptions read_options;
  // Kinetic model: "auto" (the family the data allow) or a model id
  // ("michaelis-menten", …); "" : AssaySettings::fit.model.
  std::string model;
  // Interval method; nullopt: AssaySettings::fit.interval.
  std::optional<IntervalMethod> interval_method;
  // Weighting of the kinetic fit; nullopt: AssaySettings::fit.weighting.
  std::optional<Weighting> weighting;
  // The user's decisions, applied in order (a later entry for the same well
  // replaces an earlier one).
  std::vector<WellExclusion> exclusions;
  std::vector<WindowOverride> windows;
};

// The kinetic part of an analysis.
struct KineticAnalysis {
  // False when there was nothing to fit (no usable sample wells with a
  // substrate concentration, …); `reason` says why.
  bool attempted = false;
  std::string reason;
  // The points fitted and where each came from.
  KineticData data;
  struct Source {
    int plate = 0;  // index into Analysis::plates / plate_rates
    int well = 0;   // index into plate_rates[plate].wells
  };
  std::vector<Source> sources;
  // "auto" or the model id asked for.
  std::string requested_model = "auto";
  // The options every fit used (progress callback cleared).
  FitOptions options;
  // Every candidate's fit (one for a named model) and the preferred one:
  // choice.Preferred() is null when no fit is usable.
  ModelChoice choice;
  // Sentences for a reviewer (also copied into Analysis::warnings).
  std::vector<std::string> warnings;
};

struct Analysis {
  AnalysisRequest request;
  AssaySettings settings;
  Layout layout;
  std::vector<Plate> plates;           // as read, in request order
  std::vector<PlateRates> plate_rates; // one per plate, same order
  KineticAnalysis kinetics;
  // From reading, layout and rates (each prefixed by its file) and from the
  // kinetic fits.
  std::vector<std::string> warnings;

  // Sample wells (over all plates) with a usable, non-excluded rate.
  int UsableSampleWells() const;
  // Sample wells whose rate could not be estimated.
  int FailedSampleWells() const;
};

// Progress: (fraction done in [0, 1], what is being done).
using ProgressCallback = std::function<void(double, const std::string&)>;

// Throws InputError for unreadable or invalid inputs (plate, layout,
// settings) and for a layout that does not fit a plate.
// The kinetic fit is part of the run; fit problems are warnings, not
// exceptions.
Analysis RunAnalysis(const AnalysisRequest& request, const ProgressCallback& progress = {});

// Refits the kinetic model(s) from the current well rates and request
// (model, interval method), replacing analysis->kinetics and its warnings.
void FitKinetics(Analysis* analysis, const ProgressCallback& progress = {});

// Excludes a well with a reason, or restores it (reason nullopt); updates
// request.exclusions and the well's WellRate. Does not refit. Throws
// std::invalid_argument for an unknown plate index or well name, or an
// empty reason.
void SetExclusion(Analysis* analysis, int plate, const std::string& well,
                  const std::optional<std::string>& reason);

// Sets a well's rate window (or returns it to automatic: window nullopt),
// updates request.windows and recomputes that plate's rates (the blank and
// the pooled coupling lag may move). Does not refit. Throws
// std::invalid_argument for an unknown plate or well or a bad window.
void SetWindow(Analysis* analysis, int plate, const std::string& well,
               const std::optional<std::pair<double, double>>& window_min);

}  // namespace ratewell
