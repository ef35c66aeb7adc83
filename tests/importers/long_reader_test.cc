// The long layout: one row per (well, time[, wavelength]). Files are written
// inline (invented data) so each test shows exactly what the reader meets.
#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <bit>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <random>
#include <string>
#include <vector>

#include "importers/detail/cells.h"
#include "importers/detail/table_readers.h"
#include "importers/input_error.h"
#include "importers/read_plate.h"

namespace ratewell {
namespace {

using ::testing::Contains;
using ::testing::ElementsAre;
using ::testing::HasSubstr;
using ::testing::Not;

// Times are converted from seconds or clock text by one division or a few
// additions; 1e-12 min leaves room for that rounding and nothing else.
constexpr double kTimeTolerance = 1e-12;

Plate Read(const std::string& text, const ReadOptions& options = {}) {
  return ReadPlateBytes(text, "long.csv", options);
}

int WellIndex(const Plate& plate, const std::string& name) {
  const std::optional<WellPosition> position = ParseWellName(name);
  return position->row * plate.geometry.columns + position->column;
}

const Series& SeriesOf(const Plate& plate, const std::string& well, double nm = 340.0) {
  return plate.at(plate.ChannelOf(nm), WellIndex(plate, well));
}

void ExpectTimes(const Series& series, const std::vector<double>& expected_min) {
  ASSERT_EQ(series.size(), expected_min.size());
  for (std::size_t i = 0; i < expected_min.size(); ++i) {
    EXPECT_NEAR(series.time_min[i], expected_min[i], kTimeTolerance) << "point " << i;
  }
}

TEST(LongReader, ReadsRowsSortedByTimeThenWell) {
  const Plate plate = Read(
      "Well,Time (s),A340\n"
      "A01,0,1.200\nA02,0,1.100\n"
      "A01,30,1.150\nA02,30,1.080\n"
      "A01,60,1.100\nA02,60,1.060\n");
  EXPECT_EQ(plate.report.format, "long");
  EXPECT_EQ(plate.report.time_unit, "s");
  EXPECT_EQ(plate.geometry, (PlateGeometry{8, 12}));
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0));
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 0.5, 1.0});
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.200, 1.150, 1.100));
  EXPECT_THAT(SeriesOf(plate, "A02").value, ElementsAre(1.100, 1.080, 1.060));
  EXPECT_TRUE(SeriesOf(plate, "B01").empty());
  EXPECT_TRUE(plate.report.warnings.empty());
}

TEST(LongReader, ReadsRowsSortedByWellThenTimeWithDifferentTimesPerWell) {
  // A reader that visits wells one after another reads each at its own time.
  const Plate plate = Read(
      "Well,Time [min],Absorbance (340 nm)\n"
      "A01,0.00,1.20\nA01,1.00,1.10\nA01,2.00,1.00\nA01,3.00,0.90\nA01,4.00,0.80\n"
      "B07,0.05,1.30\nB07,1.05,1.25\nB07,2.05,1.20\nB07,3.05,1.15\nB07,4.05,1.10\n");
  EXPECT_EQ(plate.report.time_unit, "min");
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 1.0, 2.0, 3.0, 4.0});
  ExpectTimes(SeriesOf(plate, "B07"), {0.05, 1.05, 2.05, 3.05, 4.05});
  EXPECT_THAT(SeriesOf(plate, "B07").value, ElementsAre(1.30, 1.25, 1.20, 1.15, 1.10));
}

TEST(LongReader, ReadsInterleavedRowsWithColumnsInAnyOrder) {
  const Plate plate = Read(
      "Reading,Well,t/s\n"
      "0.7,A01,0\n0.4,C03,0\n0.8,A01,10\n0.5,C03,10\n0.6,C03,20\n0.9,A01,20\n");
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 10.0 / 60.0, 20.0 / 60.0});
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(0.7, 0.8, 0.9));
  EXPECT_THAT(SeriesOf(plate, "C03").value, ElementsAre(0.4, 0.5, 0.6));
}

