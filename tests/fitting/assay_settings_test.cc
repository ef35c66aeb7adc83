#include "fitting/assay_settings.h"

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <limits>
#include <string>
#include <vector>

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include "importers/input_error.h"

namespace ratewell {
namespace {

using ::testing::AllOf;
using ::testing::HasSubstr;

const std::string kTestDataDir = RATEWELL_TEST_DATA_DIR;
const std::string kFile = "ASSAY-under-test.json";

// Runs the parser on text and returns the InputError it must throw.
InputError ParseError(const std::string& text) {
  try {
    ParseAssaySettings(text, kFile);
  } catch (const InputError& error) {
    return error;
  }
  ADD_FAILURE() << "no InputError for:\n" << text;
  return InputError("", 0, 0, "");
}

// ---------------------------------------------------------------------------
// Defaults and names.

TEST(AssaySettings, DefaultsAreThoseOfTheDesignContract) {
  // DESIGN §4, "Assay settings (ASSAY.json)": the values analyze uses without a file.
  const AssaySettings settings;
  EXPECT_EQ(settings.detection.species, "NADH");
  EXPECT_EQ(settings.detection.wavelength_nm, 340.0);
  // Horecker & Kornberg 1948: ε340(NADH) = 6220 M⁻¹cm⁻¹.
  EXPECT_EQ(settings.detection.epsilon_per_M_cm, 6220.0);
  EXPECT_EQ(settings.detection.direction, DetectionDirection::kConsumed);
  EXPECT_EQ(settings.detection.per_turnover, 1.0);
  EXPECT_EQ(settings.pathlength.mode, PathlengthMode::kFixed);
  EXPECT_EQ(settings.pathlength.cm, 1.0);
  // Water-peak defaults: 977 / 900 nm and k = 0.18 per cm (common practice, from memory).
  EXPECT_EQ(settings.pathlength.sample_nm, 977.0);
  EXPECT_EQ(settings.pathlength.reference_nm, 900.0);
  EXPECT_EQ(settings.pathlength.k_per_cm, 0.18);
  EXPECT_FALSE(settings.pathlength.volume_uL.has_value());
  EXPECT_FALSE(settings.pathlength.well_area_cm2.has_value());
  EXPECT_FALSE(settings.enzyme.known());
  EXPECT_FALSE(settings.enzyme.Nanomolar().has_value());
  EXPECT_EQ(settings.rate.method, RateMethod::kAuto);
  EXPECT_FALSE(settings.rate.window_min.has_value());
  EXPECT_EQ(settings.blank, BlankMode::kPlateMean);
  EXPECT_EQ(settings.absorbance_ceiling, 2.5);        // common practice
  EXPECT_EQ(settings.max_substrate_consumed, 0.10);   // common practice
}

TEST(AssaySettings, DefaultSettingsAreValid) {
  std::string error = "untouched";
  EXPECT_TRUE(AssaySettings().IsValid(&error));
  EXPECT_EQ(error, "untouched");
  EXPECT_TRUE(AssaySettings().IsValid(nullptr));
}

TEST(AssaySettings, EmptyObjectGivesTheDefaults) {
  EXPECT_EQ(ParseAssaySettings("{}", kFile), AssaySettings());
  EXPECT_EQ(ParseAssaySettings("  \n{ }\n", kFile), AssaySettings());
  // A UTF-8 byte order mark is allowed.
  EXPECT_EQ(ParseAssaySettings("\xEF\xBB\xBF{}", kFile), AssaySettings());
}

TEST(AssaySettings, EnumNamesRoundTrip) {
  for (DetectionDirection value : {DetectionDirection::kConsumed, DetectionDirection::kFormed}) {
    DetectionDirection parsed = value == DetectionDirection::kConsumed
                                    ? DetectionDirection::kFormed
                                    : DetectionDirection::kConsumed;
    ASSERT_TRUE(StringToDetectionDirection(DetectionDirectionToString(value), &parsed));
    EXPECT_EQ(parsed, value);
  }
  for (PathlengthMode value : {PathlengthMode::kFixed, PathlengthMode::kGeometry,
                               PathlengthMode::kWaterPeak, PathlengthMode::kStandards}) {
    PathlengthMode parsed = value == PathlengthMode::kFixed ? PathlengthMode::kStandards
                                                            : PathlengthMode::kFixed;
    ASSERT_TRUE(StringToPathlengthMode(PathlengthModeToString(value), &parsed));
    EXPECT_EQ(parsed, value);
  }
  for (RateMethod value :
       {RateMethod::kAuto, RateMethod::kLinear, RateMethod::kLag, RateMethod::kProgress}) {
    RateMethod parsed = value == RateMethod::kAuto ? RateMethod::kLag : RateMethod::kAuto;
    ASSERT_TRUE(StringToRateMethod(RateMethodToString(value), &parsed));
    EXPECT_EQ(parsed, value);
  }
  for (BlankMode value : {BlankMode::kPlateMean, BlankMode::kMatched, BlankMode::kNone}) {
    BlankMode parsed = value == BlankMode::kNone ? BlankMode::kMatched : BlankMode::kNone;
    ASSERT_TRUE(StringToBlankMode(BlankModeToString(value), &parsed));
    EXPECT_EQ(parsed, value);
  }
}

TEST(AssaySettings, EnumNamesAreTheFileSpellings) {
  // DESIGN §4 spellings.
  EXPECT_STREQ(DetectionDirectionToString(DetectionDirection::kConsumed), "consumed");
  EXPECT_STREQ(DetectionDirectionToString(DetectionDirection::kFormed), "formed");
  EXPECT_STREQ(PathlengthModeToString(PathlengthMode::kWaterPeak), "water-peak");
  EXPECT_STREQ(PathlengthModeToString(PathlengthMode::kStandards), "standards");
  EXPECT_STREQ(RateMethodToString(RateMethod::kProgress), "progress");
  EXPECT_STREQ(BlankModeToString(BlankMode::kPlateMean), "plate-mean");
}

TEST(AssaySettings, UnknownEnumNamesAreRejectedAndLeaveTheValue) {
  PathlengthMode mode = PathlengthMode::kGeometry;
  EXPECT_FALSE(StringToPathlengthMode("Water-Peak", &mode));
  EXPECT_FALSE(StringToPathlengthMode("", &mode));
  EXPECT_EQ(mode, PathlengthMode::kGeometry);
  BlankMode blank = BlankMode::kNone;
  EXPECT_FALSE(StringToBlankMode("mean", &blank));
  EXPECT_EQ(blank, BlankMode::kNone);
  DetectionDirection direction = DetectionDirection::kFormed;
  EXPECT_FALSE(StringToDetectionDirection("falls", &direction));
  RateMethod method = RateMethod::kLinear;
  EXPECT_FALSE(StringToRateMethod("automatic", &method));
  EXPECT_EQ(method, RateMethod::kLinear);
}

// ---------------------------------------------------------------------------
// IsValid on settings built in code.

TEST(AssaySettings, IsValidNamesTheKeyOfTheFirstProblem) {
  std::string error;
  AssaySettings settings;
  settings.detection.epsilon_per_M_cm = -6220.0;
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("detection.epsilon_per_M_cm"));

