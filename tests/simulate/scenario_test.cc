// Tests of the scenario format (simulate/scenario.h): the documented example,
// defaults, and malformed scenarios whose messages must name file, line and key.
#include "simulate/scenario.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <string>

#include "fitting/assay_settings.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

using ::testing::HasSubstr;

std::string DataPath(const std::string& name) {
  return std::string(RATEWELL_TEST_DATA_DIR) + "/scenarios/" + name;
}

// A small valid scenario; tests replace one piece of it to break it.
constexpr char kValid[] = R"({
  "run": "valid base [invented]",
  "reads": {"interval_s": 30, "count": 10},
  "kinetics": {"model": "competitive", "vmax_uM_per_min": 12, "km_uM": 40, "ki_uM": 3},
  "design": {"substrate_uM": [10, 40, 160], "inhibitor_uM": [0, 3]}
})";

std::string Replace(std::string text, const std::string& from, const std::string& to) {
  const std::size_t at = text.find(from);
  EXPECT_NE(at, std::string::npos) << from;
  if (at != std::string::npos) text.replace(at, from.size(), to);
  return text;
}

// Parses text expecting an InputError; returns it.
InputError ParseError(const std::string& text) {
  try {
    ParseScenario(text, "bad.json");
  } catch (const InputError& error) {
    return error;
  }
  ADD_FAILURE() << "no InputError for:\n" << text;
  return InputError("", 0, 0, "");
}

TEST(Scenario, DocumentedExampleFileIsReadCompletely) {
  const Scenario s = ReadScenarioFile(DataPath("full_96.json"));
  EXPECT_EQ(s.run, "RK-1 lot 7 with RWI-4 (invented)");
  EXPECT_EQ(s.lab, "Bench 3, an invented lab");
  EXPECT_EQ(s.geometry, (PlateGeometry{8, 12}));
  EXPECT_EQ(s.file_stem, "rk1-lot7");
  EXPECT_FALSE(s.fill_by_columns);
  EXPECT_EQ(s.reads.interval_s, 30.0);
  EXPECT_EQ(s.reads.count, 21);
  EXPECT_EQ(s.reads.start_delay_s, 20.0);
  ASSERT_TRUE(s.reads.temperature_C.has_value());
  EXPECT_EQ(*s.reads.temperature_C, 25.0);

  ASSERT_EQ(s.files.size(), 7u);
  EXPECT_EQ(s.files[0].file_name, "rk1-lot7_long.csv");
  EXPECT_EQ(s.files[1].file_name, "rk1-lot7_wide.csv");
  EXPECT_EQ(s.files[2].file_name, "rk1-lot7_grid.csv");
  EXPECT_EQ(s.files[3].file_name, "rk1-lot7_long.xlsx");
  EXPECT_TRUE(s.files[3].xlsx);
  EXPECT_EQ(s.files[4].file_name, "rk1_grid_eu.csv");
  EXPECT_EQ(s.files[4].text.delimiter, ';');
  EXPECT_TRUE(s.files[4].text.decimal_comma);
  EXPECT_TRUE(s.files[4].text.crlf);
  EXPECT_TRUE(s.files[4].text.utf8_bom);
  // A second long file gets the next free name; tab-separated text is .txt.
  EXPECT_EQ(s.files[5].file_name, "rk1-lot7_long.txt");
  EXPECT_EQ(s.files[5].table.time_style, TimeStyle::kMinutes);
  EXPECT_EQ(s.files[6].file_name, "rk1-lot7_grid.xlsx");
  EXPECT_EQ(s.files[6].table.layout, TableLayout::kGrid);

  EXPECT_EQ(s.detection.epsilon_per_M_cm, 6220.0);
  EXPECT_EQ(s.extra_wavelengths_nm, std::vector<double>({405.0}));
  ASSERT_TRUE(s.pathlength.volume_uL.has_value());
  // 200 µL over 0.32 cm² = 0.2 cm³ / 0.32 cm² = 0.625 cm.
  EXPECT_DOUBLE_EQ(s.pathlength.NominalCm(), 0.625);
  EXPECT_EQ(s.pathlength.spread_percent, 2.0);
  EXPECT_TRUE(s.pathlength.water_peak);
  EXPECT_EQ(s.pathlength.water_k_per_cm, 0.18);
  EXPECT_EQ(s.pathlength.assay_mode, PathlengthMode::kWaterPeak);
  EXPECT_EQ(s.nadh_uM, 250.0);

  EXPECT_EQ(s.kinetics.model, RateLaw::kMixed);
  ASSERT_TRUE(s.kinetics.kcat_per_s.has_value());
  // Vmax = kcat × 60 s/min × [E]: 12 s⁻¹ × 60 × 0.005 µM = 3.6 µM/min.
  EXPECT_DOUBLE_EQ(s.kinetics.vmax_uM_per_min, 3.6);
  EXPECT_EQ(s.kinetics.km_uM, 40.0);
  EXPECT_EQ(s.kinetics.ki_uM, 3.0);
  EXPECT_EQ(s.kinetics.alpha, 4.0);
  EXPECT_EQ(s.coupling_tau_min, 0.4);
  EXPECT_EQ(s.blank_drift_A_per_min, -0.0004);
  EXPECT_EQ(s.noise_sd_A, 0.002);
  EXPECT_EQ(s.seed, 20240611u);
  EXPECT_EQ(s.detector.ceiling_A, 3.0);
  EXPECT_EQ(s.design.inhibitor_uM, std::vector<double>({0.0, 2.0, 6.0}));
  EXPECT_EQ(s.design.replicates, 2);
  EXPECT_EQ(s.design.saturating_wells, 2);
  EXPECT_EQ(s.design.saturating_start_A, 3.5);
  EXPECT_EQ(s.analysis.blank, BlankMode::kMatched);
}

