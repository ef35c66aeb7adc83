// The whole analysis on the bundled demo plates: the kinetic fit is wired
// to the well rates, and the user's decisions (excluded wells, rate windows)
// give the same numbers whether made one at a time (as the window does) or
// replayed from a saved request (as a reloaded analysis does).
//
// The demo plates were made by `ratewell simulate` from scenarios of our own
// (demo-plates/*/truth.json holds the truth); what is asserted here is
// consistency and bookkeeping, the accuracy against truth is checked by
// tests/cli/demo_test.cc and the fitting references by the NIST, Puromycin
// and SciPy tests.
#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "fitting/analysis.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

namespace fs = std::filesystem;

fs::path Demo(const std::string& experiment) {
  return fs::path(RATEWELL_TEST_DATA_DIR).parent_path().parent_path() / "demo-plates" / experiment;
}

AnalysisRequest MutaseRequest() {
  AnalysisRequest request;
  request.plate_paths = {(Demo("mut7-mutase") / "mut7_wide.txt").string()};
  request.layout_path = (Demo("mut7-mutase") / "layout.csv").string();
  request.assay_path = (Demo("mut7-mutase") / "ASSAY.json").string();
  // Asymptotic intervals keep these consistency tests fast; the interval
  // method does not change the bookkeeping under test.
  request.interval_method = IntervalMethod::kAsymptotic;
  return request;
}

const WellRate& FindWell(const Analysis& a, const std::string& name, int plate = 0) {
  for (const WellRate& w : a.plate_rates[static_cast<std::size_t>(plate)].wells) {
    if (w.name == name) return w;
  }
  throw std::runtime_error("no well " + name);
}

double PreferredValue(const Analysis& a, const std::string& parameter) {
  const KineticFit* fit = a.kinetics.choice.Preferred();
  if (fit == nullptr) return NAN;
  const ParameterEstimate* p = fit->Find(parameter);
  return p ? p->value : NAN;
}

TEST(Analysis, FitsEveryUsableSampleWellAndPrefersTheScenarioModel) {
  const Analysis a = RunAnalysis(MutaseRequest());
  ASSERT_TRUE(a.kinetics.attempted) << a.kinetics.reason;
  EXPECT_EQ(static_cast<int>(a.kinetics.data.points.size()), a.UsableSampleWells());
  ASSERT_EQ(a.kinetics.sources.size(), a.kinetics.data.points.size());
  // Every point is the rate of the well it says it came from.
  for (std::size_t i = 0; i < a.kinetics.sources.size(); ++i) {
    const auto& s = a.kinetics.sources[i];
    const WellRate& w = a.plate_rates[static_cast<std::size_t>(s.plate)]
                            .wells[static_cast<std::size_t>(s.well)];
    EXPECT_EQ(a.kinetics.data.points[i].rate, w.rate_uM_per_min);
    EXPECT_EQ(a.kinetics.data.points[i].substrate_uM, w.substrate_uM);
    EXPECT_EQ(w.role, WellRole::kSample);
  }
  // The mutase scenario is substrate-inhibition (truth.json), three candidates.
  EXPECT_EQ(a.kinetics.choice.fits.size(), 3u);
  ASSERT_NE(a.kinetics.choice.Preferred(), nullptr) << a.kinetics.choice.reason;
  EXPECT_EQ(a.kinetics.choice.preferred, KineticModel::kSubstrateInhibition);
  // The enzyme amount is known (ASSAY.json): kcat is derived.
  EXPECT_NE(a.kinetics.choice.Preferred()->Find("Vmax"), nullptr);
  bool has_kcat = false;
  for (const ParameterEstimate& d : a.kinetics.choice.Preferred()->derived) {
    if (d.name == "kcat") has_kcat = true;
  }
  EXPECT_TRUE(has_kcat);
}

