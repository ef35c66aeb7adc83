#include "fitting/analysis.h"

#include "importers/input_error.h"

namespace ratewell {

int Analysis::UsableSampleWells() const {
  int n = 0;
  for (const PlateRates& p : plate_rates) {
    for (const WellRate& w : p.wells) {
      if (w.role == WellRole::kSample && w.HasRate() && !w.excluded) ++n;
    }
  }
  return n;
}

int Analysis::FailedSampleWells() const {
  int n = 0;
  for (const PlateRates& p : plate_rates) {
    for (const WellRate& w : p.wells) {
      if (w.role == WellRole::kSample && !w.HasRate()) ++n;
    }
  }
  return n;
}

Analysis RunAnalysis(const AnalysisRequest& request, const ProgressCallback& progress) {
  if (request.plate_paths.empty()) {
    throw InputError("", 0, 0, "no plate file given; expected at least one");
  }
  Analysis analysis;
  analysis.request = request;
  if (!request.assay_path.empty()) {
    analysis.settings = ReadAssaySettingsFile(request.assay_path);
  }
  const double plates = static_cast<double>(request.plate_paths.size());
  for (std::size_t i = 0; i < request.plate_paths.size(); ++i) {
    const std::string& path = request.plate_paths[i];
    if (progress) progress(static_cast<double>(i) / plates, "reading " + path);
    analysis.plates.push_back(ReadPlateFile(path, request.read_options));
    for (const std::string& w : analysis.plates.back().report.warnings) {
      analysis.warnings.push_back(path + ": " + w);
    }
  }
  analysis.layout = ReadLayoutFile(request.layout_path, analysis.plates.front().geometry);
  for (const std::string& w : analysis.layout.warnings) {
    analysis.warnings.push_back(request.layout_path + ": " + w);
  }
  for (std::size_t i = 0; i < analysis.plates.size(); ++i) {
    const Plate& plate = analysis.plates[i];
    const auto well_progress = [&](int done, int total) {
      if (progress && total > 0) {
        progress((static_cast<double>(i) + static_cast<double>(done) / total) / plates,
                 "rates " + plate.report.path);
      }
    };
    analysis.plate_rates.push_back(ComputePlateRates(plate, analysis.layout, analysis.settings, well_progress));
    for (const std::string& w : analysis.plate_rates.back().warnings) {
      analysis.warnings.push_back(plate.report.path + ": " + w);
    }
  }
  if (progress) progress(1.0, "done");
  return analysis;
}

}  // namespace ratewell
