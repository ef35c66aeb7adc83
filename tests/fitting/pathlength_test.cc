#include "fitting/pathlength.h"

#include <cmath>
#include <limits>
#include <stdexcept>
#include <string>
#include <vector>

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include "fitting/units.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

using ::testing::AllOf;
using ::testing::HasSubstr;

// Closed-form arithmetic on a few doubles: a few units in the last place.
constexpr double kClosedFormRelative = 1e-13;
// Closed-form OLS against SciPy's own closed form: both agree to rounding,
// far inside 1e-10 (linregress and polyfit differ from each other by ~2e-12).
constexpr double kOlsRelative = 1e-10;

const PlateGeometry k96{8, 12};

void ExpectRelativeNear(double actual, double expected, double relative) {
  EXPECT_NEAR(actual, expected, relative * std::fabs(expected))
      << "actual " << actual << " expected " << expected;
}

int Well(const std::string& name) {
  const std::optional<WellPosition> position = ParseWellName(name);
  EXPECT_TRUE(position.has_value()) << name;
  return position->row * k96.columns + position->column;
}

// A 96-well plate with the given channels, all series empty; filled by hand
// so the test does not rest on the importers.
Plate EmptyPlate(std::vector<double> wavelengths_nm, const std::string& path) {
  Plate plate;
  plate.geometry = k96;
  plate.wavelengths_nm = std::move(wavelengths_nm);
  plate.series.resize(plate.wavelengths_nm.size() * static_cast<std::size_t>(k96.num_wells()));
  plate.report.path = path;
  return plate;
}

int Channel(const Plate& plate, double nm) {
  for (int c = 0; c < plate.num_channels(); ++c) {
    if (plate.wavelengths_nm[static_cast<std::size_t>(c)] == nm) return c;
  }
  ADD_FAILURE() << "no channel " << nm;
  return 0;
}

// Appends valid reads at one-minute steps.
void AddReads(Plate* plate, double nm, const std::string& well, const std::vector<double>& values) {
  Series& series = plate->at(Channel(*plate, nm), Well(well));
  for (double value : values) {
    series.Append(static_cast<double>(series.size()), value, PointStatus::kValid);
  }
}

void AddPoint(Plate* plate, double nm, const std::string& well, PointStatus status) {
  Series& series = plate->at(Channel(*plate, nm), Well(well));
  series.Append(static_cast<double>(series.size()), std::numeric_limits<double>::quiet_NaN(),
                status);
}

// ---------------------------------------------------------------------------
// Fixed and geometry.

TEST(Pathlength, FixedModeGivesEveryWellTheSameExactValue) {
  AssaySettings settings;
  settings.pathlength.cm = 0.56;
  const Plate plate = EmptyPlate({340.0}, "plate.csv");
  const PathlengthResult result = ComputePathlength(settings, plate);
  EXPECT_EQ(result.mode, "fixed");
  ASSERT_EQ(result.cm_per_well.size(), 96u);
  ASSERT_EQ(result.se_cm_per_well.size(), 96u);
  ASSERT_EQ(result.flag_per_well.size(), 96u);
  for (int well = 0; well < 96; ++well) {
    EXPECT_EQ(result.cm_per_well[well], 0.56);
    EXPECT_EQ(result.se_cm_per_well[well], 0.0);
    EXPECT_EQ(result.flag_per_well[well], PathlengthFlag::kNone);
  }
  EXPECT_TRUE(result.warnings.empty());
  EXPECT_FALSE(result.standards.has_value());
}

TEST(Pathlength, GeometryOf200MicrolitresIn032SquareCentimetresIs0625Cm) {
  // 200 µL = 0.2 cm³ over a 0.32 cm² floor: 0.625 cm (arithmetic of the definition).
  ExpectRelativeNear(GeometryPathlengthCm(200.0, 0.32), 0.625, kClosedFormRelative);
  AssaySettings settings;
  settings.pathlength.mode = PathlengthMode::kGeometry;
  settings.pathlength.volume_uL = 200.0;
  settings.pathlength.well_area_cm2 = 0.32;
  const PathlengthResult result = ComputePathlength(settings, EmptyPlate({340.0}, "p.csv"));
  EXPECT_EQ(result.mode, "geometry");
  ExpectRelativeNear(result.cm_per_well[Well("H12")], 0.625, kClosedFormRelative);
  EXPECT_EQ(result.se_cm_per_well[Well("A01")], 0.0);
  EXPECT_EQ(result.flag_per_well[Well("A01")], PathlengthFlag::kNone);
  EXPECT_TRUE(result.warnings.empty());
}