TEST(Scenario, MinimalScenarioTakesTheDocumentedDefaults) {
  const Scenario s = ReadScenarioFile(DataPath("minimal.json"));
  EXPECT_EQ(s.geometry, (PlateGeometry{8, 12}));
  EXPECT_EQ(s.file_stem, "plate");
  ASSERT_EQ(s.files.size(), 1u);
  EXPECT_EQ(s.files[0].file_name, "plate_long.csv");
  EXPECT_EQ(s.files[0].table.layout, TableLayout::kLong);
  EXPECT_EQ(s.reads.start_delay_s, 0.0);
  EXPECT_FALSE(s.reads.temperature_C.has_value());
  EXPECT_EQ(s.detection.wavelength_nm, 340.0);
  EXPECT_EQ(s.pathlength.NominalCm(), 1.0);
  EXPECT_EQ(s.pathlength.assay_mode, PathlengthMode::kFixed);
  EXPECT_EQ(s.nadh_uM, 200.0);
  EXPECT_FALSE(s.enzyme.known());
  EXPECT_EQ(s.coupling_tau_min, 0.0);
  EXPECT_EQ(s.noise_sd_A, 0.0);
  EXPECT_EQ(s.seed, 1u);
  EXPECT_EQ(s.detector.overflow_marker, "OVER");
  EXPECT_EQ(s.design.inhibitor_uM, std::vector<double>({0.0}));
  EXPECT_EQ(s.design.replicates, 1);
}

TEST(Scenario, EnzymeByMassGivesVmaxFromKcat) {
  // 0.00026 mg/mL of a 52000 Da enzyme = 0.00026 g/L / 52000 g/mol = 5 nM;
  // kcat 10 s⁻¹ → Vmax = 10 × 60 × 0.005 µM = 3 µM/min.
  const std::string text =
      Replace(Replace(kValid, R"("vmax_uM_per_min": 12)", R"("kcat_per_s": 10)"), R"("run")",
              R"("enzyme": {"mg_per_mL": 0.00026, "molar_mass_Da": 52000}, "run")");
  const Scenario s = ParseScenario(text, "mass.json");
  EXPECT_NEAR(s.kinetics.vmax_uM_per_min, 3.0, 1e-12);  // rounding of 0.00026/52000 only
}

TEST(Scenario, AssaySettingsForTheScenarioParseBackUnchanged) {
  const Scenario s = ReadScenarioFile(DataPath("full_96.json"));
  const AssaySettings settings = s.ToAssaySettings();
  EXPECT_EQ(settings.pathlength.mode, PathlengthMode::kWaterPeak);
  EXPECT_EQ(settings.pathlength.k_per_cm, 0.18);
  ASSERT_TRUE(settings.enzyme.nM.has_value());
  EXPECT_EQ(*settings.enzyme.nM, 5.0);
  EXPECT_EQ(settings.blank, BlankMode::kMatched);
  std::string error;
  EXPECT_TRUE(settings.IsValid(&error)) << error;
  EXPECT_EQ(ParseAssaySettings(AssaySettingsToJson(settings).dump(), "ASSAY.json"), settings);
}

TEST(Scenario, ValidBaseParses) {
  const Scenario s = ParseScenario(kValid, "base.json");
  EXPECT_EQ(s.kinetics.model, RateLaw::kCompetitive);
  EXPECT_EQ(s.source, "base.json");
}

// ---------------------------------------------------------------------------
// Malformed scenarios: each message names the file, the line and column of
// the key, the key path and what was expected.

