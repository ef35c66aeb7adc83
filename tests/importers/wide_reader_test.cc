// The wide layout: a time column, then one column per well. Files are written
// inline (invented data) so each test shows exactly what the reader meets.
#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>
#include <string>
#include <vector>

#include "importers/input_error.h"
#include "importers/read_plate.h"

namespace ratewell {
namespace {

using ::testing::Contains;
using ::testing::ElementsAre;
using ::testing::HasSubstr;
using ::testing::IsEmpty;

// Times are converted by one division or a few additions; 1e-12 min leaves
// room for that rounding and nothing else.
constexpr double kTimeTolerance = 1e-12;

Plate Read(const std::string& text, const ReadOptions& options = {}) {
  return ReadPlateBytes(text, "wide.csv", options);
}

const Series& SeriesOf(const Plate& plate, const std::string& well, double nm = 340.0) {
  const std::optional<WellPosition> p = ParseWellName(well);
  return plate.at(plate.ChannelOf(nm), p->row * plate.geometry.columns + p->column);
}

void ExpectTimes(const Series& series, const std::vector<double>& expected_min) {
  ASSERT_EQ(series.size(), expected_min.size());
  for (std::size_t i = 0; i < expected_min.size(); ++i) {
    EXPECT_NEAR(series.time_min[i], expected_min[i], kTimeTolerance) << "point " << i;
  }
}

TEST(WideReader, ReadsOneColumnPerWell) {
  const Plate plate = Read(
      "Time (s),A01,A02,B01\n"
      "0,1.20,1.10,0.05\n"
      "30,1.15,1.08,0.05\n"
      "60,1.10,1.06,0.06\n");
  EXPECT_EQ(plate.report.format, "wide");
  EXPECT_EQ(plate.report.time_unit, "s");
  EXPECT_EQ(plate.geometry, (PlateGeometry{8, 12}));
  ExpectTimes(SeriesOf(plate, "A02"), {0.0, 0.5, 1.0});
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.20, 1.15, 1.10));
  EXPECT_THAT(SeriesOf(plate, "B01").value, ElementsAre(0.05, 0.05, 0.06));
  EXPECT_EQ(plate.WellsWithData(), 3);
}

TEST(WideReader, ReadsClockTimesAndATemperatureColumn) {
  const Plate plate = Read(
      "Time\tT (°C)\ta01\tb2\n"
      "0:00:00\t24.9\t1.2\t1.1\n"
      "0:00:45\t25.0\t1.1\t1.0\n"
      "0:01:30\t25.2\t1.0\t0.9\n");
  EXPECT_EQ(plate.report.time_unit, "h:mm:ss");
  EXPECT_EQ(plate.report.delimiter, "tab");
  ExpectTimes(SeriesOf(plate, "B02"), {0.0, 0.75, 1.5});
  EXPECT_THAT(plate.temperature_time_min, ElementsAre(0.0, 0.75, 1.5));
  EXPECT_THAT(plate.temperature_C, ElementsAre(24.9, 25.0, 25.2));
}

TEST(WideReader, ReadsMmSsTimes) {
  const Plate plate = Read("Time,A01\n00:00,1.0\n02:30,0.9\n65:00,0.8\n");
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 2.5, 65.0});
}

TEST(WideReader, ReadsSemicolonsWithDecimalCommasAndCrlf) {
  const Plate plate = Read(
      "Zeit [min];A01;A02\r\n"
      "0;1,250;1,125\r\n"
      "0,5;1,200;1,100\r\n");
  EXPECT_TRUE(plate.report.decimal_comma);
  EXPECT_EQ(plate.report.delimiter, "semicolon");
  EXPECT_EQ(plate.report.time_unit, "min");
  ExpectTimes(SeriesOf(plate, "A02"), {0.0, 0.5});
  EXPECT_THAT(SeriesOf(plate, "A02").value, ElementsAre(1.125, 1.100));
}

TEST(WideReader, ReadsWavelengthSuffixesOnWellHeaders) {
  const Plate plate = Read(
      "Time [s],A01@340,A01@977,A01@900,C03@340,C03@977,C03@900\n"
      "0,1.20,0.131,0.040,1.00,0.130,0.041\n"
      "20,1.18,0.132,0.041,0.99,0.131,0.040\n");
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 900.0, 977.0));
  EXPECT_THAT(SeriesOf(plate, "C03", 977).value, ElementsAre(0.130, 0.131));
  EXPECT_THAT(SeriesOf(plate, "C03", 900).value, ElementsAre(0.041, 0.040));
  EXPECT_THAT(SeriesOf(plate, "A01", 340).value, ElementsAre(1.20, 1.18));
}

TEST(WideReader, ReadsSectionsEachNamingItsWavelength) {
  const Plate plate = Read(
      "Plate: RK-1 lot 31-044\n"
      "\n"
      "Wavelength: 977 nm\n"
      "Time (s),A01,H12\n"
      "0,0.131,0.129\n"
      "30,0.132,0.128\n"
      "\n"
      "Wavelength: 340 nm\n"
      "Time (s),A01,H12\n"
      "0,1.201,0.950\n"
      "30,1.150,0.940\n");
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 977.0));
  EXPECT_THAT(SeriesOf(plate, "H12", 340).value, ElementsAre(0.950, 0.940));
  EXPECT_THAT(SeriesOf(plate, "H12", 977).value, ElementsAre(0.129, 0.128));
  EXPECT_THAT(plate.report.warnings, IsEmpty());
}