TEST(Pathlength, ImplausibleGeometryIsFlaggedAndWarned) {
  AssaySettings settings;
  settings.pathlength.mode = PathlengthMode::kGeometry;
  settings.pathlength.volume_uL = 10.0;  // 10 µL / 0.32 cm² = 0.03125 cm < 0.05 cm
  settings.pathlength.well_area_cm2 = 0.32;
  const PathlengthResult result = ComputePathlength(settings, EmptyPlate({340.0}, "p.csv"));
  ExpectRelativeNear(result.cm_per_well[0], 0.03125, kClosedFormRelative);
  EXPECT_EQ(result.flag_per_well[0], PathlengthFlag::kOutOfRange);
  ASSERT_EQ(result.warnings.size(), 1u);
  EXPECT_THAT(result.warnings[0], HasSubstr("0.03125 cm"));
}

TEST(Pathlength, InvalidSettingsAndArgumentsThrow) {
  AssaySettings settings;
  settings.pathlength.mode = PathlengthMode::kGeometry;  // volume and area missing
  EXPECT_THROW(ComputePathlength(settings, EmptyPlate({340.0}, "p.csv")),
               std::invalid_argument);
  EXPECT_THROW(GeometryPathlengthCm(0.0, 0.32), std::invalid_argument);
  EXPECT_THROW(GeometryPathlengthCm(200.0, -0.32), std::invalid_argument);
  EXPECT_THROW(WaterPeakPathlengthCm(0.2, 0.02, 0.0), std::invalid_argument);
}

// ---------------------------------------------------------------------------
// Water peak.

TEST(Pathlength, WaterPeakDifferenceOverKGivesTheDepth) {
  // k ≈ 0.18 per cm near 25 °C (common practice, from memory):
  // ΔA = 0.18 → 1.00 cm and ΔA = 0.099 → 0.55 cm.
  ExpectRelativeNear(WaterPeakPathlengthCm(0.230, 0.050, 0.18), 1.00, kClosedFormRelative);
  ExpectRelativeNear(WaterPeakPathlengthCm(0.139, 0.040, 0.18), 0.55, kClosedFormRelative);
}

class PathlengthWaterPeakPlate : public ::testing::Test {
 protected:
  void SetUp() override {
    settings_.pathlength.mode = PathlengthMode::kWaterPeak;  // 977 / 900 nm, k 0.18
    plate_ = EmptyPlate({340.0, 900.0, 977.0}, "water-peak-plate.csv");
    // A01: one read each, ΔA = 0.18 → 1.00 cm.
    AddReads(&plate_, 977.0, "A01", {0.230});
    AddReads(&plate_, 900.0, "A01", {0.050});
    // A02: one read each, ΔA = 0.099 → 0.55 cm.
    AddReads(&plate_, 977.0, "A02", {0.139});
    AddReads(&plate_, 900.0, "A02", {0.040});
    // A03: three reads each with scatter; means 0.139 and 0.040 → 0.55 cm.
    AddReads(&plate_, 977.0, "A03", {0.141, 0.139, 0.137});
    AddReads(&plate_, 900.0, "A03", {0.040, 0.041, 0.039});
    // A04: a saturated and a missing 977 point beside one valid read: only
    // the valid one counts.
    AddPoint(&plate_, 977.0, "A04", PointStatus::kSaturated);
    AddReads(&plate_, 977.0, "A04", {0.230});
    AddPoint(&plate_, 977.0, "A04", PointStatus::kMissing);
    AddReads(&plate_, 900.0, "A04", {0.050});
    // B01: ΔA = 0.45 → 2.5 cm, beyond a microplate well.
    AddReads(&plate_, 977.0, "B01", {0.500});
    AddReads(&plate_, 900.0, "B01", {0.050});
    // C05: assay data at 340 nm but the 977 read is saturated.
    AddReads(&plate_, 340.0, "C05", {0.9, 0.85});
    AddPoint(&plate_, 977.0, "C05", PointStatus::kSaturated);
    AddReads(&plate_, 900.0, "C05", {0.050});
  }

  AssaySettings settings_;
  Plate plate_;
};

TEST_F(PathlengthWaterPeakPlate, EachWellGetsItsOwnPathlength) {
  const PathlengthResult result = ComputePathlength(settings_, plate_);
  EXPECT_EQ(result.mode, "water-peak");
  ExpectRelativeNear(result.cm_per_well[Well("A01")], 1.00, kClosedFormRelative);
  ExpectRelativeNear(result.cm_per_well[Well("A02")], 0.55, kClosedFormRelative);
  ExpectRelativeNear(result.cm_per_well[Well("A03")], 0.55, kClosedFormRelative);
  ExpectRelativeNear(result.cm_per_well[Well("A04")], 1.00, kClosedFormRelative);
  for (const char* well : {"A01", "A02", "A03", "A04"}) {
    EXPECT_EQ(result.flag_per_well[Well(well)], PathlengthFlag::kNone) << well;
  }
}

