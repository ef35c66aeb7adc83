// Tests of the plate writers: the exact text of small tables, and the round
// trip writer → importer (importers/read_plate.h) for every layout and form.
#include "simulate/plate_writer.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <limits>
#include <sstream>
#include <string>

#include "importers/input_error.h"
#include "importers/read_plate.h"
#include "simulate/simulator.h"

namespace ratewell {
namespace {

namespace fs = std::filesystem;
using ::testing::HasSubstr;
using ::testing::Not;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::vector<std::string> Lines(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) lines.push_back(line);
  return lines;
}

// 96 wells, one channel at 340 nm, reads at 30 s and 90 s at 25 °C:
// A01 valid twice; B02 saturated, then missing.
Plate TinyPlate() {
  Plate plate;
  plate.Allocate(PlateGeometry{8, 12}, {340.0});
  plate.at(0, 0).Append(0.5, 1.23456, PointStatus::kValid);
  plate.at(0, 0).Append(1.5, 0.5, PointStatus::kValid);
  plate.at(0, 13).Append(0.5, kNaN, PointStatus::kSaturated);
  plate.at(0, 13).Append(1.5, kNaN, PointStatus::kMissing);
  plate.temperature_time_min = {0.5, 1.5};
  plate.temperature_C = {25.0, 25.0};
  return plate;
}

TEST(PlateTableText, LongTableHasOneRowPerPoint) {
  PlateTableOptions options;
  options.layout = TableLayout::kLong;
  EXPECT_EQ(PlateTableText(TinyPlate(), options, TextFormat{}),
            "Well,Time (s),Wavelength (nm),Absorbance\n"
            "A01,30,340,1.2346\n"
            "A01,90,340,0.5000\n"
            "B02,30,340,OVER\n"
            "B02,90,340,\n");
}

TEST(PlateTableText, WideTableHasATimeAndTemperatureColumn) {
  PlateTableOptions options;
  options.layout = TableLayout::kWide;
  EXPECT_EQ(PlateTableText(TinyPlate(), options, TextFormat{}),
            "Time (s),Temperature (°C),A01,B02\n"
            "30,25.0,1.2346,OVER\n"
            "90,25.0,0.5000,\n");
}

TEST(PlateTableText, SemicolonDecimalCommaCrlfAndBom) {
  PlateTableOptions options;
  options.layout = TableLayout::kWide;
  options.time_style = TimeStyle::kMinutes;
  TextFormat format;
  format.delimiter = ';';
  format.decimal_comma = true;
  format.crlf = true;
  format.utf8_bom = true;
  EXPECT_EQ(PlateTableText(TinyPlate(), options, format),
            "\xEF\xBB\xBFTime (min);Temperature (°C);A01;B02\r\n"
            "0,5;25,0;1,2346;OVER\r\n"
            "1,5;25,0;0,5000;\r\n");
}

TEST(PlateTableText, GridBlocksAreHeadedByReadTimeWavelengthAndTemperature) {
  PlateTableOptions options;
  options.layout = TableLayout::kGrid;
  options.overflow_marker = "****";
  TextFormat format;
  format.delimiter = '\t';
  const std::vector<std::string> lines = Lines(PlateTableText(TinyPlate(), options, format));
  // Two blocks of heading + numbers + 8 rows + blank line.
  ASSERT_EQ(lines.size(), 22u);
  EXPECT_EQ(lines[0], "Read 1 - 0:00:30 - 340 nm - 25.0 °C");
  EXPECT_EQ(lines[1], "\t1\t2\t3\t4\t5\t6\t7\t8\t9\t10\t11\t12");
  EXPECT_EQ(lines[2], "A\t1.2346\t\t\t\t\t\t\t\t\t\t\t");
  EXPECT_EQ(lines[3], "B\t\t****\t\t\t\t\t\t\t\t\t\t");
  EXPECT_EQ(lines[9], "H\t\t\t\t\t\t\t\t\t\t\t\t");
  EXPECT_EQ(lines[10], "");
  EXPECT_EQ(lines[11], "Read 2 - 0:01:30 - 340 nm - 25.0 °C");
  EXPECT_EQ(lines[13], "A\t0.5000\t\t\t\t\t\t\t\t\t\t\t");
}

TEST(PlateTableText, TimeStylesAndRounding) {
  Plate plate;
  plate.Allocate(PlateGeometry{8, 12}, {340.0});
  plate.at(0, 0).Append(0.2505, 2.5, PointStatus::kValid);        // 15.03 s
  plate.at(0, 0).Append(61.0, -2.5, PointStatus::kValid);         // 1:01:00
  plate.at(0, 0).Append(61.5125, -0.00004, PointStatus::kValid);  // 1:01:30.750
  PlateTableOptions options;
  options.layout = TableLayout::kLong;
  options.decimals = 0;  // half away from zero: 2.5 → 3, −2.5 → −3
  EXPECT_EQ(PlateTableText(plate, options, TextFormat{}),
            "Well,Time (s),Wavelength (nm),Absorbance\n"
            "A01,15.03,340,3\n"
            "A01,3660,340,-3\n"
            "A01,3690.75,340,0\n");
  options.time_style = TimeStyle::kClock;
  options.decimals = 4;
  EXPECT_EQ(PlateTableText(plate, options, TextFormat{}),
            "Well,Time,Wavelength (nm),Absorbance\n"
            "A01,0:00:15.030,340,2.5000\n"
            "A01,1:01:00,340,-2.5000\n"
            "A01,1:01:30.750,340,0.0000\n");  // no "-0.0000"
}

TEST(PlateTableText, PreambleCellsHoldingTheDelimiterAreQuoted) {
  PlateTableOptions options;
  options.preamble = {"Run: lot 7, \"fresh\" enzyme", "Lab: bench 3"};
  const std::vector<std::string> lines = Lines(PlateTableText(TinyPlate(), options, TextFormat{}));
  EXPECT_EQ(lines[0], "\"Run: lot 7, \"\"fresh\"\" enzyme\"");
  EXPECT_EQ(lines[1], "Lab: bench 3");
  EXPECT_EQ(lines[2], "Well,Time (s),Wavelength (nm),Absorbance");
}

TEST(PlateTableText, SeveralWavelengthsGetOneWideColumnPerWellAndChannel) {
  Plate plate;
  plate.Allocate(PlateGeometry{8, 12}, {340.0, 977.0});
  plate.at(0, 0).Append(0.0, 1.0, PointStatus::kValid);
  plate.at(1, 0).Append(0.0, 0.15, PointStatus::kValid);
  PlateTableOptions options;
  options.layout = TableLayout::kWide;
  EXPECT_EQ(PlateTableText(plate, options, TextFormat{}),
            "Time (s),A01 (340 nm),A01 (977 nm)\n"
            "0,1.0000,0.1500\n");
}

TEST(PlateTableText, BadOptionsAndUnsharedTimesAreRefused) {
  PlateTableOptions options;
  TextFormat format;
  format.decimal_comma = true;  // with a comma delimiter
  EXPECT_THROW(PlateTableText(TinyPlate(), options, format), std::invalid_argument);
  options.layout = TableLayout::kAuto;
  EXPECT_THROW(PlateTableText(TinyPlate(), options, TextFormat{}), std::invalid_argument);

  Plate plate = TinyPlate();
  plate.at(0, 13).time_min[1] = 1.75;  // B02 read later than A01
  options.layout = TableLayout::kWide;
  EXPECT_THROW(PlateTableText(plate, options, TextFormat{}), std::invalid_argument);
  options.layout = TableLayout::kGrid;
  EXPECT_THROW(PlateTableText(plate, options, TextFormat{}), std::invalid_argument);
  options.layout = TableLayout::kLong;
  EXPECT_NO_THROW(PlateTableText(plate, options, TextFormat{}));
}

TEST(PlateTableCells, NumbersStayNumbersForWorkbooks) {
  PlateTableOptions options;
  options.layout = TableLayout::kLong;
  const auto rows = PlateTableCells(TinyPlate(), options);
  ASSERT_EQ(rows.size(), 5u);
  EXPECT_EQ(std::get<std::string>(rows[1][0]), "A01");
  EXPECT_EQ(std::get<double>(rows[1][1]), 30.0);
  EXPECT_EQ(std::get<double>(rows[1][3]), 1.2346);
  EXPECT_EQ(std::get<std::string>(rows[3][3]), "OVER");
  EXPECT_TRUE(std::holds_alternative<std::monostate>(rows[4][3]));
}

// ---------------------------------------------------------------------------
// Files.

class TempFolder {
 public:
  explicit TempFolder(const std::string& tag) {
    path_ = fs::temp_directory_path() / ("ratewell-pw-" + tag + "-" + std::to_string(::getpid()));
    fs::remove_all(path_);
    fs::create_directories(path_);
  }
  ~TempFolder() {
    std::error_code ignored;
    fs::remove_all(path_, ignored);
  }
  std::string path() const { return path_.string(); }
  std::string operator/(const std::string& name) const { return (path_ / name).string(); }