TEST(ScenarioErrors, UnknownKeySuggestsTheNearestOne) {
  const InputError e = ParseError(Replace(kValid, R"("km_uM": 40)", R"("kmu_M": 40)"));
  EXPECT_EQ(e.file(), "bad.json");
  EXPECT_EQ(e.line(), 4);
  EXPECT_EQ(e.column(), 63);
  EXPECT_THAT(e.reason(), HasSubstr("kinetics.kmu_M: unknown key (did you mean \"km_uM\"?)"));
  EXPECT_THAT(std::string(e.what()), HasSubstr("bad.json:4:63:"));
}

TEST(ScenarioErrors, MissingRequiredKeyIsNamedAtItsParent) {
  const InputError e = ParseError(Replace(kValid, R"("interval_s": 30, )", ""));
  EXPECT_EQ(e.line(), 3);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), HasSubstr("reads: missing key \"interval_s\""));
}

TEST(ScenarioErrors, WrongTypeSaysWhatWasExpected) {
  const InputError e = ParseError(Replace(kValid, R"("count": 10)", R"("count": "ten")"));
  EXPECT_EQ(e.line(), 3);
  EXPECT_THAT(e.reason(), HasSubstr("reads.count: expected a whole number, got string"));
}

TEST(ScenarioErrors, FractionalCountIsRejected) {
  const InputError e = ParseError(Replace(kValid, R"("count": 10)", R"("count": 10.5)"));
  EXPECT_THAT(e.reason(), HasSubstr("reads.count: expected a whole number, got a fraction"));
}

TEST(ScenarioErrors, NegativeNoiseIsOutOfRange) {
  const InputError e = ParseError(Replace(kValid, R"("run")", "\"noise_sd_A\": -0.01,\n  \"run\""));
  EXPECT_EQ(e.line(), 2);
  EXPECT_THAT(e.reason(),
              HasSubstr("noise_sd_A: expected an absorbance SD from 0 to 1, got -0.01"));
}

TEST(ScenarioErrors, ParameterOfAnotherModelIsRejected) {
  const InputError e = ParseError(Replace(kValid, R"("ki_uM": 3)", R"("ki_uM": 3, "ksi_uM": 900)"));
  EXPECT_EQ(e.line(), 4);
  EXPECT_THAT(e.reason(), HasSubstr("kinetics.ksi_uM: not a parameter of model \"competitive\""));
}

TEST(ScenarioErrors, MissingModelParameterIsNamed) {
  const InputError e = ParseError(Replace(kValid, R"(, "ki_uM": 3)", ""));
  EXPECT_THAT(e.reason(), HasSubstr("kinetics: missing key \"ki_uM\""));
}

TEST(ScenarioErrors, UnknownModelListsTheKnownOnes) {
  const InputError e =
      ParseError(Replace(kValid, R"("model": "competitive")", R"("model": "ping-pong")"));
  EXPECT_THAT(e.reason(), HasSubstr("kinetics.model: unknown model \"ping-pong\""));
  EXPECT_THAT(e.reason(), HasSubstr("michaelis-menten, substrate-inhibition, hill"));
}

TEST(ScenarioErrors, KcatNeedsTheEnzymeMolarConcentration) {
  const InputError e =
      ParseError(Replace(kValid, R"("vmax_uM_per_min": 12)", R"("kcat_per_s": 12)"));
  EXPECT_THAT(e.reason(), HasSubstr("kinetics.kcat_per_s: needs the enzyme's molar concentration"));
}

TEST(ScenarioErrors, BothVmaxAndKcatAreRejected) {
  const InputError e = ParseError(
      Replace(kValid, R"("vmax_uM_per_min": 12)", R"("vmax_uM_per_min": 12, "kcat_per_s": 1)"));
  EXPECT_THAT(e.reason(), HasSubstr("give exactly one of \"vmax_uM_per_min\""));
}

TEST(ScenarioErrors, DesignLargerThanThePlateIsRejected) {
  const InputError e = ParseError(
      Replace(kValid, R"("inhibitor_uM": [0, 3])", R"("inhibitor_uM": [0, 3], "replicates": 17)"));
  EXPECT_EQ(e.line(), 5);
  EXPECT_EQ(e.column(), 3);
  // 2 inhibitor levels × 17 replicates = 34 series of 3, four to a row: the
  // last two fill I01-I06, wells 97-102 of a 96-well plate.
  EXPECT_THAT(e.reason(), HasSubstr("design: the design needs 102 wells"));
  EXPECT_THAT(e.reason(), HasSubstr("more than the 96 wells of the plate"));
}