TEST_F(PathlengthWaterPeakPlate, StandardErrorComesFromTheScatterOfTheReads) {
  const PathlengthResult result = ComputePathlength(settings_, plate_);
  // One read per wavelength: no scatter to see.
  EXPECT_EQ(result.se_cm_per_well[Well("A01")], 0.0);
  // sqrt(var977/3 + var900/3) / 0.18 with sample variances (ddof = 1):
  // numpy 1.24.2, computed: 0.007172191381865554.
  ExpectRelativeNear(result.se_cm_per_well[Well("A03")], 0.007172191381865554, 1e-12);
}

TEST_F(PathlengthWaterPeakPlate, ImplausibleAndUnreadableWellsAreFlaggedAndWarned) {
  const PathlengthResult result = ComputePathlength(settings_, plate_);
  ExpectRelativeNear(result.cm_per_well[Well("B01")], 2.5, kClosedFormRelative);
  EXPECT_EQ(result.flag_per_well[Well("B01")], PathlengthFlag::kOutOfRange);
  EXPECT_TRUE(std::isnan(result.cm_per_well[Well("C05")]));
  EXPECT_EQ(result.flag_per_well[Well("C05")], PathlengthFlag::kNoValidReads);
  // An unused well is flagged too, but not worth a warning.
  EXPECT_EQ(result.flag_per_well[Well("H12")], PathlengthFlag::kNoValidReads);
  ASSERT_EQ(result.warnings.size(), 2u);
  EXPECT_THAT(result.warnings[0], AllOf(HasSubstr("B01"), HasSubstr("2.5 cm")));
  EXPECT_THAT(result.warnings[1], AllOf(HasSubstr("C05"), HasSubstr("1 well")));
  EXPECT_THAT(result.warnings[1], ::testing::Not(HasSubstr("H12")));
  EXPECT_STREQ(PathlengthFlagToString(PathlengthFlag::kNoValidReads), "no-valid-reads");
}

TEST_F(PathlengthWaterPeakPlate, OtherWavelengthsAndKAreHonoured) {
  settings_.pathlength.k_per_cm = 0.17;
  const PathlengthResult result = ComputePathlength(settings_, plate_);
  ExpectRelativeNear(result.cm_per_well[Well("A01")], 0.18 / 0.17, kClosedFormRelative);
}

TEST(Pathlength, WaterPeakNeedsBothWavelengthsAndSaysWhatThePlateHas) {
  AssaySettings settings;
  settings.pathlength.mode = PathlengthMode::kWaterPeak;
  const Plate plate = EmptyPlate({340.0, 900.0}, "kinetics-340.csv");
  try {
    ComputePathlength(settings, plate);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), "kinetics-340.csv");
    EXPECT_THAT(error.reason(), AllOf(HasSubstr("977 nm"), HasSubstr("340, 900 nm")));
  }
  settings.pathlength.reference_nm = 880.0;
  EXPECT_THROW(ComputePathlength(settings, EmptyPlate({340.0, 977.0}, "x.csv")), InputError);
}

// ---------------------------------------------------------------------------
// Standards.

// An invented NADH series: l = 0.55 cm, ε = 6220 M⁻¹cm⁻¹ (Horecker & Kornberg
// 1948), so ε·l = 0.003421 per µM; a background of 0.045; and a deterministic
// perturbation: A_k = 0.045 + 6220·0.55e-6·c_k + 0.002·sin(3k + 1), k = 0..11,
// evaluated in numpy 1.24.2 and pasted with 17 digits.
const std::vector<double> kStandardUM = {0, 0, 20, 20, 40, 40, 80, 80, 120, 120, 160, 160};
const std::vector<double> kStandardA = {
    0.04668294196961579, 0.04348639500938414, 0.11473397319743757, 0.11233195777822125,
    0.18268033407365328, 0.18126419336666988, 0.31897975441932586, 0.31866229738141916,
    0.45525529649980445, 0.45606181157661574, 0.5915519247093539,  0.59341816537224};
