// Analysis: the whole job on one experiment, without a display.
//
// An experiment is one or more plate files read with one layout and one set
// of assay settings (replicate plates of the same design, or plates of one
// study). RunAnalysis reads every input, estimates every well's initial rate
// (ComputePlateRates) and collects warnings. The CLI and the GUI both call
// it; report/ turns the result into results.json, CSV and PDF.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "fitting/assay_settings.h"
#include "fitting/plate_rates.h"
#include "importers/layout.h"
#include "importers/plate.h"
#include "importers/read_plate.h"

namespace ratewell {

struct AnalysisRequest {
  std::vector<std::string> plate_paths;  // at least one
  std::string layout_path;               // required
  std::string assay_path;                // "" : defaults of AssaySettings
  ReadOptions read_options;
};

struct Analysis {
  AnalysisRequest request;
  AssaySettings settings;
  Layout layout;
  std::vector<Plate> plates;           // as read, in request order
  std::vector<PlateRates> plate_rates; // one per plate, same order
  std::vector<std::string> warnings;   // from reading, layout and rates, each prefixed by its file

  // Sample wells (over all plates) with a usable, non-excluded rate.
  int UsableSampleWells() const;
  // Sample wells whose rate could not be estimated.
  int FailedSampleWells() const;
};

// Progress: (fraction done in [0, 1], what is being done).
using ProgressCallback = std::function<void(double, const std::string&)>;

// Throws InputError for unreadable or invalid inputs (plate, layout,
// settings) and for a layout that does not fit a plate.
Analysis RunAnalysis(const AnalysisRequest& request, const ProgressCallback& progress = {});

}  // namespace ratewell