 private:
  fs::path path_;
};

std::string ReadBytes(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

TEST(WriteFileAtomically, ReplacesOutputsButNeverAProtectedInput) {
  TempFolder folder("atomic");
  const std::string out = folder / "out.csv";
  WriteFileAtomically(out, "first\n");
  WriteFileAtomically(out, "second\n");
  EXPECT_EQ(ReadBytes(out), "second\n");

  const std::string input = folder / "input.csv";
  std::ofstream(input) << "precious\n";
  // The same file spelled another way is still caught.
  const std::string other_spelling = folder.path() + "/./input.csv";
  try {
    WritePlateText(TinyPlate(), other_spelling, PlateTableOptions{}, TextFormat{}, {input});
    ADD_FAILURE() << "an input file was overwritten";
  } catch (const InputError& e) {
    EXPECT_THAT(e.reason(), HasSubstr("over an input file"));
    EXPECT_EQ(e.file(), input);
  }
  EXPECT_EQ(ReadBytes(input), "precious\n");
  int entries = 0;
  for (const auto& entry : fs::directory_iterator(folder.path())) {
    EXPECT_THAT(entry.path().filename().string(), Not(HasSubstr(".tmp-")));
    ++entries;
  }
  EXPECT_EQ(entries, 2);
}

TEST(WriteFileAtomically, MissingFolderIsAClearError) {
  TempFolder folder("missing");
  try {
    WriteFileAtomically(folder / "no/such/folder/x.csv", "x");
    ADD_FAILURE() << "no error";
  } catch (const std::runtime_error& e) {
    EXPECT_THAT(std::string(e.what()), HasSubstr("x.csv: cannot create a temporary file"));
  }
}

// ---------------------------------------------------------------------------
// Round trip: what the writer writes, the importer reads back point for point.

// A simulated plate with the features the files must carry: four channels
// (340 nm, 405 nm, the 900/977 nm water pair), saturated points, temperatures
// and - added by hand - a missing point.
Plate SimulatedTestPlate(int wells) {
  const std::string text = R"({"run": "round trip [invented]",
    "plate": {"wells": )" + std::to_string(wells) +
                           R"(},
    "reads": {"interval_s": 37.5, "count": 4, "start_delay_s": 12, "temperature_C": 30.0},
    "extra_wavelengths_nm": [405],
    "pathlength": {"cm": 0.55, "water_peak": true},
    "kinetics": {"model": "michaelis-menten", "vmax_uM_per_min": 20, "km_uM": 30},
    "coupling_tau_min": 0.2, "noise_sd_A": 0.003, "seed": 5,
    "detector": {"ceiling_A": 3.0},
    "design": {"substrate_uM": [5, 50, 500], "saturating": {"wells": 2, "start_A": 3.3},
               "standards_uM": [0, 100, 200]}})";
  Plate plate = SimulatePlate(ParseScenario(text, "round_trip.json")).plate;
  Series& series = plate.at(plate.ChannelOf(340.0), 1);  // A02, second read
  series.value[1] = kNaN;
  series.status[1] = PointStatus::kMissing;
  return plate;
}