// scipy.stats.linregress on these data (SciPy 1.10.1, computed):
constexpr double kSciPySlope = 0.003421213107069718;
constexpr double kSciPySlopeSe = 5.40864228616666e-06;
constexpr double kSciPyIntercept = 0.04510750295126484;
constexpr double kSciPyInterceptSe = 0.00048577517275278173;
constexpr double kSciPyRSquared = 0.9999750077469218;
// slope × 1e6 / 6220 and its SE (SciPy 1.10.1 values, scaled in Python):
constexpr double kSciPyCm = 0.5500342615867714;
constexpr double kSciPySeCm = 0.0008695566376473731;

TEST(Pathlength, LineFitAgreesWithSciPy) {
  const LineFit fit = FitLine(kStandardUM, kStandardA);
  EXPECT_EQ(fit.n, 12);
  ExpectRelativeNear(fit.slope, kSciPySlope, kOlsRelative);
  ExpectRelativeNear(fit.slope_se, kSciPySlopeSe, kOlsRelative);
  ExpectRelativeNear(fit.intercept, kSciPyIntercept, kOlsRelative);
  ExpectRelativeNear(fit.intercept_se, kSciPyInterceptSe, kOlsRelative);
  ExpectRelativeNear(fit.r_squared, kSciPyRSquared, kOlsRelative);
}

TEST(Pathlength, LineFitOfAnExactLineHasNoError) {
  const LineFit fit = FitLine({1.0, 2.0, 4.0, 8.0}, {3.0, 5.0, 9.0, 17.0});
  ExpectRelativeNear(fit.slope, 2.0, kClosedFormRelative);
  ExpectRelativeNear(fit.intercept, 1.0, kClosedFormRelative);
  EXPECT_NEAR(fit.slope_se, 0.0, 1e-14);
  ExpectRelativeNear(fit.r_squared, 1.0, kClosedFormRelative);
}

TEST(Pathlength, LineFitRejectsDegenerateData) {
  EXPECT_THROW(FitLine({1.0, 2.0}, {1.0, 2.0}), std::invalid_argument);
  EXPECT_THROW(FitLine({1.0, 1.0, 1.0}, {1.0, 2.0, 3.0}), std::invalid_argument);
  EXPECT_THROW(FitLine({1.0, 2.0, 3.0}, {1.0, 2.0}), std::invalid_argument);
  EXPECT_THROW(FitLine({1.0, 2.0, 3.0}, {1.0, std::nan(""), 3.0}), std::invalid_argument);
  // Constant y: slope 0 and R² 0, as SciPy's linregress reports.
  const LineFit flat = FitLine({1.0, 2.0, 3.0}, {0.5, 0.5, 0.5});
  EXPECT_EQ(flat.slope, 0.0);
  EXPECT_EQ(flat.r_squared, 0.0);
}

class PathlengthStandardsPlate : public ::testing::Test {
 protected:
  // Standards in column 1 and 2 (A01..F01, A02..F02), three reads per well
  // spread ±0.001 around the value, so the well mean is the value.
  void SetUp() override {
    settings_.pathlength.mode = PathlengthMode::kStandards;
    plate_ = EmptyPlate({340.0}, "standards-plate.csv");
    layout_.path = "standards-layout.csv";
    layout_.form = "list";
    layout_.geometry = k96;
    layout_.wells.resize(96);
    for (std::size_t k = 0; k < kStandardUM.size(); ++k) {
      const std::string well = std::string(1, static_cast<char>('A' + k / 2)) +
                               (k % 2 == 0 ? "01" : "02");
      WellInfo& info = layout_.wells[static_cast<std::size_t>(Well(well))];
      info.role = WellRole::kStandard;
      info.standard_uM = kStandardUM[k];
      info.line = static_cast<int>(k) + 2;
      AddReads(&plate_, 340.0, well,
               {kStandardA[k] + 0.001, kStandardA[k], kStandardA[k] - 0.001});
    }
    // A sample well that must not enter the fit.
    layout_.wells[static_cast<std::size_t>(Well("A05"))].role = WellRole::kSample;
    AddReads(&plate_, 340.0, "A05", {1.2, 1.1, 1.0});
  }

  AssaySettings settings_;
  Plate plate_;
  Layout layout_;
};