TEST(LongReader, AcceptsTheUsualSpellingsOfTheTimeUnit) {
  struct Case {
    std::string header;
    std::string zero;  // the first read's time cell
    std::string cell;  // the second read's, 1.5 min
    std::string unit;  // as the report names it
  };
  const std::vector<Case> cases = {{"Time (s)", "0", "90", "s"},
                                   {"time [min]", "0", "1.5", "min"},
                                   {"t/s", "0", "90", "s"},
                                   {"Time_h", "0", "0.025", "h"},
                                   {"Kinetic time [sec]", "0", "90", "s"},
                                   {"Time (hh:mm:ss)", "0:00:00", "0:01:30", "h:mm:ss"},
                                   {"Time", "00:00", "01:30", "h:mm:ss"},
                                   {"Time", "00:00:00.000", "00:01:30.000", "h:mm:ss"}};
  for (const Case& c : cases) {
    SCOPED_TRACE(c.header + " / " + c.cell);
    const Plate plate =
        Read("Well," + c.header + ",OD340\nA01," + c.zero + ",1.0\nA01," + c.cell + ",0.9\n");
    ExpectTimes(SeriesOf(plate, "A01"), {0.0, 1.5});
    EXPECT_EQ(plate.report.time_unit, c.unit);
    EXPECT_THAT(plate.report.warnings, Not(Contains(HasSubstr("read as seconds"))));
  }
}

TEST(LongReader, BareTimesAreSecondsWithAWarningUnlessAUnitIsSet) {
  const std::string text = "Well,Time,Value\nA01,0,1.0\nA01,120,0.9\n";
  const Plate guessed = Read(text);
  ExpectTimes(SeriesOf(guessed, "A01"), {0.0, 2.0});
  EXPECT_EQ(guessed.report.time_unit, "s");
  EXPECT_THAT(guessed.report.warnings, Contains(HasSubstr("read as seconds")));

  ReadOptions minutes;
  minutes.time_unit = TimeUnit::kMinutes;
  const Plate set = Read(text, minutes);
  ExpectTimes(SeriesOf(set, "A01"), {0.0, 120.0});
  EXPECT_EQ(set.report.time_unit, "min");
  EXPECT_THAT(set.report.warnings, Not(Contains(HasSubstr("read as seconds"))));
}

TEST(LongReader, AUnitInTheHeaderWinsOverTheOptions) {
  ReadOptions hours;
  hours.time_unit = TimeUnit::kHours;
  const Plate plate = Read("Well,Time (s),A340\nA01,0,1\nA01,60,0.9\n", hours);
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 1.0});
}

TEST(LongReader, ReadsSeveralWavelengthsFromAWavelengthColumnInAscendingChannels) {
  const Plate plate = Read(
      "Well\tWavelength\tTime (s)\tOD\n"
      "A01\t977\t0\t0.131\nA01\t340\t0\t1.201\nA01\t900\t0\t0.040\n"
      "A01\t977\t60\t0.132\nA01\t340\t60\t1.150\nA01\t900\t60\t0.041\n");
  EXPECT_EQ(plate.report.delimiter, "tab");
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 900.0, 977.0));
  EXPECT_THAT(SeriesOf(plate, "A01", 340).value, ElementsAre(1.201, 1.150));
  EXPECT_THAT(SeriesOf(plate, "A01", 900).value, ElementsAre(0.040, 0.041));
  EXPECT_THAT(SeriesOf(plate, "A01", 977).value, ElementsAre(0.131, 0.132));
  EXPECT_TRUE(plate.report.warnings.empty());
}