struct RoundTripCase {
  const char* name;
  TableLayout layout;
  bool xlsx;
  TextFormat text;
  TimeStyle time;
  int wells;
};

// Names the case in failure messages instead of dumping its bytes.
void PrintTo(const RoundTripCase& c, std::ostream* os) { *os << c.name; }

std::string CaseName(const ::testing::TestParamInfo<RoundTripCase>& info) {
  return info.param.name;
}

class PlateRoundTrip : public ::testing::TestWithParam<RoundTripCase> {};

// Times: the file holds seconds to the millisecond (or exact minutes, or
// h:mm:ss.fff); read back and divided by 60 they agree to rounding.
constexpr double kTimeToleranceMin = 1e-9;

TEST_P(PlateRoundTrip, ImporterReadsBackEveryPoint) {
  const RoundTripCase& c = GetParam();
  const Plate written = SimulatedTestPlate(c.wells);
  ASSERT_GT(written.CountPoints(PointStatus::kSaturated), 0);
  PlateTableOptions options;
  options.layout = c.layout;
  options.time_style = c.time;
  options.preamble = {"Simulated run: round trip", "Lab: nowhere"};
  const std::string bytes = c.xlsx ? XlsxBytes({PlateTableSheet(written, options, "Plate")})
                                   : PlateTableText(written, options, c.text);
  const Plate read = ReadPlateBytes(bytes, std::string(c.name) + (c.xlsx ? ".xlsx" : ".csv"));

  EXPECT_EQ(read.report.format, std::string(c.xlsx ? "xlsx/" : "") + TableLayoutToString(c.layout));
  EXPECT_EQ(read.report.decimal_comma, c.text.decimal_comma);
  EXPECT_EQ(read.geometry, written.geometry);
  ASSERT_EQ(read.wavelengths_nm, written.wavelengths_nm);
  EXPECT_EQ(read.CountPoints(PointStatus::kSaturated),
            written.CountPoints(PointStatus::kSaturated));
  EXPECT_EQ(read.CountPoints(PointStatus::kMissing), 1);
  for (int channel = 0; channel < written.num_channels(); ++channel) {
    for (int well = 0; well < written.geometry.num_wells(); ++well) {
      const Series& a = written.at(channel, well);
      const Series& b = read.at(channel, well);
      ASSERT_EQ(b.size(), a.size()) << WellName(well, written.geometry);
      for (std::size_t i = 0; i < a.size(); ++i) {
        EXPECT_NEAR(b.time_min[i], a.time_min[i], kTimeToleranceMin);
        ASSERT_EQ(b.status[i], a.status[i]) << WellName(well, written.geometry) << " read " << i;
        if (a.status[i] == PointStatus::kValid) {
          // Written with 4 places from a value already rounded to 4 places:
          // both sides are the double nearest the same decimal.
          EXPECT_EQ(b.value[i], a.value[i]) << WellName(well, written.geometry) << " read " << i;
        } else {
          EXPECT_TRUE(std::isnan(b.value[i]));
        }
      }
    }
  }
  if (c.layout != TableLayout::kLong) {
    ASSERT_EQ(read.temperature_C.size(), 4u);
    for (double celsius : read.temperature_C) EXPECT_EQ(celsius, 30.0);
  }
}