TEST(ScenarioErrors, DecimalCommaNeedsAnotherDelimiter) {
  const InputError e = ParseError(
      Replace(kValid, R"("run")",
              "\"files\": [{\"format\": \"grid\", \"decimal_comma\": true}],\n  \"run\""));
  EXPECT_EQ(e.line(), 2);
  EXPECT_THAT(e.reason(), HasSubstr("files[0].decimal_comma: a decimal comma needs"));
}

TEST(ScenarioErrors, UnknownFileFormatIsNamed) {
  const InputError e =
      ParseError(Replace(kValid, R"("run")", "\"files\": [\"long\", \"xls\"],\n  \"run\""));
  EXPECT_EQ(e.line(), 2);
  EXPECT_EQ(e.column(), 21);
  EXPECT_THAT(e.reason(), HasSubstr("files[1]: unknown file format \"xls\""));
}

TEST(ScenarioErrors, OutputNamesMustBePlainAndNotTaken) {
  EXPECT_THAT(ParseError(Replace(kValid, R"("run")",
                                 "\"files\": [{\"format\": \"long\", \"name\": \"../x.csv\"}], "
                                 "\"run\""))
                  .reason(),
              HasSubstr("files[0].name: expected a plain file name"));
  EXPECT_THAT(ParseError(Replace(kValid, R"("run")",
                                 "\"files\": [{\"format\": \"long\", \"name\": \"truth.json\"}], "
                                 "\"run\""))
                  .reason(),
              HasSubstr("already used by another output file"));
}

TEST(ScenarioErrors, RepeatedKeyIsRejectedAtTheSecondOne) {
  const InputError e = ParseError(Replace(kValid, R"("count": 10)", R"("count": 10, "count": 12)"));
  EXPECT_EQ(e.line(), 3);
  EXPECT_EQ(e.column(), 44);
  EXPECT_THAT(e.reason(), HasSubstr("\"count\" is written twice"));
}

TEST(ScenarioErrors, SyntaxErrorGivesTheSpot) {
  // The comma after the reads object is missing: the parser stops at the
  // next key, line 4 column 3.
  const InputError e = ParseError(Replace(kValid, R"("count": 10},)", R"("count": 10})"));
  EXPECT_EQ(e.line(), 4);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), HasSubstr("not valid JSON"));
}

TEST(ScenarioErrors, NumberTooLargeForADoubleIsNamed) {
  const InputError e =
      ParseError(Replace(kValid, R"("run")", "\"seed\": 20e240611,\n  \"run\""));
  EXPECT_EQ(e.line(), 2);
  EXPECT_EQ(e.column(), 11);
  EXPECT_THAT(e.reason(), HasSubstr("a number too large for a double"));
}

TEST(ScenarioErrors, PathlengthTwoWaysIsRejected) {
  const InputError e = ParseError(Replace(
      kValid, R"("run")",
      "\"pathlength\": {\"cm\": 0.5, \"volume_uL\": 200, \"well_area_cm2\": 0.32},\n  \"run\""));
  EXPECT_THAT(e.reason(), HasSubstr("pathlength.cm: give either \"cm\" or \"volume_uL\""));
}

TEST(ScenarioErrors, WaterPeakModeNeedsWaterPeakChannels) {
  const InputError e = ParseError(
      Replace(kValid, R"("run")",
              "\"pathlength\": {\"cm\": 0.5, \"assay_mode\": \"water-peak\"},\n  \"run\""));
  EXPECT_THAT(e.reason(), HasSubstr("pathlength.assay_mode: \"water-peak\" needs"));
}

TEST(ScenarioErrors, ClashingWavelengthsAreRejected) {
  const InputError e =
      ParseError(Replace(kValid, R"("run")", "\"extra_wavelengths_nm\": [340.2],\n  \"run\""));
  EXPECT_THAT(e.reason(), HasSubstr("extra_wavelengths_nm[0]: wavelength 340.2 nm is already"));
}

TEST(ScenarioErrors, EmptyFileAndMissingFileAreClear) {
  EXPECT_THAT(ParseError("  \n").reason(), HasSubstr("the scenario file is empty"));
  try {
    ReadScenarioFile(DataPath("no_such_scenario.json"));
    ADD_FAILURE() << "no error for a missing file";
  } catch (const InputError& e) {
    EXPECT_THAT(e.reason(), HasSubstr("cannot open the scenario file"));
    EXPECT_THAT(e.file(), HasSubstr("no_such_scenario.json"));
  }
}

TEST(ScenarioErrors, TopLevelMustBeAnObject) {
  EXPECT_THAT(ParseError("[1, 2]").reason(), HasSubstr("top level: expected an object"));
}

}  // namespace
}  // namespace ratewell