TEST(LongReader, ReadsOneValueColumnPerWavelength) {
  const Plate plate = Read(
      "Well,Time (min),A340,A977,A900\n"
      "B02,0,1.20,0.130,0.040\n"
      "B02,1,1.10,0.131,0.041\n");
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 900.0, 977.0));
  EXPECT_THAT(SeriesOf(plate, "B02", 977).value, ElementsAre(0.130, 0.131));
  EXPECT_THAT(SeriesOf(plate, "B02", 900).value, ElementsAre(0.040, 0.041));
}

TEST(LongReader, TakesTheTemperatureFromTheFirstWellsRows) {
  const Plate plate = Read(
      "Well;Time (s);Abs;Temperature (°C)\n"
      "A01;0;1,20;25,0\nA02;0;1,10;25,0\n"
      "A01;30;1,15;25,4\nA02;30;1,05;25,5\n"
      "A01;60;1,10;;\nA02;60;1,00;25,9\n");
  EXPECT_TRUE(plate.report.decimal_comma);
  EXPECT_THAT(plate.temperature_time_min, ElementsAre(0.0, 0.5));
  EXPECT_THAT(plate.temperature_C, ElementsAre(25.0, 25.4));
  EXPECT_THAT(SeriesOf(plate, "A02").value, ElementsAre(1.10, 1.05, 1.00));
}

TEST(LongReader, Picks384And1536PlatesFromTheHighestWellNamed) {
  const Plate p384 = Read("Well,Time (s),A340\nA01,0,1\nP24,0,2\n");
  EXPECT_EQ(p384.geometry, (PlateGeometry{16, 24}));
  EXPECT_THAT(SeriesOf(p384, "P24").value, ElementsAre(2.0));

  const Plate wide_columns = Read("Well,Time (s),A340\nA13,0,1\n");
  EXPECT_EQ(wide_columns.geometry, (PlateGeometry{16, 24}));

  const Plate p1536 = Read("Well,Time (s),A340\nA01,0,1\nAF48,0,3\nQ30,0,2\n");
  EXPECT_EQ(p1536.geometry, (PlateGeometry{32, 48}));
  EXPECT_EQ(p1536.series.size(), 1536u);
  EXPECT_THAT(SeriesOf(p1536, "AF48").value, ElementsAre(3.0));
  EXPECT_THAT(SeriesOf(p1536, "Q30").value, ElementsAre(2.0));
}

TEST(LongReader, AcceptsUnpaddedAndLowerCaseWellNames) {
  const Plate plate = Read("Well,Time (s),A340\na1,0,1.0\nA01,30,0.9\nA1,60,0.8\n h03 ,0,2\n");
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.0, 0.9, 0.8));
  EXPECT_THAT(SeriesOf(plate, "H03").value, ElementsAre(2.0));
}

TEST(LongReader, MarksOverflowAsSaturatedAndEmptyOrNaAsMissing) {
  const Plate plate = Read(
      "Well,Time (s),A340\n"
      "A01,0,>3.5\nA01,10,OVER\nA01,20,****\nA01,30,\nA01,40,NA\nA01,50,NaN\nA01,60,2.9\n");
  const Series& a01 = SeriesOf(plate, "A01");
  EXPECT_THAT(a01.status,
              ElementsAre(PointStatus::kSaturated, PointStatus::kSaturated, PointStatus::kSaturated,
                          PointStatus::kMissing, PointStatus::kMissing, PointStatus::kMissing,
                          PointStatus::kValid));
  for (std::size_t i = 0; i + 1 < a01.size(); ++i) EXPECT_TRUE(std::isnan(a01.value[i]));
  EXPECT_EQ(a01.value.back(), 2.9);
  EXPECT_EQ(plate.CountPoints(PointStatus::kSaturated), 3);
  EXPECT_EQ(plate.CountPoints(PointStatus::kMissing), 3);
}

