// The grid layout: one plate-shaped block per read, headed by its time.
// Files are written inline or by small loops (invented data).
#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
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
  return ReadPlateBytes(text, "grid.csv", options);
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

// One block of the given size: heading line, column numbers, lettered rows.
// Cell (r, c) holds base + 0.01 r + 0.0001 c, written with four decimals.
std::string Block(const std::string& heading, int rows, int columns, double base,
                  char delimiter = ',') {
  std::string text = heading + "\n";
  for (int c = 1; c <= columns; ++c) text += delimiter + std::to_string(c);
  text += "\n";
  char cell[32];
  for (int r = 0; r < rows; ++r) {
    text += RowLabel(r);
    for (int c = 0; c < columns; ++c) {
      std::snprintf(cell, sizeof cell, "%c%.4f", delimiter, base + 0.01 * r + 0.0001 * c);
      text += cell;
    }
    text += "\n";
  }
  return text;
}

TEST(GridReader, ReadsTheCyclesFile) {
  const Plate plate =
      ReadPlateFile(std::string(RATEWELL_TEST_DATA_DIR) + "/plates/grid_cycles.csv");
  EXPECT_EQ(plate.report.format, "grid");
  EXPECT_EQ(plate.report.time_unit, "h:mm:ss");
  EXPECT_EQ(plate.geometry, (PlateGeometry{8, 12}));
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0));
  EXPECT_EQ(plate.Reads(), 3);
  ExpectTimes(SeriesOf(plate, "C05"), {0.0, 1.5, 3.0});
  // a = 1.000 + 0.010 row - 0.001 column - 0.100 cycle (see the data README).
  EXPECT_THAT(SeriesOf(plate, "C05").value, ElementsAre(1.016, 0.916, 0.816));
  EXPECT_THAT(SeriesOf(plate, "A01").status,
              ElementsAre(PointStatus::kValid, PointStatus::kMissing, PointStatus::kValid));
  EXPECT_THAT(SeriesOf(plate, "H12").status,
              ElementsAre(PointStatus::kValid, PointStatus::kValid, PointStatus::kSaturated));
  EXPECT_THAT(plate.temperature_time_min, ElementsAre(0.0, 1.5, 3.0));
  EXPECT_THAT(plate.temperature_C, ElementsAre(25.0, 25.1, 25.3));
  EXPECT_THAT(plate.report.warnings, IsEmpty());
}

TEST(GridReader, ReadsHeadingsInManyWordings) {
  struct Case {
    std::string heading;
    double minutes;
    double nm;       // NaN: none named
    double celsius;  // NaN: none named
  };
  const double none = std::nan("");
  const std::vector<Case> cases = {
      {"Cycle 4 \xE2\x80\x94 00:01:30 \xE2\x80\x94 340 nm", 1.5, 340, none},
      {"Read 2; t = 30 s; 977nm; 25.1 \xC2\xB0"
       "C",
       0.5, 977, 25.1},
      {"Kinetic read at 1.5 min (wavelength 900)", 1.5, 900, none},
      {"t=90s", 1.5, none, none},
      {"Measurement 3 | Time: 0.025 h | Temperature: 37.0", 1.5, none, 37.0},
      {"Time (s): 90, 340 nm, 30 degC", 1.5, 340, 30.0},
      {"01:30", 1.5, none, none},
      {"Kinetic cycle 2 of 40, 1 min 30 s, 340 nm", 1.5, 340, none},
      {"Read 7 at 0h 1min 30s", 1.5, none, none}};
  for (const Case& c : cases) {
    SCOPED_TRACE(c.heading);
    const Plate plate = Read(Block(c.heading, 8, 12, 1.0));
    ExpectTimes(SeriesOf(plate, "A01", std::isnan(c.nm) ? 340.0 : c.nm), {c.minutes});
    if (std::isnan(c.nm)) {
      EXPECT_THAT(plate.report.warnings, Contains(HasSubstr("names no wavelength")));
    } else {
      EXPECT_THAT(plate.wavelengths_nm, ElementsAre(c.nm));
    }
    if (std::isnan(c.celsius)) {
      EXPECT_THAT(plate.temperature_C, IsEmpty());
    } else {
      EXPECT_THAT(plate.temperature_C, ElementsAre(c.celsius));
    }
  }
}

TEST(GridReader, TakesTheTimeFromTheCornerCell) {
  std::string text = Block("", 8, 12, 1.0);
  text = "0:02:00" + text.substr(1);  // the heading line is empty: put the time in the corner
  const Plate plate = Read(text);
  ExpectTimes(SeriesOf(plate, "H12"), {2.0});
}