TEST(Analysis, ExcludingAWellOneStepAtATimeMatchesReplayingTheRequest) {
  Analysis stepwise = RunAnalysis(MutaseRequest());
  const double km_before = PreferredValue(stepwise, "Km");
  const std::size_t n_before = stepwise.kinetics.data.points.size();
  SetExclusion(&stepwise, 0, "a5", std::string("pipetting error"));  // any accepted spelling
  FitKinetics(&stepwise);
  EXPECT_EQ(stepwise.kinetics.data.points.size(), n_before - 1);
  EXPECT_TRUE(FindWell(stepwise, "A05").excluded);
  EXPECT_EQ(FindWell(stepwise, "A05").exclusion_reason, "pipetting error");
  ASSERT_EQ(stepwise.request.exclusions.size(), 1u);
  EXPECT_EQ(stepwise.request.exclusions[0].well, "A05");
  EXPECT_NE(PreferredValue(stepwise, "Km"), km_before);

  AnalysisRequest replay = MutaseRequest();
  replay.exclusions = {{0, "A05", "pipetting error"}};
  const Analysis replayed = RunAnalysis(replay);
  // Same inputs, same decisions: the same numbers to the last bit.
  EXPECT_EQ(PreferredValue(replayed, "Km"), PreferredValue(stepwise, "Km"));
  EXPECT_EQ(PreferredValue(replayed, "Vmax"), PreferredValue(stepwise, "Vmax"));

  // Restoring the well restores the original numbers exactly.
  SetExclusion(&stepwise, 0, "A05", std::nullopt);
  FitKinetics(&stepwise);
  EXPECT_TRUE(stepwise.request.exclusions.empty());
  EXPECT_FALSE(FindWell(stepwise, "A05").excluded);
  EXPECT_EQ(PreferredValue(stepwise, "Km"), km_before);
}

TEST(Analysis, AUserWindowChangesThatWellAndMatchesReplayingTheRequest) {
  Analysis stepwise = RunAnalysis(MutaseRequest());
  const WellRate before = FindWell(stepwise, "A03");
  const double other_before = FindWell(stepwise, "A07").rate_uM_per_min;
  SetWindow(&stepwise, 0, "A03", std::make_pair(2.0, 6.0));
  FitKinetics(&stepwise);
  const WellRate& after = FindWell(stepwise, "A03");
  ASSERT_TRUE(after.HasRate());
  EXPECT_NE(after.rate_uM_per_min, before.rate_uM_per_min);
  // The window is counted from the first read; the estimate reports it on
  // the reader's clock, so compare its length.
  EXPECT_LE(after.estimate.window_end_min - after.estimate.window_start_min, 4.0 + 1e-9);
  EXPECT_NE(std::find(after.flags.begin(), after.flags.end(), "user-window"), after.flags.end());
  // Another well keeps its rate (the plate's blank and pooled lag do not move).
  EXPECT_EQ(FindWell(stepwise, "A07").rate_uM_per_min, other_before);

  AnalysisRequest replay = MutaseRequest();
  replay.windows = {{0, "A03", 2.0, 6.0}};
  const Analysis replayed = RunAnalysis(replay);
  EXPECT_EQ(FindWell(replayed, "A03").rate_uM_per_min, after.rate_uM_per_min);
  EXPECT_EQ(PreferredValue(replayed, "Km"), PreferredValue(stepwise, "Km"));

  SetWindow(&stepwise, 0, "A03", std::nullopt);
  EXPECT_EQ(FindWell(stepwise, "A03").rate_uM_per_min, before.rate_uM_per_min);
}