TEST(LongReader, AcceptsUserOverflowMarkers) {
  const std::string text = "Well,Time (s),A340\nA01,0,1.0\nA01,10,Lamp limit\n";
  EXPECT_THROW(Read(text), InputError);
  ReadOptions options;
  options.overflow_markers = {"lamp LIMIT"};
  const Plate plate = Read(text, options);
  EXPECT_THAT(SeriesOf(plate, "A01").status,
              ElementsAre(PointStatus::kValid, PointStatus::kSaturated));
}

TEST(LongReader, SkipsPreambleBlankLinesAndIgnoresOtherColumns) {
  const Plate plate = Read(
      "KestrelScan 7 export,,\n"
      "Operator,analyst 3,\n"
      "Temperature setpoint: 30 C,,\n"
      ",,\n"
      "Plate,Well,Content,Time (s),Mean OD 340\n"
      "1,A01,RK-1 5 uM,0,1.2\n"
      "\n"
      "1,A01,RK-1 5 uM,15,1.1\n");
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.2, 1.1));
  EXPECT_THAT(plate.wavelengths_nm, ElementsAre(340.0));  // from "OD 340"
  EXPECT_TRUE(plate.report.warnings.empty());
}

TEST(LongReader, StopsAtAFooterWithAWarning) {
  const Plate plate = Read(
      "Well,Time (s),A340\n"
      "A01,0,1.2\nA01,15,1.1\n"
      "\n"
      "Export finished,2031-05-14\n"
      "Checksum: 7f3a\n");
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.2, 1.1));
  ASSERT_EQ(plate.report.warnings.size(), 1u);
  EXPECT_THAT(plate.report.warnings[0], HasSubstr("ignored 2 lines after the table, from line 5"));
  EXPECT_THAT(plate.report.warnings[0], HasSubstr("Export finished"));
}

TEST(LongReader, ReadsQuotedCells) {
  const Plate plate = Read(
      "\"Well\",\"Time (s)\",\"A340\"\n"
      "\"A01\",\"0\",\"1.25\"\n"
      "\"A01\",\"30\",\"1.20\"\n");
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.25, 1.20));
}

TEST(LongReader, AssumesTheWavelengthWhenNoneIsNamed) {
  const std::string text = "Well,Time (s),Value\nA01,0,1.0\n";
  const Plate assumed = Read(text);
  EXPECT_THAT(assumed.wavelengths_nm, ElementsAre(340.0));
  EXPECT_THAT(assumed.report.warnings, Contains(HasSubstr("names no wavelength")));
  ReadOptions options;
  options.assumed_wavelength_nm = 365.0;
  EXPECT_THAT(Read(text, options).wavelengths_nm, ElementsAre(365.0));
}

TEST(LongReader, ReadsALargePlateQuicklyEnoughToNotice) {
  // 1536 wells x 20 reads: checks the reservation paths give the same series
  // whether rows are sorted by time or by well.
  std::string by_time = "Well,Time (s),A340\n";
  std::string by_well = by_time;
  char line[64];
  for (int read = 0; read < 20; ++read) {
    for (int well = 0; well < 1536; ++well) {
      const WellPosition p{well / 48, well % 48};
      std::snprintf(line, sizeof line, "%s,%d,%.4f\n", WellName(p).c_str(), read * 10,
                    1.0 + 0.0001 * well - 0.001 * read);
      by_time += line;
    }
  }
  for (int well = 0; well < 1536; ++well) {
    for (int read = 0; read < 20; ++read) {
      const WellPosition p{well / 48, well % 48};
      std::snprintf(line, sizeof line, "%s,%d,%.4f\n", WellName(p).c_str(), read * 10,
                    1.0 + 0.0001 * well - 0.001 * read);
      by_well += line;
    }
  }
  const Plate a = Read(by_time);
  const Plate b = Read(by_well);
  ASSERT_EQ(a.geometry, (PlateGeometry{32, 48}));
  ASSERT_EQ(b.geometry, a.geometry);
  EXPECT_EQ(a.Reads(), 20);
  EXPECT_EQ(a.WellsWithData(), 1536);
  for (std::size_t i = 0; i < a.series.size(); ++i) {
    ASSERT_EQ(a.series[i].time_min, b.series[i].time_min) << "series " << i;
    ASSERT_EQ(a.series[i].value, b.series[i].value) << "series " << i;
  }
  // AF48 at read 19: 1.0 + 0.1535 - 0.019, written with four decimals.
  EXPECT_EQ(SeriesOf(a, "AF48").value.back(), 1.1345);
}

}  // namespace
}  // namespace ratewell