TEST(WideReader, TakesTheWavelengthFromThePreambleForASingleTable) {
  const Plate plate = Read(
      "Measurement: absorbance at 365 nm\n"
      "Time (s),A01\n0,1.0\n10,0.9\n");
  EXPECT_THAT(plate.wavelengths_nm, ElementsAre(365.0));
  EXPECT_THAT(SeriesOf(plate, "A01", 365).value, ElementsAre(1.0, 0.9));
}

TEST(WideReader, Reads384WellColumns) {
  std::string header = "Time (min)";
  std::string row0 = "0";
  std::string row1 = "1";
  for (int r = 0; r < 16; ++r) {
    for (int c = 0; c < 24; ++c) {
      (header += ',') += WellName(WellPosition{r, c});
      ((row0 += ',') += std::to_string(r) + '.') += std::to_string(c);
      row1 += ",OVER";
    }
  }
  const Plate plate = Read(header + "\n" + row0 + "\n" + row1 + "\n");
  EXPECT_EQ(plate.geometry, (PlateGeometry{16, 24}));
  EXPECT_EQ(plate.WellsWithData(), 384);
  const Series& p24 = SeriesOf(plate, "P24");
  EXPECT_EQ(p24.value[0], 15.23);
  EXPECT_EQ(p24.status[1], PointStatus::kSaturated);
  EXPECT_TRUE(std::isnan(p24.value[1]));
}

TEST(WideReader, A1536WellColumnMakesA1536WellPlate) {
  const Plate plate = Read("Time (s),A01,AF48\n0,1.0,2.0\n");
  EXPECT_EQ(plate.geometry, (PlateGeometry{32, 48}));
  EXPECT_THAT(SeriesOf(plate, "AF48").value, ElementsAre(2.0));
}

TEST(WideReader, EmptyCellsAreMissingAndOverflowMarkersSaturated) {
  const Plate plate = Read(
      "Time (s),A01,A02,A03\n"
      "0,1.0,,>2.5\n"
      "10,0.9,N/A,####\n");
  EXPECT_THAT(SeriesOf(plate, "A02").status,
              ElementsAre(PointStatus::kMissing, PointStatus::kMissing));
  EXPECT_THAT(SeriesOf(plate, "A03").status,
              ElementsAre(PointStatus::kSaturated, PointStatus::kSaturated));
}

TEST(WideReader, WarnsAboutColumnsItDoesNotRead) {
  const Plate plate = Read(
      "Cycle,Time (s),A01,A02,Notes\n"
      "1,0,1.0,1.1,\n"
      "2,30,0.9,1.0,lid on\n");
  EXPECT_THAT(plate.report.warnings, Contains(HasSubstr("'Cycle', 'Notes'")));
  EXPECT_THAT(SeriesOf(plate, "A02").value, ElementsAre(1.1, 1.0));
}

TEST(WideReader, StopsAtAFooterWithAWarning) {
  const Plate plate = Read(
      "Time (s),A01,A02\n"
      "0,1.0,1.1\n"
      "30,0.9,1.0\n"
      "Exported by KestrelScan 7\n");
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.0, 0.9));
  EXPECT_THAT(plate.report.warnings, Contains(HasSubstr("from line 4")));
}

TEST(WideReader, ReadsTheSectionsFile) {
  const Plate plate =
      ReadPlateFile(std::string(RATEWELL_TEST_DATA_DIR) + "/plates/wide_sections.tsv");
  EXPECT_EQ(plate.report.format, "wide");
  EXPECT_EQ(plate.report.delimiter, "tab");
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 977.0));
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 0.25, 0.5});
  EXPECT_THAT(SeriesOf(plate, "A01", 340).value, ElementsAre(1.201, 1.185, 1.169));
  EXPECT_THAT(SeriesOf(plate, "A02", 977).value, ElementsAre(0.130, 0.131, 0.130));
  EXPECT_THAT(SeriesOf(plate, "H12", 340).status,
              ElementsAre(PointStatus::kValid, PointStatus::kValid, PointStatus::kSaturated));
  EXPECT_THAT(plate.temperature_C, ElementsAre(25.0, 25.1, 25.1));
  EXPECT_THAT(plate.report.warnings, IsEmpty());
}

TEST(WideReader, ReadsTheSuffixFile) {
  const Plate plate =
      ReadPlateFile(std::string(RATEWELL_TEST_DATA_DIR) + "/plates/wide_suffixes.csv");
  EXPECT_EQ(plate.report.time_unit, "h:mm:ss");
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 977.0));
  ExpectTimes(SeriesOf(plate, "B02", 977), {0.0, 1.0 / 3.0, 2.0 / 3.0, 1.0});
  EXPECT_THAT(SeriesOf(plate, "B02", 977).value, ElementsAre(0.130, 0.130, 0.131, 0.130));
  EXPECT_THAT(plate.temperature_C, ElementsAre(30.0, 30.0, 30.1, 30.1));
}

}  // namespace
}  // namespace ratewell