  settings = AssaySettings();
  settings.detection.per_turnover = 0.0;
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("detection.per_turnover"));

  settings = AssaySettings();
  settings.pathlength.cm = std::numeric_limits<double>::quiet_NaN();
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("pathlength.cm"));

  settings = AssaySettings();
  settings.pathlength.cm = 5.0;  // not a microplate well (limit kMaxSensiblePathlengthCm)
  EXPECT_FALSE(settings.IsValid(&error));

  settings = AssaySettings();
  settings.pathlength.mode = PathlengthMode::kGeometry;
  settings.pathlength.volume_uL = 200.0;
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("pathlength.well_area_cm2"));
  settings.pathlength.well_area_cm2 = 0.32;
  EXPECT_TRUE(settings.IsValid(&error)) << error;
  // 200 µL over 0.0032 cm² would be 62.5 cm: an area given in the wrong unit.
  settings.pathlength.well_area_cm2 = 0.0032;
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("62.5 cm"));

  settings = AssaySettings();
  settings.pathlength.mode = PathlengthMode::kWaterPeak;
  settings.pathlength.reference_nm = 977.0;
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("pathlength.reference_nm"));

  settings = AssaySettings();
  settings.rate.window_min = std::make_pair(3.0, 3.0);
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("rate.window_min"));

  settings = AssaySettings();
  settings.max_substrate_consumed = 1.0;
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("max_substrate_consumed"));

  settings = AssaySettings();
  settings.absorbance_ceiling = 0.0;
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("absorbance_ceiling"));

  settings = AssaySettings();
  settings.detection.species.clear();
  EXPECT_FALSE(settings.IsValid(&error));
  EXPECT_THAT(error, HasSubstr("detection.species"));
}

