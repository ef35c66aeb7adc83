#include "fitting/analysis.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>
#include <sstream>
#include <stdexcept>

#include "importers/input_error.h"

namespace ratewell {
namespace {

// Substrate levels closer than this (relative) are one level: layouts write
// the same dilution with different rounding.
constexpr double kSameLevelRelative = 1e-6;

bool SameLevel(double a, double b) {
  return std::abs(a - b) <= kSameLevelRelative * std::max(std::abs(a), std::abs(b));
}

int DistinctLevels(std::vector<double> values) {
  std::sort(values.begin(), values.end());
  int levels = 0;
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (i == 0 || !SameLevel(values[i], values[i - 1])) ++levels;
  }
  return levels;
}

// The well index of `name` on the plate, or -1.
int WellIndex(const std::string& name, const PlateGeometry& geometry) {
  const std::optional<WellPosition> position = ParseWellName(name);
  if (!position || position->row >= geometry.rows || position->column >= geometry.columns) {
    return -1;
  }
  return position->row * geometry.columns + position->column;
}

// The decisions of the request that concern plate `plate`, by well index.
// Throws InputError naming the plate for a well that is not on it.
WellDecisions DecisionsFor(const AnalysisRequest& request, int plate,
                           const PlateGeometry& geometry) {
  WellDecisions decisions;
  const std::string& path = request.plate_paths[static_cast<std::size_t>(plate)];
  const auto index_of = [&](const std::string& well) {
    const int index = WellIndex(well, geometry);
    if (index < 0) {
      throw InputError(path, 0, 0,
                       "the analysis names well \"" + well + "\", which is not on this " +
                           std::to_string(geometry.num_wells()) + "-well plate");
    }
    return index;
  };
  for (const WellExclusion& e : request.exclusions) {
    if (e.plate == plate) decisions.exclusions[index_of(e.well)] = e.reason;
  }
  for (const WindowOverride& w : request.windows) {
    if (w.plate == plate) decisions.windows_min[index_of(w.well)] = {w.start_min, w.end_min};
  }
  return decisions;
}

void CheckPlateIndex(const Analysis& analysis, int plate) {
  if (plate < 0 || plate >= static_cast<int>(analysis.plates.size())) {
    throw std::invalid_argument("no plate " + std::to_string(plate) + " in this analysis (it has " +
                                std::to_string(analysis.plates.size()) + ")");
  }
}

std::string NormalisedWell(const Analysis& analysis, int plate, const std::string& well) {
  const PlateGeometry& geometry = analysis.plates[static_cast<std::size_t>(plate)].geometry;
  const int index = WellIndex(well, geometry);
  if (index < 0) {
    throw std::invalid_argument("\"" + well + "\" is not a well of a " +
                                std::to_string(geometry.num_wells()) + "-well plate");
  }
  return WellName(index, geometry);
}

void RecomputePlate(Analysis* analysis, int plate, const ProgressCallback& progress) {
  const Plate& p = analysis->plates[static_cast<std::size_t>(plate)];
  const WellDecisions decisions = DecisionsFor(analysis->request, plate, p.geometry);
  const auto well_progress = [&](int done, int total) {
    if (progress && total > 0) {
      progress(static_cast<double>(done) / total, "rates " + p.report.path);
    }
  };
  analysis->plate_rates[static_cast<std::size_t>(plate)] =
      ComputePlateRates(p, analysis->layout, analysis->settings, well_progress, decisions);
}

// The warnings of reading, layout and rates, in plate order (kinetic
// warnings are appended by FitKinetics).
void CollectInputWarnings(Analysis* analysis) {
  analysis->warnings.clear();
  for (const Plate& plate : analysis->plates) {
    for (const std::string& w : plate.report.warnings) {
      analysis->warnings.push_back(plate.report.path + ": " + w);
    }
  }
  for (const std::string& w : analysis->layout.warnings) {
    analysis->warnings.push_back(analysis->request.layout_path + ": " + w);
  }
  for (const PlateRates& rates : analysis->plate_rates) {
    for (const std::string& w : rates.warnings) analysis->warnings.push_back(rates.plate + ": " + w);
  }
}

// Same value within rounding.
bool SameValue(double a, double b) { return std::abs(a - b) <= 1e-9 * std::max(std::abs(a), std::abs(b)); }

// Derived-quantity inputs from the enzyme amounts of the fitted wells.
void SetDerivedInputs(const Analysis& analysis, KineticAnalysis* k, FitOptions* options) {
  std::vector<double> enzyme_nM;
  bool any_layout_enzyme = false;
  for (const KineticAnalysis::Source& s : k->sources) {
    const WellRate& w = analysis.plate_rates[static_cast<std::size_t>(s.plate)]
                            .wells[static_cast<std::size_t>(s.well)];
    enzyme_nM.push_back(w.enzyme_nM);
    if (!std::isnan(analysis.layout.at(w.well).enzyme_nM)) any_layout_enzyme = true;
  }
  const bool all_known = std::all_of(enzyme_nM.begin(), enzyme_nM.end(),
                                     [](double e) { return std::isfinite(e) && e > 0.0; });
  bool all_same = all_known && !enzyme_nM.empty();
  for (double e : enzyme_nM) {
    if (all_same && !SameValue(e, enzyme_nM.front())) all_same = false;
  }
  const AssaySettings::Enzyme& enzyme = analysis.settings.enzyme;
  if (all_same) {
    options->derived.enzyme_nM = enzyme_nM.front();
    options->enzyme_uM = enzyme_nM.front() / 1000.0;
    if (enzyme.molar_mass_Da) {
      options->derived.enzyme_mg_per_mL = enzyme_nM.front() * 1e-9 * *enzyme.molar_mass_Da;
    } else if (!any_layout_enzyme && enzyme.mg_per_mL) {
      options->derived.enzyme_mg_per_mL = *enzyme.mg_per_mL;
    }
  } else if (all_known) {
    k->warnings.push_back(
        "the enzyme concentration differs between the fitted wells: kcat, kcat/Km and "
        "specific activity are not derived from the fit (each well's turnover is in rates.csv)");
  } else if (!any_layout_enzyme && enzyme.mg_per_mL) {
    options->derived.enzyme_mg_per_mL = *enzyme.mg_per_mL;
  }
  const AssaySettings::Fit& fit = analysis.settings.fit;
  if (fit.cheng_prusoff_mode) {
    options->derived.cheng_prusoff_mode = fit.cheng_prusoff_mode;
    options->derived.cheng_prusoff_substrate_uM = fit.cheng_prusoff_substrate_uM;
    options->derived.cheng_prusoff_km_uM = fit.cheng_prusoff_km_uM;
    options->derived.cheng_prusoff_km_se_uM = fit.cheng_prusoff_km_se_uM.value_or(0.0);
  }
}

// Progress over several candidate fits: each candidate's stages ("fit" then
// "profile" or "bootstrap") are mapped into its share of [0, 1].
class CandidateProgress {
 public:
  CandidateProgress(const ProgressCallback& progress, int candidates)
      : progress_(progress), candidates_(std::max(1, candidates)) {}