TEST(GridReader, BareHeadingTimesAreSecondsWithAWarningUnlessAUnitIsSet) {
  const std::string text = Block("Time: 30", 8, 12, 1.0) + Block("Time: 60", 8, 12, 0.9);
  const Plate guessed = Read(text);
  ExpectTimes(SeriesOf(guessed, "A01"), {0.5, 1.0});
  EXPECT_THAT(guessed.report.warnings, Contains(HasSubstr("without a unit")));
  ReadOptions options;
  options.time_unit = TimeUnit::kMinutes;
  const Plate set = Read(text, options);
  ExpectTimes(SeriesOf(set, "A01"), {30.0, 60.0});
  EXPECT_EQ(set.report.time_unit, "min");
}

TEST(GridReader, AWavelengthCarriesOverToTheFollowingBlocks) {
  const std::string text = "Wavelength: 340 nm\n" + Block("Read 1: 0 s", 8, 12, 1.0) +
                           Block("Read 2: 30 s", 8, 12, 0.9) + "\nWavelength: 977 nm\n" +
                           Block("Read 1: 0 s", 8, 12, 0.13) + Block("Read 2: 30 s", 8, 12, 0.14);
  const Plate plate = Read(text);
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 977.0));
  EXPECT_THAT(SeriesOf(plate, "B03", 340).value, ElementsAre(1.0102, 0.9102));
  EXPECT_THAT(SeriesOf(plate, "B03", 977).value, ElementsAre(0.1402, 0.1502));
}

TEST(GridReader, ReadsInterleavedWavelengths) {
  const std::string text =
      Block("t = 0 s, 340 nm", 8, 12, 1.0) + Block("t = 0 s, 977 nm", 8, 12, 0.13) +
      Block("t = 20 s, 340 nm", 8, 12, 0.9) + Block("t = 20 s, 977 nm", 8, 12, 0.14);
  const Plate plate = Read(text);
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 977.0));
  ExpectTimes(SeriesOf(plate, "H12", 977), {0.0, 1.0 / 3.0});
  EXPECT_EQ(plate.Reads(), 2);
}

TEST(GridReader, ReadsSemicolonBlocksWithDecimalCommas) {
  std::string text = "Lauf 1;;;;;;;;;;;;\n";
  text +=
      "Zyklus 1; 0 s; 25,5 \xC2\xB0"
      "C;;;;;;;;;;\n;1;2;3;4;5;6;7;8;9;10;11;12\n";
  for (int r = 0; r < 8; ++r) {
    text += RowLabel(r);
    for (int c = 0; c < 12; ++c) text += ";1," + std::to_string(r) + std::to_string(c % 10);
    text += "\n";
  }
  const Plate plate = Read(text);
  EXPECT_TRUE(plate.report.decimal_comma);
  EXPECT_EQ(plate.report.delimiter, "semicolon");
  EXPECT_THAT(SeriesOf(plate, "D05").value, ElementsAre(1.34));
  EXPECT_THAT(plate.temperature_C, ElementsAre(25.5));
}

TEST(GridReader, Reads384WellBlocks) {
  const Plate plate = Read(Block("90 s", 16, 24, 1.0) + Block("180 s", 16, 24, 0.9));
  EXPECT_EQ(plate.geometry, (PlateGeometry{16, 24}));
  EXPECT_EQ(plate.WellsWithData(), 384);
  ExpectTimes(SeriesOf(plate, "P24"), {1.5, 3.0});
  EXPECT_THAT(SeriesOf(plate, "P24").value, ElementsAre(1.1523, 1.0523));
}

TEST(GridReader, Reads1536WellBlocks) {
  const Plate plate = Read(Block("Read 1 - 00:00:10", 32, 48, 1.0, '\t'));
  EXPECT_EQ(plate.geometry, (PlateGeometry{32, 48}));
  EXPECT_EQ(plate.report.delimiter, "tab");
  EXPECT_EQ(plate.WellsWithData(), 1536);
  // AF48: row 31, column 47.
  EXPECT_THAT(SeriesOf(plate, "AF48").value, ElementsAre(1.3147));
  EXPECT_THAT(SeriesOf(plate, "AA01").value, ElementsAre(1.2600));
}

TEST(GridReader, SkipsPreambleAndWarnsAboutAFooter) {
  const std::string text = "KestrelScan 7\nUser: analyst 3\nDate: 2031-05-14 10:22:13\n\n" +
                           Block("Cycle 1 - 0 min", 8, 12, 1.0) + "\nEnd of run\nChecksum 7f3a\n";
  const Plate plate = Read(text);
  ExpectTimes(SeriesOf(plate, "A01"), {0.0});
  ASSERT_EQ(plate.report.warnings.size(), 2u);  // footer, and no wavelength named
  EXPECT_THAT(plate.report.warnings, Contains(HasSubstr("ignored 2 lines after the last block")));
}

TEST(GridReader, AClockTimeBesideADateIsNotTakenForTheReadTime) {
  // The wall-clock time of the read is not its time since the start; the
  // "45 s" after it is.
  const std::string text = Block("Read 1 - 2031-05-14 10:22:13 - 45 s", 8, 12, 1.0);
  ExpectTimes(SeriesOf(Read(text), "A01"), {0.75});
}

}  // namespace
}  // namespace ratewell