TEST(AssaySettings, EnzymeAmountConvertsBetweenMolarAndMass) {
  AssaySettings::Enzyme enzyme;
  enzyme.mg_per_mL = 0.0002;
  enzyme.molar_mass_Da = 52000.0;
  // mg/mL = g/L; 0.0002 g/L ÷ 52000 g/mol = 3.846e-9 M = 3.846 nM.
  constexpr double kRelative = 1e-14;  // one division and one product in double
  ASSERT_TRUE(enzyme.Nanomolar().has_value());
  EXPECT_NEAR(*enzyme.Nanomolar(), 0.0002 / 52000.0 * 1e9, kRelative * 3.85);
  EXPECT_NEAR(*enzyme.Nanomolar(), 3.8461538461538463, kRelative * 3.85);
  ASSERT_TRUE(enzyme.MilligramsPerMillilitre().has_value());
  EXPECT_EQ(*enzyme.MilligramsPerMillilitre(), 0.0002);

  AssaySettings::Enzyme molar;
  molar.nM = 5.0;
  EXPECT_EQ(*molar.Nanomolar(), 5.0);
  EXPECT_FALSE(molar.MilligramsPerMillilitre().has_value());
  molar.molar_mass_Da = 50000.0;
  // 5 nM × 50000 g/mol = 2.5e-4 g/L = 2.5e-4 mg/mL.
  EXPECT_NEAR(*molar.MilligramsPerMillilitre(), 2.5e-4, kRelative * 2.5e-4);

  AssaySettings::Enzyme mass_only;
  mass_only.mg_per_mL = 0.001;
  EXPECT_TRUE(mass_only.known());
  EXPECT_FALSE(mass_only.Nanomolar().has_value());
}

// ---------------------------------------------------------------------------
// Well-formed files.

TEST(AssaySettingsParse, FullFileSetsEveryKey) {
  const AssaySettings settings =
      ReadAssaySettingsFile(kTestDataDir + "/settings/full_assay.json");
  EXPECT_EQ(settings.detection.species, "NADPH");
  EXPECT_EQ(settings.detection.wavelength_nm, 340.0);
  EXPECT_EQ(settings.detection.epsilon_per_M_cm, 6220.0);
  EXPECT_EQ(settings.detection.direction, DetectionDirection::kFormed);
  EXPECT_EQ(settings.detection.per_turnover, 2.0);
  EXPECT_EQ(settings.pathlength.mode, PathlengthMode::kGeometry);
  EXPECT_EQ(settings.pathlength.volume_uL, 150.0);
  EXPECT_EQ(settings.pathlength.well_area_cm2, 0.32);
  EXPECT_EQ(settings.enzyme.mg_per_mL, 0.0002);
  EXPECT_EQ(settings.enzyme.molar_mass_Da, 52000.0);
  EXPECT_FALSE(settings.enzyme.nM.has_value());
  EXPECT_EQ(settings.rate.method, RateMethod::kLag);
  ASSERT_TRUE(settings.rate.window_min.has_value());
  EXPECT_EQ(settings.rate.window_min->first, 1.5);
  EXPECT_EQ(settings.rate.window_min->second, 8.0);
  EXPECT_EQ(settings.blank, BlankMode::kMatched);
  EXPECT_EQ(settings.absorbance_ceiling, 2.0);
  EXPECT_EQ(settings.max_substrate_consumed, 0.05);
}

TEST(AssaySettingsParse, PartialSectionsKeepTheOtherDefaults) {
  const AssaySettings settings = ParseAssaySettings(
      R"({"pathlength": {"mode": "water-peak", "k_per_cm": 0.172}, "blank": "none"})", kFile);
  AssaySettings expected;
  expected.pathlength.mode = PathlengthMode::kWaterPeak;
  expected.pathlength.k_per_cm = 0.172;
  expected.blank = BlankMode::kNone;
  EXPECT_EQ(settings, expected);

  const AssaySettings fixed = ParseAssaySettings(R"({"pathlength": {"cm": 0.56}})", kFile);
  EXPECT_EQ(fixed.pathlength.mode, PathlengthMode::kFixed);
  EXPECT_EQ(fixed.pathlength.cm, 0.56);

  const AssaySettings standards =
      ParseAssaySettings(R"({"pathlength": {"mode": "standards"}, "enzyme": {"nM": 5}})", kFile);
  EXPECT_EQ(standards.pathlength.mode, PathlengthMode::kStandards);
  EXPECT_EQ(standards.enzyme.nM, 5.0);
}