  bool operator()(const FitProgress& p) {
    if (p.stage == "fit" && last_stage_ != "fit" && !last_stage_.empty()) ++candidate_;
    if (p.stage == "fit" && last_stage_.empty()) candidate_ = 0;
    last_stage_ = p.stage;
    const double within = p.stage == "fit" ? 0.1 * std::min(1.0, p.fraction)
                                           : 0.1 + 0.9 * std::clamp(p.fraction, 0.0, 1.0);
    const double overall =
        (std::min(candidate_, candidates_ - 1) + within) / static_cast<double>(candidates_);
    if (progress_) progress_(std::clamp(overall, 0.0, 1.0), "fitting (" + p.stage + ")");
    return true;
  }

 private:
  const ProgressCallback& progress_;
  int candidates_;
  int candidate_ = 0;
  std::string last_stage_;
};

}  // namespace

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

void FitKinetics(Analysis* analysis, const ProgressCallback& progress) {
  KineticAnalysis k;
  const AssaySettings::Fit& fit_settings = analysis->settings.fit;
  k.requested_model = analysis->request.model.empty() ? fit_settings.model : analysis->request.model;

  // Drop the kinetic warnings of an earlier fit.
  const std::size_t earlier = analysis->kinetics.warnings.size();
  if (earlier > 0 && analysis->warnings.size() >= earlier) {
    analysis->warnings.resize(analysis->warnings.size() - earlier);
  }

  for (std::size_t p = 0; p < analysis->plate_rates.size(); ++p) {
    const PlateRates& rates = analysis->plate_rates[p];
    for (std::size_t i = 0; i < rates.wells.size(); ++i) {
      const WellRate& w = rates.wells[i];
      if (w.role != WellRole::kSample || w.excluded || !w.HasRate()) continue;
      if (!std::isfinite(w.substrate_uM)) continue;
      KineticObservation point;
      point.substrate_uM = w.substrate_uM;
      point.inhibitor_uM = std::isfinite(w.inhibitor_uM) ? w.inhibitor_uM : 0.0;
      point.rate = w.rate_uM_per_min;
      if (std::isfinite(w.se_uM_per_min)) point.rate_se = w.se_uM_per_min;
      point.label = rates.plate + ":" + w.name;
      k.data.points.push_back(point);
      k.sources.push_back({static_cast<int>(p), static_cast<int>(i)});
    }
  }

  FitOptions& options = k.options;
  options.weighting = analysis->request.weighting.value_or(fit_settings.weighting);
  options.loss = fit_settings.loss;
  options.loss_scale = fit_settings.loss_scale;
  options.interval_method = analysis->request.interval_method.value_or(fit_settings.interval);
  options.confidence_level = fit_settings.confidence_level;
  options.bootstrap_resamples = fit_settings.bootstrap_resamples;
  options.bootstrap_scheme = fit_settings.bootstrap_scheme;
  options.bootstrap_seed = fit_settings.bootstrap_seed;

  KineticModel named_model = KineticModel::kMichaelisMenten;
  const bool is_auto = k.requested_model == "auto";
  if (!is_auto && !StringToKineticModel(k.requested_model, &named_model)) {
    k.reason = "unknown model \"" + k.requested_model + "\"";
  } else if (k.data.points.empty()) {
    k.reason = "no sample well has a usable, included rate and a substrate concentration";
  }
  if (!k.reason.empty()) {
    k.warnings.push_back("no kinetic fit: " + k.reason);
  } else {
    k.attempted = true;
    SetDerivedInputs(*analysis, &k, &options);

    std::vector<double> substrate_levels;
    for (const KineticObservation& o : k.data.points) substrate_levels.push_back(o.substrate_uM);
    const int levels = DistinctLevels(substrate_levels);
    const bool inhibitor = k.data.HasInhibitor();

    std::vector<KineticModel> candidates;
    std::string single_reason;
    bool single = !is_auto;
    if (is_auto && inhibitor && levels < 2) {
      // One substrate level: the mode of inhibition cannot be told apart;
      // what the data hold is a dose–response curve.
      single = true;
      named_model = KineticModel::kFourParameterLogistic;
      single_reason = "four-parameter-logistic chosen: the inhibitor series is at one substrate "
                      "level, so the mode of inhibition cannot be told from these data (IC50 only)";
    } else if (!is_auto) {
      single_reason = std::string(KineticModelToString(named_model)) + " named by the user";
    }
    candidates = single ? std::vector<KineticModel>{named_model}
                        : CandidateModels(FamilyForData(k.data));

    CandidateProgress candidate_progress(progress, static_cast<int>(candidates.size()));
    FitOptions run = options;
    if (progress) run.progress = [&](const FitProgress& p) { return candidate_progress(p); };

    if (single) {
      KineticFit fit = FitKineticModel(k.data, named_model, run);
      ModelChoice choice;
      choice.family = FamilyForData(k.data);
      const bool usable = fit.summary.IsSolutionUsable();
      choice.delta_aicc = {usable ? 0.0 : std::numeric_limits<double>::infinity()};
      choice.akaike_weights = {usable ? 1.0 : 0.0};
      choice.chosen = usable;
      choice.preferred = named_model;
      choice.reason = usable ? single_reason
                             : std::string(KineticModelToString(named_model)) +
                                   " could not be fitted: " + fit.summary.message;
      choice.fits.push_back(std::move(fit));
      k.choice = std::move(choice);
    } else {
      k.choice = FitAndChooseModel(k.data, FamilyForData(k.data), run);
      if (!k.choice.chosen) {
        k.choice.reason = "no candidate model could be fitted" +
                          (k.choice.reason.empty() ? std::string() : ": " + k.choice.reason);
      }
    }
    if (!k.choice.chosen) k.warnings.push_back("no kinetic fit usable: " + k.choice.reason);
    if (const KineticFit* preferred = k.choice.Preferred()) {
      for (const FitWarning& w : preferred->warnings) {
        k.warnings.push_back(std::string(KineticModelToString(preferred->model)) + ": " +
                             w.message);
      }
    }
  }
  options.progress = nullptr;
  for (const std::string& w : k.warnings) analysis->warnings.push_back("kinetic fit: " + w);
  analysis->kinetics = std::move(k);
  if (progress) progress(1.0, "fitted");
}