TEST(Analysis, ExcludingABlankMovesTheBackgroundOfTheSamples) {
  Analysis a = RunAnalysis(MutaseRequest());
  std::string blank;
  int blanks = 0;
  for (const WellRate& w : a.plate_rates[0].wells) {
    if (w.role == WellRole::kBlank && w.HasRate()) {
      if (blank.empty()) blank = w.name;
      ++blanks;
    }
  }
  ASSERT_GE(blanks, 2) << "the mutase demo plate has several blank wells";
  const int used_before = a.plate_rates[0].blank_wells_used;
  SetExclusion(&a, 0, blank, std::string("bubble or meniscus artefact"));
  EXPECT_EQ(a.plate_rates[0].blank_wells_used, used_before - 1);
  EXPECT_TRUE(FindWell(a, blank).excluded);
}

TEST(Analysis, AnInhibitorSeriesAtOneSubstrateLevelIsFittedAsADoseResponse) {
  // Keep only the wells of the 384-well matrix at one substrate level.
  const fs::path folder = fs::temp_directory_path() / "ratewell-analysis-one-level";
  fs::create_directories(folder);
  std::ifstream in(Demo("cbx-inhibitor-series") / "layout.csv");
  std::ofstream out(folder / "layout.csv");
  std::string line;
  int kept = 0;
  while (std::getline(in, line)) {
    std::stringstream fields(line);
    std::string well, role, substrate;
    std::getline(fields, well, ',');
    std::getline(fields, role, ',');
    std::getline(fields, substrate, ',');
    if (role == "sample" && substrate != "120") continue;
    if (role == "sample") ++kept;
    out << line << "\n";
  }
  out.close();
  ASSERT_GE(kept, 8);
  AnalysisRequest request;
  request.plate_paths = {(Demo("cbx-inhibitor-series") / "cbx214_grid.csv").string()};
  request.layout_path = (folder / "layout.csv").string();
  request.assay_path = (Demo("cbx-inhibitor-series") / "ASSAY.json").string();
  request.interval_method = IntervalMethod::kAsymptotic;
  const Analysis a = RunAnalysis(request);
  ASSERT_TRUE(a.kinetics.attempted);
  ASSERT_EQ(a.kinetics.choice.fits.size(), 1u);
  EXPECT_EQ(a.kinetics.choice.fits[0].model, KineticModel::kFourParameterLogistic);
  EXPECT_NE(a.kinetics.choice.reason.find("one substrate level"), std::string::npos)
      << a.kinetics.choice.reason;
  fs::remove_all(folder);
}

TEST(Analysis, SaysWhyThereIsNoFitWhenNoSampleWellIsUsable) {
  AnalysisRequest request = MutaseRequest();
  Analysis a = RunAnalysis(request);
  for (const WellRate& w : std::vector<WellRate>(a.plate_rates[0].wells)) {
    if (w.role == WellRole::kSample) SetExclusion(&a, 0, w.name, std::string("test"));
  }
  FitKinetics(&a);
  EXPECT_FALSE(a.kinetics.attempted);
  EXPECT_NE(a.kinetics.reason.find("no sample well"), std::string::npos) << a.kinetics.reason;
  EXPECT_EQ(a.kinetics.choice.Preferred(), nullptr);
  bool warned = false;
  for (const std::string& w : a.warnings) {
    if (w.find("no kinetic fit") != std::string::npos) warned = true;
  }
  EXPECT_TRUE(warned);
}

TEST(Analysis, RejectsAnUnknownWellOrPlateAndAnEmptyReason) {
  Analysis a = RunAnalysis(MutaseRequest());
  EXPECT_THROW(SetExclusion(&a, 0, "Q99", std::string("x")), std::invalid_argument);
  EXPECT_THROW(SetExclusion(&a, 1, "A01", std::string("x")), std::invalid_argument);
  EXPECT_THROW(SetExclusion(&a, 0, "A01", std::string("  ")), std::invalid_argument);
  EXPECT_THROW(SetWindow(&a, 0, "A01", std::make_pair(5.0, 2.0)), std::invalid_argument);
  AnalysisRequest request = MutaseRequest();
  request.model = "michaelis";
  EXPECT_THROW(RunAnalysis(request), InputError);
}

}  // namespace
}  // namespace ratewell