// ---------------------------------------------------------------------------
// Round trip.

std::vector<AssaySettings> VariedSettings() {
  std::vector<AssaySettings> all;
  all.emplace_back();
  all.push_back(ReadAssaySettingsFile(kTestDataDir + "/settings/full_assay.json"));
  AssaySettings water;
  water.pathlength.mode = PathlengthMode::kWaterPeak;
  water.pathlength.sample_nm = 975.0;
  water.pathlength.reference_nm = 900.0;
  water.pathlength.k_per_cm = 0.1734;
  water.enzyme.nM = 2.75;
  water.rate.method = RateMethod::kProgress;
  all.push_back(water);
  AssaySettings standards;
  standards.pathlength.mode = PathlengthMode::kStandards;
  standards.detection.epsilon_per_M_cm = 6317.0;
  standards.enzyme.nM = 0.1;
  standards.enzyme.molar_mass_Da = 61234.5;
  standards.rate.window_min = std::make_pair(0.0, 12.25);
  standards.max_substrate_consumed = 0.1 / 3.0;  // not a short decimal
  all.push_back(standards);
  AssaySettings fixed;
  fixed.pathlength.cm = 0.57;
  fixed.enzyme.mg_per_mL = 0.003;
  fixed.blank = BlankMode::kMatched;
  fixed.rate.method = RateMethod::kLinear;
  all.push_back(fixed);
  return all;
}

TEST(AssaySettingsParse, JsonRoundTripGivesEqualSettings) {
  for (const AssaySettings& settings : VariedSettings()) {
    ASSERT_TRUE(settings.IsValid(nullptr));
    const nlohmann::json json = AssaySettingsToJson(settings);
    const AssaySettings back = ParseAssaySettings(json.dump(2), kFile);
    EXPECT_EQ(back, settings) << json.dump(2);
    // And the second trip gives the same text.
    EXPECT_EQ(AssaySettingsToJson(back), json);
  }
}

TEST(AssaySettingsParse, JsonOfDefaultsHoldsEverySettingUsed) {
  const nlohmann::json json = AssaySettingsToJson(AssaySettings());
  EXPECT_EQ(json.at("detection").at("species"), "NADH");
  EXPECT_EQ(json.at("detection").at("wavelength_nm"), 340.0);
  EXPECT_EQ(json.at("detection").at("epsilon_per_M_cm"), 6220.0);
  EXPECT_EQ(json.at("detection").at("direction"), "consumed");
  EXPECT_EQ(json.at("detection").at("per_turnover"), 1.0);
  EXPECT_EQ(json.at("pathlength"), (nlohmann::json{{"mode", "fixed"}, {"cm", 1.0}}));
  EXPECT_TRUE(json.at("enzyme").is_null());
  EXPECT_EQ(json.at("rate").at("method"), "auto");
  EXPECT_TRUE(json.at("rate").at("window_min").is_null());
  EXPECT_EQ(json.at("blank"), "plate-mean");
  EXPECT_EQ(json.at("absorbance_ceiling"), 2.5);
  EXPECT_EQ(json.at("max_substrate_consumed"), 0.10);
  EXPECT_EQ(json.at("fit").at("model"), "auto");
  EXPECT_EQ(json.at("fit").at("interval"), "profile");
  EXPECT_EQ(json.size(), 8u);
}

TEST(AssaySettingsParse, JsonHoldsOnlyTheKeysOfThePathlengthMode) {
  AssaySettings settings;
  settings.pathlength.mode = PathlengthMode::kGeometry;
  settings.pathlength.volume_uL = 200.0;
  settings.pathlength.well_area_cm2 = 0.32;
  const nlohmann::json geometry = AssaySettingsToJson(settings).at("pathlength");
  EXPECT_EQ(geometry,
            (nlohmann::json{{"mode", "geometry"}, {"volume_uL", 200.0}, {"well_area_cm2", 0.32}}));
  settings.pathlength.mode = PathlengthMode::kStandards;
  EXPECT_EQ(AssaySettingsToJson(settings).at("pathlength"),
            (nlohmann::json{{"mode", "standards"}}));
}