void SetExclusion(Analysis* analysis, int plate, const std::string& well,
                  const std::optional<std::string>& reason) {
  CheckPlateIndex(*analysis, plate);
  const std::string name = NormalisedWell(*analysis, plate, well);
  if (reason && reason->find_first_not_of(" \t\r\n") == std::string::npos) {
    throw std::invalid_argument("excluding " + name + " needs a reason");
  }
  auto& list = analysis->request.exclusions;
  list.erase(std::remove_if(list.begin(), list.end(),
                            [&](const WellExclusion& e) { return e.plate == plate && e.well == name; }),
             list.end());
  if (reason) list.push_back({plate, name, *reason});

  PlateRates& rates = analysis->plate_rates[static_cast<std::size_t>(plate)];
  const auto it = std::find_if(rates.wells.begin(), rates.wells.end(),
                               [&](const WellRate& w) { return w.name == name; });
  if (it == rates.wells.end()) return;  // no data in that well: nothing to mark
  // A blank changes the plate's background; any other well only itself
  // (the pooled coupling lag ignores exclusions, see plate_rates.h).
  if (it->role == WellRole::kBlank) {
    RecomputePlate(analysis, plate, {});
    CollectInputWarnings(analysis);
    for (const std::string& w : analysis->kinetics.warnings) {
      analysis->warnings.push_back("kinetic fit: " + w);
    }
  } else {
    it->excluded = reason.has_value();
    it->exclusion_reason = reason.value_or("");
  }
}