TEST_F(PathlengthStandardsPlate, SlopeOfTheSeriesRecoversEpsilonTimesPathlength) {
  const PathlengthResult result = ComputePathlength(settings_, plate_, &layout_);
  EXPECT_EQ(result.mode, "standards");
  ASSERT_TRUE(result.standards.has_value());
  const StandardsFit& fit = *result.standards;
  EXPECT_EQ(fit.line.n, 12);
  EXPECT_EQ(fit.distinct_concentrations, 6);
  EXPECT_EQ(fit.points.size(), 12u);
  EXPECT_EQ(fit.points[0].reads, 3);
  ExpectRelativeNear(fit.line.slope, kSciPySlope, kOlsRelative);
  ExpectRelativeNear(fit.line.slope_se, kSciPySlopeSe, kOlsRelative);
  ExpectRelativeNear(fit.line.intercept, kSciPyIntercept, kOlsRelative);
  ExpectRelativeNear(fit.cm, kSciPyCm, kOlsRelative);
  ExpectRelativeNear(fit.se_cm, kSciPySeCm, kOlsRelative);
  // The invented truth, 0.55 cm, within 2 standard errors.
  EXPECT_NEAR(fit.cm, 0.55, 2.0 * fit.se_cm);
  for (int well : {Well("A01"), Well("H12")}) {
    ExpectRelativeNear(result.cm_per_well[well], kSciPyCm, kOlsRelative);
    ExpectRelativeNear(result.se_cm_per_well[well], kSciPySeCm, kOlsRelative);
    EXPECT_EQ(result.flag_per_well[well], PathlengthFlag::kNone);
  }
  EXPECT_TRUE(result.warnings.empty());
}

TEST_F(PathlengthStandardsPlate, SaturatedAndAboveCeilingReadsAreLeftOut) {
  AddPoint(&plate_, 340.0, "F02", PointStatus::kSaturated);
  AddReads(&plate_, 340.0, "F02", {2.9});  // above the 2.5 ceiling
  const PathlengthResult result = ComputePathlength(settings_, plate_, &layout_);
  ExpectRelativeNear(result.standards->cm, kSciPyCm, kOlsRelative);
  ASSERT_EQ(result.warnings.size(), 1u);
  EXPECT_THAT(result.warnings[0], AllOf(HasSubstr("ceiling"), HasSubstr("F02")));
}

TEST_F(PathlengthStandardsPlate, FewerThanThreeConcentrationsIsAnInputError) {
  for (std::size_t k = 4; k < kStandardUM.size(); ++k) {
    const std::string well = std::string(1, static_cast<char>('A' + k / 2)) +
                             (k % 2 == 0 ? "01" : "02");
    layout_.wells[static_cast<std::size_t>(Well(well))].role = WellRole::kEmpty;
  }
  try {
    ComputePathlength(settings_, plate_, &layout_);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), "standards-layout.csv");
    EXPECT_THAT(error.reason(), AllOf(HasSubstr("3 or more distinct"), HasSubstr("found 2")));
  }
}

TEST_F(PathlengthStandardsPlate, StandardWithoutConcentrationNamesTheLayoutLine) {
  WellInfo& info = layout_.wells[static_cast<std::size_t>(Well("C02"))];
  info.standard_uM = std::numeric_limits<double>::quiet_NaN();
  try {
    ComputePathlength(settings_, plate_, &layout_);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), "standards-layout.csv");
    EXPECT_EQ(error.line(), info.line);
    EXPECT_THAT(error.reason(), AllOf(HasSubstr("C02"), HasSubstr("standard_uM")));
  }
}

TEST_F(PathlengthStandardsPlate, MissingLayoutOrWavelengthIsAnInputError) {
  EXPECT_THROW(ComputePathlength(settings_, plate_, nullptr), InputError);
  settings_.detection.wavelength_nm = 365.0;
  try {
    ComputePathlength(settings_, plate_, &layout_);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), "standards-plate.csv");
    EXPECT_THAT(error.reason(), AllOf(HasSubstr("365 nm"), HasSubstr("340 nm")));
  }
}

TEST_F(PathlengthStandardsPlate, LayoutForAnotherPlateSizeIsAnInputError) {
  layout_.geometry = PlateGeometry{16, 24};
  layout_.wells.resize(384);
  EXPECT_THROW(ComputePathlength(settings_, plate_, &layout_), InputError);
}

TEST_F(PathlengthStandardsPlate, FallingAbsorbanceCannotGiveAPathlength) {
  // Concentrations listed in reverse order of the readings.
  for (std::size_t k = 0; k < kStandardUM.size(); ++k) {
    const std::string well = std::string(1, static_cast<char>('A' + k / 2)) +
                             (k % 2 == 0 ? "01" : "02");
    layout_.wells[static_cast<std::size_t>(Well(well))].standard_uM =
        kStandardUM[kStandardUM.size() - 1 - k];
  }
  try {
    ComputePathlength(settings_, plate_, &layout_);
    FAIL() << "no error";
  } catch (const InputError& error) {
    EXPECT_THAT(error.reason(), HasSubstr("does not rise"));
  }
}

}  // namespace
}  // namespace ratewell