// ---------------------------------------------------------------------------
// Malformed files: each error names the file, the line and the key path.

TEST(AssaySettingsParse, SyntaxErrorGivesLineAndColumn) {
  const std::string path = kTestDataDir + "/settings/missing_comma.json";
  try {
    ReadAssaySettingsFile(path);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), path);
    // Line 3 lacks its comma; the parser stops at the next key's quote.
    EXPECT_EQ(error.line(), 4);
    EXPECT_EQ(error.column(), 5);
    EXPECT_THAT(error.reason(), HasSubstr("not valid JSON"));
    EXPECT_THAT(std::string(error.what()), HasSubstr(path + ":4:5:"));
  }
}

TEST(AssaySettingsParse, TruncatedFileIsASyntaxErrorAtItsEnd) {
  const InputError error = ParseError("{\n  \"blank\": \"none\",\n");
  EXPECT_EQ(error.file(), kFile);
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("not valid JSON"));
}

TEST(AssaySettingsParse, TrailingCommaAndBareWordsAreSyntaxErrors) {
  // Column of the '}' after the trailing comma.
  const InputError comma = ParseError("{\n  \"blank\": \"none\",\n}");
  EXPECT_EQ(comma.line(), 3);
  EXPECT_EQ(comma.column(), 1);
  // A bare word: the parser stops at its second letter, where "null" fails.
  const InputError word = ParseError("{\"blank\": none}");
  EXPECT_EQ(word.line(), 1);
  EXPECT_EQ(word.column(), 12);
  EXPECT_THAT(word.reason(), HasSubstr("invalid literal"));
}

TEST(AssaySettingsParse, NumberBeyondDoubleRangeIsRejected) {
  const InputError error = ParseError("{\n  \"absorbance_ceiling\": 1e999\n}");
  EXPECT_EQ(error.line(), 2);
  EXPECT_EQ(error.column(), 25);
  EXPECT_THAT(error.reason(), AllOf(HasSubstr("too large"), HasSubstr("1e999")));
}

TEST(AssaySettingsParse, UnknownTopLevelKeyIsRejectedWithAHint) {
  const InputError error = ParseError("{\n  \"blank\": \"none\",\n  \"pathlenght\": {\"cm\": 0.5}\n}");
  EXPECT_EQ(error.file(), kFile);
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(),
              AllOf(HasSubstr("pathlenght: unknown key"), HasSubstr("did you mean \"pathlength\""),
                    HasSubstr("detection, pathlength, enzyme, rate, fit, blank, absorbance_ceiling, "
                              "max_substrate_consumed")));
}

TEST(AssaySettingsParse, UnknownNestedKeyNamesItsPath) {
  const InputError error =
      ParseError("{\"detection\": {\n  \"species\": \"NADH\",\n  \"epsilon\": 6220}}");
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(),
              AllOf(HasSubstr("detection.epsilon: unknown key"),
                    HasSubstr("species, wavelength_nm, epsilon_per_M_cm, direction, "
                              "per_turnover")));
}

TEST(AssaySettingsParse, WrongTypeIsRejected) {
  const InputError error =
      ParseError("{\n  \"detection\": {\n    \"wavelength_nm\": \"340\"\n  }\n}");
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(),
              HasSubstr("detection.wavelength_nm: expected a number, got string"));

  const InputError boolean = ParseError(R"({"absorbance_ceiling": true})");
  EXPECT_EQ(boolean.line(), 1);
  EXPECT_THAT(boolean.reason(), HasSubstr("absorbance_ceiling: expected a number, got boolean"));

  const InputError section = ParseError(R"({"rate": "linear"})");
  EXPECT_THAT(section.reason(), HasSubstr("rate: expected an object"));

  const InputError null_value = ParseError(R"({"pathlength": {"cm": null}})");
  EXPECT_THAT(null_value.reason(), HasSubstr("pathlength.cm: expected a number, got null"));
}