void SetWindow(Analysis* analysis, int plate, const std::string& well,
               const std::optional<std::pair<double, double>>& window_min) {
  CheckPlateIndex(*analysis, plate);
  const std::string name = NormalisedWell(*analysis, plate, well);
  if (window_min) {
    const auto [start, end] = *window_min;
    if (!std::isfinite(start) || !std::isfinite(end) || start < 0.0 || !(start < end)) {
      throw std::invalid_argument("a rate window needs 0 <= start < end (minutes)");
    }
  }
  auto& list = analysis->request.windows;
  list.erase(std::remove_if(list.begin(), list.end(),
                            [&](const WindowOverride& w) { return w.plate == plate && w.well == name; }),
             list.end());
  if (window_min) list.push_back({plate, name, window_min->first, window_min->second});
  RecomputePlate(analysis, plate, {});
  CollectInputWarnings(analysis);
  for (const std::string& w : analysis->kinetics.warnings) {
    analysis->warnings.push_back("kinetic fit: " + w);
  }
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
  KineticModel model;
  if (!request.model.empty() && request.model != "auto" &&
      !StringToKineticModel(request.model, &model)) {
    std::string ids = "auto";
    for (KineticModel m : AllKineticModels()) ids += std::string(", ") + KineticModelToString(m);
    throw InputError("", 0, 0, "unknown model \"" + request.model + "\"; expected one of " + ids);
  }
  for (const WellExclusion& e : request.exclusions) {
    if (e.plate < 0 || e.plate >= static_cast<int>(request.plate_paths.size())) {
      throw InputError("", 0, 0, "an exclusion names plate " + std::to_string(e.plate) +
                                     ", but the analysis has " +
                                     std::to_string(request.plate_paths.size()) + " plates");
    }
  }
  for (const WindowOverride& w : request.windows) {
    if (w.plate < 0 || w.plate >= static_cast<int>(request.plate_paths.size())) {
      throw InputError("", 0, 0, "a rate window names plate " + std::to_string(w.plate) +
                                     ", but the analysis has " +
                                     std::to_string(request.plate_paths.size()) + " plates");
    }
  }
  // Reading takes 10 % of the bar, rates 60 %, the kinetic fit 30 %.
  const double plates = static_cast<double>(request.plate_paths.size());
  for (std::size_t i = 0; i < request.plate_paths.size(); ++i) {
    const std::string& path = request.plate_paths[i];
    if (progress) progress(0.1 * static_cast<double>(i) / plates, "reading " + path);
    analysis.plates.push_back(ReadPlateFile(path, request.read_options));
  }
  analysis.layout = ReadLayoutFile(request.layout_path, analysis.plates.front().geometry);
  analysis.plate_rates.resize(analysis.plates.size());
  for (std::size_t i = 0; i < analysis.plates.size(); ++i) {
    const auto plate_progress = [&](double fraction, const std::string& what) {
      if (progress) progress(0.1 + 0.6 * (static_cast<double>(i) + fraction) / plates, what);
    };
    RecomputePlate(&analysis, static_cast<int>(i), plate_progress);
  }
  CollectInputWarnings(&analysis);
  const auto fit_progress = [&](double fraction, const std::string& what) {
    if (progress) progress(0.7 + 0.3 * fraction, what);
  };
  FitKinetics(&analysis, progress ? ProgressCallback(fit_progress) : ProgressCallback());
  if (progress) progress(1.0, "done");
  return analysis;
}

}  // namespace ratewell