TextFormat Text(char delimiter, bool decimal_comma = false, bool crlf = false, bool bom = false) {
  TextFormat format;
  format.delimiter = delimiter;
  format.decimal_comma = decimal_comma;
  format.crlf = crlf;
  format.utf8_bom = bom;
  return format;
}

INSTANTIATE_TEST_SUITE_P(
    EveryLayout, PlateRoundTrip,
    ::testing::Values(
        RoundTripCase{"long_comma", TableLayout::kLong, false, Text(','), TimeStyle::kSeconds, 96},
        RoundTripCase{"long_semicolon_decimal_comma_crlf", TableLayout::kLong, false,
                      Text(';', true, true), TimeStyle::kMinutes, 96},
        RoundTripCase{"long_tab_clock", TableLayout::kLong, false, Text('\t'), TimeStyle::kClock,
                      96},
        RoundTripCase{"wide_comma", TableLayout::kWide, false, Text(','), TimeStyle::kSeconds, 96},
        RoundTripCase{"wide_semicolon_decimal_comma_bom", TableLayout::kWide, false,
                      Text(';', true, false, true), TimeStyle::kSeconds, 96},
        RoundTripCase{"wide_tab_decimal_comma_clock", TableLayout::kWide, false, Text('\t', true),
                      TimeStyle::kClock, 96},
        RoundTripCase{"grid_comma", TableLayout::kGrid, false, Text(','), TimeStyle::kSeconds, 96},
        RoundTripCase{"grid_semicolon_decimal_comma_crlf_bom", TableLayout::kGrid, false,
                      Text(';', true, true, true), TimeStyle::kSeconds, 96},
        RoundTripCase{"grid_tab_384", TableLayout::kGrid, false, Text('\t'), TimeStyle::kSeconds,
                      384},
        RoundTripCase{"grid_comma_1536", TableLayout::kGrid, false, Text(','), TimeStyle::kSeconds,
                      1536},
        RoundTripCase{"long_comma_1536", TableLayout::kLong, false, Text(','), TimeStyle::kSeconds,
                      1536},
        RoundTripCase{"xlsx_long", TableLayout::kLong, true, Text(','), TimeStyle::kSeconds, 96},
        RoundTripCase{"xlsx_wide_minutes", TableLayout::kWide, true, Text(','), TimeStyle::kMinutes,
                      96},
        RoundTripCase{"xlsx_grid_384", TableLayout::kGrid, true, Text(','), TimeStyle::kSeconds,
                      384}),
    CaseName);