TEST(AssaySettingsParse, NegativeEpsilonIsRejected) {
  const InputError error = ParseError(
      "{\n  \"detection\": {\"species\": \"NADH\",\n    \"epsilon_per_M_cm\": -6220}\n}");
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(),
              AllOf(HasSubstr("detection.epsilon_per_M_cm"), HasSubstr("positive"),
                    HasSubstr("-6220")));
}

TEST(AssaySettingsParse, PathlengthOutOfRangeIsRejected) {
  const InputError error = ParseError("{\"pathlength\": {\n\"cm\": 10}}");
  EXPECT_EQ(error.line(), 2);
  EXPECT_THAT(error.reason(),
              HasSubstr("pathlength.cm: expected a positive number of centimetres below 5"));
  EXPECT_THAT(ParseError(R"({"pathlength": {"cm": 0}})").reason(), HasSubstr("pathlength.cm"));
}

TEST(AssaySettingsParse, UnknownModeIsRejectedListingTheModes) {
  const InputError error = ParseError("{\n\"pathlength\": {\"mode\": \"waterpeak\"}}");
  EXPECT_EQ(error.line(), 2);
  EXPECT_THAT(error.reason(),
              AllOf(HasSubstr("pathlength.mode"), HasSubstr("\"waterpeak\""),
                    HasSubstr("\"fixed\", \"geometry\", \"water-peak\", \"standards\"")));
}

TEST(AssaySettingsParse, UnknownDirectionIsRejected) {
  const InputError error = ParseError(R"({"detection": {"direction": "down"}})");
  EXPECT_THAT(error.reason(), AllOf(HasSubstr("detection.direction"), HasSubstr("\"down\""),
                                    HasSubstr("\"consumed\", \"formed\"")));
}

TEST(AssaySettingsParse, UnknownBlankAndRateMethodAreRejected) {
  EXPECT_THAT(ParseError(R"({"blank": "mean"})").reason(),
              AllOf(HasSubstr("blank"), HasSubstr("\"plate-mean\", \"matched\", \"none\"")));
  EXPECT_THAT(ParseError(R"({"rate": {"method": "slope"}})").reason(),
              AllOf(HasSubstr("rate.method"), HasSubstr("\"auto\", \"linear\", \"lag\"")));
}

TEST(AssaySettingsParse, ReversedWindowIsRejected) {
  const InputError error = ParseError("{\"rate\": {\n  \"window_min\": [8, 2]}}");
  EXPECT_EQ(error.line(), 2);
  EXPECT_THAT(error.reason(),
              AllOf(HasSubstr("rate.window_min"), HasSubstr("start < end"), HasSubstr("[8, 2]")));
  EXPECT_THAT(ParseError(R"({"rate": {"window_min": [1, 2, 3]}})").reason(),
              HasSubstr("rate.window_min: expected [start, end] in minutes (two numbers), got "
                        "an array of 3"));
  EXPECT_THAT(ParseError(R"({"rate": {"window_min": ["1", 2]}})").reason(),
              HasSubstr("rate.window_min: expected a number, got string"));
  EXPECT_THAT(ParseError(R"({"rate": {"window_min": 5}})").reason(),
              HasSubstr("rate.window_min: expected [start, end]"));
  EXPECT_THAT(ParseError(R"({"rate": {"window_min": [-1, 5]}})").reason(),
              HasSubstr("rate.window_min"));
}

TEST(AssaySettingsParse, BothEnzymeFormsAreRejected) {
  const InputError error =
      ParseError("{\n\n  \"enzyme\": {\"nM\": 5, \"mg_per_mL\": 0.0002, \"molar_mass_Da\": 52000}}");
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(), AllOf(HasSubstr("enzyme:"), HasSubstr("not both")));
}

TEST(AssaySettingsParse, MolarMassAloneIsRejected) {
  EXPECT_THAT(ParseError(R"({"enzyme": {"molar_mass_Da": 52000}})").reason(),
              HasSubstr("enzyme.molar_mass_Da: needs"));
  EXPECT_THAT(ParseError(R"({"enzyme": {"nM": -1}})").reason(), HasSubstr("enzyme.nM"));
}

TEST(AssaySettingsParse, EmptyFileIsRejected) {
  for (const std::string text : {"", "  \n\t\r\n"}) {
    const InputError error = ParseError(text);
    EXPECT_EQ(error.file(), kFile);
    EXPECT_EQ(error.line(), 0);
    EXPECT_THAT(error.reason(), HasSubstr("empty"));
  }
}