namespace ratewell::detail {
namespace {

// The long reader's fast paths must agree exactly with the general parsers
// (ParseNumber rests on std::from_chars, which rounds correctly).
TEST(LongReaderFastPaths, FastNumberMatchesParseNumberBitForBit) {
  std::mt19937_64 random(7);  // fixed seed: the same strings every run
  int fast = 0;
  for (int trial = 0; trial < 200000; ++trial) {
    const bool decimal_comma = trial % 2 == 1;
    std::string text = random() % 5 == 0 ? "-" : "";
    const int digits = 1 + static_cast<int>(random() % 18);
    const int point = static_cast<int>(random() % (digits + 1));  // == digits: no separator
    for (int i = 0; i < digits; ++i) {
      if (i == point && i > 0) text += decimal_comma ? ',' : '.';
      text += static_cast<char>('0' + random() % 10);
    }
    const std::optional<double> general = ParseNumber(text, decimal_comma);
    const std::optional<double> quick = FastNumber(text, decimal_comma);
    if (!quick) continue;
    ++fast;
    ASSERT_TRUE(general.has_value()) << text;
    ASSERT_EQ(std::bit_cast<std::uint64_t>(*quick), std::bit_cast<std::uint64_t>(*general)) << text;
  }
  EXPECT_GT(fast, 100000);  // most strings take the fast path
  for (const char* declined : {"", "-", ".5", "5.", "1e3", "+1", "1.2.3", " 1", "0x10"}) {
    EXPECT_FALSE(FastNumber(declined, false).has_value()) << declined;
  }
}

TEST(LongReaderFastPaths, ReadTimeCellMatchesParseTimeMinutesBitForBit) {
  std::mt19937_64 random(11);  // fixed seed: the same strings every run
  for (int trial = 0; trial < 50000; ++trial) {
    const TimeUnit unit = static_cast<TimeUnit>(trial % 4);
    std::string text = std::to_string(random() % 100000);
    if (trial % 3 == 0) text += "." + std::to_string(random() % 1000);
    if (trial % 7 == 0) text = "-" + text;
    double quick = -1.0;
    const bool read = ReadTimeCell(text, unit, false, &quick);
    const std::optional<double> general = ParseTimeMinutes(text, unit, false);
    ASSERT_EQ(read, general.has_value()) << text;
    if (read) {
      ASSERT_EQ(std::bit_cast<std::uint64_t>(quick), std::bit_cast<std::uint64_t>(*general))
          << text;
    }
  }
}

TEST(LongReaderFastPaths, FastWellNameMatchesParseWellName) {
  const std::string letters = "AaFfGgHhPpZz";
  std::vector<std::string> names;
  for (char first : letters) {
    for (const std::string& second :
         {std::string(), std::string("A"), std::string("f"), std::string("G"), std::string("z")}) {
      for (const char* digits :
           {"0", "1", "01", "001", "12", "24", "048", "48", "49", "100", "1000"}) {
        names.push_back(std::string(1, first) + second + digits);
      }
    }
  }
  for (const std::string& name : names) {
    const std::optional<WellPosition> general = ParseWellName(name);
    const std::optional<WellPosition> quick = FastWellName(name);
    EXPECT_EQ(quick.has_value(), general.has_value()) << name;
    if (quick && general) {
      EXPECT_EQ(*quick, *general) << name;
    }
  }
}

}  // namespace
}  // namespace ratewell::detail