// The files RunScenarioFile writes read back through ReadPlateFile as the
// simulated plate.
TEST(PlateRoundTripFiles, EveryFileOfTheDocumentedScenarioReadsBack) {
  TempFolder out("files");
  const std::string scenario_path = std::string(RATEWELL_TEST_DATA_DIR) + "/scenarios/full_96.json";
  const SimulationOutput result = RunScenarioFile(scenario_path, out.path());
  const Plate expected = SimulatePlate(ReadScenarioFile(scenario_path)).plate;
  int plates = 0;
  for (const std::string& path : result.files_written) {
    const std::string name = fs::path(path).filename().string();
    if (name == "layout.csv" || name == "ASSAY.json" || name == "truth.json") continue;
    ++plates;
    const Plate read = ReadPlateFile(path);
    EXPECT_EQ(read.wavelengths_nm, expected.wavelengths_nm) << name;
    EXPECT_EQ(read.CountPoints(PointStatus::kSaturated),
              expected.CountPoints(PointStatus::kSaturated))
        << name;
    EXPECT_GT(read.CountPoints(PointStatus::kSaturated), 0) << name;
    EXPECT_EQ(read.Reads(), 21) << name;
    long differences = 0;
    for (int channel = 0; channel < expected.num_channels(); ++channel) {
      for (int well = 0; well < 96; ++well) {
        const Series& a = expected.at(channel, well);
        const Series& b = read.at(channel, well);
        if (a.size() != b.size()) {
          ++differences;
          continue;
        }
        for (std::size_t i = 0; i < a.size(); ++i) {
          if (a.status[i] != b.status[i] ||
              std::fabs(a.time_min[i] - b.time_min[i]) > kTimeToleranceMin ||
              (a.status[i] == PointStatus::kValid && a.value[i] != b.value[i])) {
            ++differences;
          }
        }
      }
    }
    EXPECT_EQ(differences, 0) << name;
  }
  EXPECT_EQ(plates, 7);
}

}  // namespace
}  // namespace ratewell