TEST(AssaySettingsParse, NonObjectTopLevelIsRejected) {
  const InputError array = ParseError("\n  [1, 2]");
  EXPECT_EQ(array.line(), 2);
  EXPECT_EQ(array.column(), 3);
  EXPECT_THAT(array.reason(), HasSubstr("expected a JSON object at the top level, got array"));
  EXPECT_THAT(ParseError("42").reason(), HasSubstr("got number"));
  EXPECT_THAT(ParseError("null").reason(), HasSubstr("got null"));
}

TEST(AssaySettingsParse, GeometryWithoutVolumeIsRejected) {
  const InputError error =
      ParseError("{\n  \"pathlength\": {\"mode\": \"geometry\", \"well_area_cm2\": 0.32}\n}");
  EXPECT_EQ(error.line(), 2);  // where "pathlength" is written
  EXPECT_THAT(error.reason(),
              AllOf(HasSubstr("pathlength.volume_uL"), HasSubstr("required"),
                    HasSubstr("geometry")));
}

TEST(AssaySettingsParse, KeyOfAnotherPathlengthModeIsRejected) {
  const InputError error = ParseError(
      "{\"pathlength\": {\n  \"mode\": \"fixed\",\n  \"volume_uL\": 200}}");
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(), AllOf(HasSubstr("pathlength.volume_uL: not used when mode is "
                                              "\"fixed\""),
                                    HasSubstr("mode, cm")));
  // Without "mode" the default is named as such.
  EXPECT_THAT(ParseError(R"({"pathlength": {"k_per_cm": 0.18}})").reason(),
              HasSubstr("(the default)"));
}

TEST(AssaySettingsParse, RepeatedKeyIsRejectedAtItsSecondPlace) {
  const InputError error =
      ParseError("{\"detection\": {\n  \"per_turnover\": 1,\n  \"per_turnover\": 2}}");
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(), AllOf(HasSubstr("detection.per_turnover"), HasSubstr("twice")));
}

TEST(AssaySettingsParse, FractionConsumedMustLieBetweenZeroAndOne) {
  EXPECT_THAT(ParseError(R"({"max_substrate_consumed": 1.5})").reason(),
              HasSubstr("max_substrate_consumed: expected a fraction between 0 and 1"));
  EXPECT_THAT(ParseError(R"({"max_substrate_consumed": 0})").reason(),
              HasSubstr("max_substrate_consumed"));
  EXPECT_THAT(ParseError(R"({"absorbance_ceiling": -2.5})").reason(),
              HasSubstr("absorbance_ceiling: expected a positive absorbance"));
}

TEST(AssaySettingsParse, MissingFileIsAnInputErrorNamingIt) {
  const std::string path = kTestDataDir + "/settings/no-such-file.json";
  try {
    ReadAssaySettingsFile(path);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), path);
    EXPECT_EQ(error.line(), 0);
    EXPECT_THAT(error.reason(), HasSubstr("cannot open"));
  }
}

TEST(AssaySettingsParse, DirectoryIsAnInputErrorNamingIt) {
  const std::string path = kTestDataDir + "/settings";
  try {
    ReadAssaySettingsFile(path);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), path);
    EXPECT_THAT(error.reason(), HasSubstr("directory"));
  }
}

TEST(AssaySettingsParse, Utf16FileIsRejectedWithAClearReason) {
  const std::filesystem::path path =
      std::filesystem::temp_directory_path() /
      ("ratewell_settings_utf16_" + std::to_string(::testing::UnitTest::GetInstance()->random_seed()) +
       ".json");
  {
    std::ofstream out(path, std::ios::binary);
    const char bytes[] = {'\xFF', '\xFE', '{', '\0', '}', '\0'};
    out.write(bytes, sizeof bytes);
  }
  try {
    ReadAssaySettingsFile(path.string());
    ADD_FAILURE() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), path.string());
    EXPECT_THAT(error.reason(), HasSubstr("UTF-16"));
  }
  std::filesystem::remove(path);
}

}  // namespace
}  // namespace ratewell

// ---------------------------------------------------------------------------
// The "fit" section.

namespace ratewell {
namespace {

TEST(AssaySettingsFit, DefaultsFitAutoWithProfileIntervalsAndNoWeights) {
  const AssaySettings settings;
  EXPECT_EQ(settings.fit.model, "auto");
  EXPECT_EQ(settings.fit.weighting, Weighting::kNone);
  EXPECT_EQ(settings.fit.loss, RobustLoss::kNone);
  EXPECT_EQ(settings.fit.interval, IntervalMethod::kProfile);
  EXPECT_EQ(settings.fit.confidence_level, 0.95);
  EXPECT_FALSE(settings.fit.cheng_prusoff_mode.has_value());
}

TEST(AssaySettingsFit, EveryKeyIsReadAndRoundTrips) {
  const AssaySettings s = ParseAssaySettings(R"({"fit": {
      "model": "competitive", "weighting": "inverse-variance", "loss": "huber",
      "loss_scale": 2.5, "interval": "bootstrap", "confidence_level": 0.9,
      "bootstrap": {"resamples": 500, "scheme": "cases", "seed": 42},
      "cheng_prusoff": {"mode": "competitive", "substrate_uM": 100, "km_uM": 50,
                        "km_se_uM": 4}}})",
                                             kFile);
  EXPECT_EQ(s.fit.model, "competitive");
  EXPECT_EQ(s.fit.weighting, Weighting::kInverseVariance);
  EXPECT_EQ(s.fit.loss, RobustLoss::kHuber);
  EXPECT_EQ(s.fit.loss_scale, 2.5);
  EXPECT_EQ(s.fit.interval, IntervalMethod::kBootstrap);
  EXPECT_EQ(s.fit.confidence_level, 0.9);
  EXPECT_EQ(s.fit.bootstrap_resamples, 500);
  EXPECT_EQ(s.fit.bootstrap_scheme, BootstrapScheme::kCases);
  EXPECT_EQ(s.fit.bootstrap_seed, 42u);
  ASSERT_TRUE(s.fit.cheng_prusoff_mode.has_value());
  EXPECT_EQ(*s.fit.cheng_prusoff_mode, KineticModel::kCompetitive);
  EXPECT_EQ(s.fit.cheng_prusoff_substrate_uM, 100.0);
  EXPECT_EQ(s.fit.cheng_prusoff_km_uM, 50.0);
  EXPECT_EQ(s.fit.cheng_prusoff_km_se_uM, 4.0);
  EXPECT_EQ(ParseAssaySettings(AssaySettingsToJson(s).dump(), kFile), s);
  EXPECT_EQ(ParseAssaySettings(AssaySettingsToJson(AssaySettings()).dump(), kFile),
            AssaySettings());
}

TEST(AssaySettingsFit, BadValuesNameTheirKeyAndWhatWasExpected) {
  EXPECT_THAT(ParseError(R"({"fit": {"model": "michaelis"}})").what(),
              AllOf(HasSubstr("fit.model"), HasSubstr("michaelis-menten")));
  EXPECT_THAT(ParseError(R"({"fit": {"weighting": "1/y"}})").what(),
              AllOf(HasSubstr("fit.weighting"), HasSubstr("inverse-variance")));
  EXPECT_THAT(ParseError(R"({"fit": {"confidence_level": 95}})").what(),
              AllOf(HasSubstr("fit.confidence_level"), HasSubstr("between 0.5 and 1")));
  EXPECT_THAT(ParseError(R"({"fit": {"bootstrap": {"resamples": 20}}})").what(),
              HasSubstr("fit.bootstrap.resamples"));
  EXPECT_THAT(ParseError(R"({"fit": {"bootstrap": {"resamples": 250.5}}})").what(),
              HasSubstr("whole number"));
  EXPECT_THAT(ParseError(R"({"fit": {"cheng_prusoff": {"mode": "mixed", "substrate_uM": 1,
                                                       "km_uM": 1}}})").what(),
              HasSubstr("fit.cheng_prusoff.mode"));
  EXPECT_THAT(ParseError(R"({"fit": {"cheng_prusoff": {"mode": "competitive"}}})").what(),
              HasSubstr("missing \"substrate_uM\""));
  EXPECT_THAT(ParseError(R"({"fit": {"intervals": "profile"}})").what(),
              AllOf(HasSubstr("fit.intervals"), HasSubstr("interval")));
}

}  // namespace
}  // namespace ratewell
