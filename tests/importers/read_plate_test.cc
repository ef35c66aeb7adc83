// ReadPlateFile / ReadPlateBytes: encodings, delimiters, the report, layout
// choice and workbooks. Plate files are invented (see tests/data/plates/README.md).
#include "importers/read_plate.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>
#include <zip.h>

#include <cmath>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "importers/input_error.h"

namespace ratewell {
namespace {

using ::testing::Contains;
using ::testing::ElementsAre;
using ::testing::HasSubstr;
using ::testing::IsEmpty;

// Times are converted by one division or a few additions; 1e-12 min leaves
// room for that rounding and nothing else.
constexpr double kTimeTolerance = 1e-12;

std::string DataPath(const std::string& name) {
  return std::string(RATEWELL_TEST_DATA_DIR) + "/plates/" + name;
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

// UTF-8 text (code points below U+10000) as UTF-16 with a byte-order mark.
std::string Utf16(const std::string& utf8, bool little_endian) {
  std::vector<std::uint32_t> units;
  for (std::size_t i = 0; i < utf8.size();) {
    const auto c = static_cast<unsigned char>(utf8[i]);
    std::uint32_t cp = c;
    std::size_t n = 1;
    if (c >= 0xE0) {
      cp = c & 0x0F;
      n = 3;
    } else if (c >= 0xC0) {
      cp = c & 0x1F;
      n = 2;
    }
    for (std::size_t k = 1; k < n; ++k) cp = (cp << 6) | (utf8[i + k] & 0x3F);
    units.push_back(cp);
    i += n;
  }
  std::string bytes = little_endian ? "\xFF\xFE" : "\xFE\xFF";
  for (std::uint32_t u : units) {
    const char lo = static_cast<char>(u & 0xFF);
    const char hi = static_cast<char>(u >> 8);
    bytes += little_endian ? lo : hi;
    bytes += little_endian ? hi : lo;
  }
  return bytes;
}

TEST(TableLayoutNames, RoundTripThroughTheirStrings) {
  for (TableLayout layout :
       {TableLayout::kAuto, TableLayout::kLong, TableLayout::kWide, TableLayout::kGrid}) {
    TableLayout back = TableLayout::kAuto;
    ASSERT_TRUE(StringToTableLayout(TableLayoutToString(layout), &back));
    EXPECT_EQ(back, layout);
  }
  TableLayout layout = TableLayout::kLong;
  EXPECT_TRUE(StringToTableLayout(" Grid ", &layout));
  EXPECT_EQ(layout, TableLayout::kGrid);
  EXPECT_FALSE(StringToTableLayout("matrix", &layout));
  EXPECT_EQ(layout, TableLayout::kGrid);
}

TEST(TimeUnitNames, RoundTripAndAcceptTheUsualSpellings) {
  for (TimeUnit unit :
       {TimeUnit::kAuto, TimeUnit::kSeconds, TimeUnit::kMinutes, TimeUnit::kHours}) {
    TimeUnit back = TimeUnit::kAuto;
    ASSERT_TRUE(StringToTimeUnit(TimeUnitToString(unit), &back));
    EXPECT_EQ(back, unit);
  }
  TimeUnit unit = TimeUnit::kAuto;
  EXPECT_TRUE(StringToTimeUnit("Seconds", &unit));
  EXPECT_EQ(unit, TimeUnit::kSeconds);
  EXPECT_TRUE(StringToTimeUnit("MIN", &unit));
  EXPECT_EQ(unit, TimeUnit::kMinutes);
  EXPECT_TRUE(StringToTimeUnit("hr", &unit));
  EXPECT_EQ(unit, TimeUnit::kHours);
  EXPECT_FALSE(StringToTimeUnit("fortnight", &unit));
}

TEST(ReadPlateFile, ReadsTheLongFileAndReportsWhatItFound) {
  const Plate plate = ReadPlateFile(DataPath("long_by_time.csv"));
  const ImportReport& report = plate.report;
  EXPECT_EQ(report.path, DataPath("long_by_time.csv"));
  EXPECT_EQ(report.format, "long");
  EXPECT_EQ(report.encoding, "UTF-8");
  EXPECT_EQ(report.delimiter, "comma");
  EXPECT_EQ(report.sheet, "");
  EXPECT_FALSE(report.decimal_comma);
  EXPECT_EQ(report.time_unit, "s");
  ASSERT_EQ(report.warnings.size(), 1u);
  EXPECT_THAT(report.warnings[0], HasSubstr("from line 21"));

  EXPECT_EQ(plate.geometry, (PlateGeometry{8, 12}));
  EXPECT_THAT(plate.wavelengths_nm, ElementsAre(340.0));
  EXPECT_EQ(plate.WellsWithData(), 4);
  EXPECT_EQ(plate.Reads(), 3);
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 0.5, 1.0});
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.2010, 1.1702, 1.1398));
  EXPECT_THAT(SeriesOf(plate, "A02").status,
              ElementsAre(PointStatus::kValid, PointStatus::kValid, PointStatus::kMissing));
  EXPECT_THAT(SeriesOf(plate, "H12").status,
              ElementsAre(PointStatus::kSaturated, PointStatus::kSaturated, PointStatus::kValid));
  EXPECT_EQ(SeriesOf(plate, "H12").value[2], 3.412);
  EXPECT_EQ(plate.CountPoints(PointStatus::kSaturated), 2);
  EXPECT_EQ(plate.CountPoints(PointStatus::kMissing), 1);
  EXPECT_FALSE(plate.TemperatureRangeC().has_value());
}

TEST(ReadPlateFile, ReadsSemicolonsDecimalCommasCrlfAndAWavelengthColumn) {
  const Plate plate = ReadPlateFile(DataPath("long_decimal_comma.csv"));
  EXPECT_EQ(plate.report.delimiter, "semicolon");
  EXPECT_TRUE(plate.report.decimal_comma);
  EXPECT_EQ(plate.report.time_unit, "min");
  ASSERT_THAT(plate.wavelengths_nm, ElementsAre(340.0, 900.0, 977.0));
  ExpectTimes(SeriesOf(plate, "C07", 977), {0.0, 0.5});
  EXPECT_THAT(SeriesOf(plate, "A01", 340).value, ElementsAre(1.2010, 1.1702));
  EXPECT_THAT(SeriesOf(plate, "C07", 900).value, ElementsAre(0.0398, 0.0399));
  EXPECT_THAT(plate.temperature_time_min, ElementsAre(0.0, 0.5));
  EXPECT_THAT(plate.temperature_C, ElementsAre(25.0, 25.2));
  EXPECT_THAT(plate.report.warnings, IsEmpty());
}

// The same small wide table in every encoding gives the same plate.
class EncodingTest : public ::testing::TestWithParam<std::string> {};

const std::string kWideText =
    "Instrument;KestrelScan 7\r\n"
    "Time [s];Temp (\xC2\xB0"
    "C);A01;B12\r\n"
    "0;25,0;1,250;0,980\r\n"
    "30;25,1;1,225;OVER\r\n";

std::string Encode(const std::string& encoding) {
  if (encoding == "UTF-8") return kWideText;
  if (encoding == "UTF-8 with BOM") return "\xEF\xBB\xBF" + kWideText;
  return Utf16(kWideText, encoding == "UTF-16LE");
}

TEST_P(EncodingTest, GivesTheSamePlate) {
  const Plate plate = ReadPlateBytes(Encode(GetParam()), "encoded.csv");
  EXPECT_EQ(plate.report.encoding, GetParam());
  EXPECT_EQ(plate.report.format, "wide");
  EXPECT_EQ(plate.report.delimiter, "semicolon");
  EXPECT_TRUE(plate.report.decimal_comma);
  ExpectTimes(SeriesOf(plate, "A01"), {0.0, 0.5});
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.250, 1.225));
  EXPECT_THAT(SeriesOf(plate, "B12").status,
              ElementsAre(PointStatus::kValid, PointStatus::kSaturated));
  EXPECT_THAT(plate.temperature_C, ElementsAre(25.0, 25.1));
}

INSTANTIATE_TEST_SUITE_P(Encodings, EncodingTest,
                         ::testing::Values("UTF-8", "UTF-8 with BOM", "UTF-16LE", "UTF-16BE"),
                         [](const ::testing::TestParamInfo<std::string>& param_info) {
                           std::string name;
                           for (char c : param_info.param) {
                             if (std::isalnum(static_cast<unsigned char>(c))) name += c;
                           }
                           return name;
                         });

TEST(ReadPlateBytes, ReadsOldMacLineEnds) {
  const Plate plate = ReadPlateBytes("Well,Time (s),A340\rA01,0,1.0\rA01,30,0.9\r", "cr.csv");
  EXPECT_THAT(SeriesOf(plate, "A01").value, ElementsAre(1.0, 0.9));
}

TEST(ReadPlateBytes, TheLayoutOptionPicksATableTheDetectorWouldPass) {
  // A summary table (wide) comes first; the raw reads follow as grid blocks.
  std::string text = "Summary\nTime (s),A01\n0,1.0\n\nRaw reads\nRead 1 - 30 s\n";
  for (int c = 1; c <= 12; ++c) (text += ',') += std::to_string(c);
  text += "\n";
  for (int r = 0; r < 8; ++r) {
    text += RowLabel(r);
    for (int c = 0; c < 12; ++c) text += ",0.5";
    text += "\n";
  }
  const Plate automatic = ReadPlateBytes(text, "two.csv");
  EXPECT_EQ(automatic.report.format, "wide");
  EXPECT_THAT(SeriesOf(automatic, "A01").value, ElementsAre(1.0));

  ReadOptions options;
  options.layout = TableLayout::kGrid;
  const Plate grid = ReadPlateBytes(text, "two.csv", options);
  EXPECT_EQ(grid.report.format, "grid");
  ExpectTimes(SeriesOf(grid, "A01"), {0.5});
  EXPECT_THAT(SeriesOf(grid, "H12").value, ElementsAre(0.5));
}

TEST(ReadPlateBytes, ALayoutTheFileDoesNotHoldIsAnError) {
  ReadOptions options;
  options.layout = TableLayout::kWide;
  try {
    ReadPlateBytes("Well,Time (s),A340\nA01,0,1.0\n", "long.csv", options);
    FAIL() << "expected an InputError";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), "long.csv");
    EXPECT_EQ(error.line(), 0);
    EXPECT_THAT(error.reason(), HasSubstr("no wide table found"));
    EXPECT_THAT(error.reason(), HasSubstr("expected a header row naming a time column"));
  }
}

TEST(ReadPlateFile, AMissingFileNamesThePathAndTheSystemsReason) {
  const std::string path = DataPath("no_such_plate.csv");
  try {
    ReadPlateFile(path);
    FAIL() << "expected an InputError";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), path);
    EXPECT_EQ(error.line(), 0);
    EXPECT_THAT(error.reason(), HasSubstr("cannot open"));
    EXPECT_THAT(error.reason(), HasSubstr("No such file or directory"));
  }
}

TEST(ReadPlateFile, ADirectoryIsNotAPlateFile) {
  try {
    ReadPlateFile(std::string(RATEWELL_TEST_DATA_DIR) + "/plates");
    FAIL() << "expected an InputError";
  } catch (const InputError& error) {
    EXPECT_THAT(error.reason(), HasSubstr("directory"));
  }
}

// ---------------------------------------------------------------------------
// Workbooks: a minimal .xlsx (ECMA-376 SpreadsheetML in an OPC zip package),
// built in memory with libzip.

std::string Zip(const std::vector<std::pair<std::string, std::string>>& parts) {
  zip_error_t error;
  zip_error_init(&error);
  zip_source_t* buffer = zip_source_buffer_create(nullptr, 0, 0, &error);
  if (buffer == nullptr) throw std::runtime_error("zip_source_buffer_create failed");
  zip_source_keep(buffer);
  zip_t* archive = zip_open_from_source(buffer, ZIP_TRUNCATE, &error);
  if (archive == nullptr) throw std::runtime_error("zip_open_from_source failed");
  for (const auto& [name, data] : parts) {
    zip_source_t* source = zip_source_buffer(archive, data.data(), data.size(), 0);
    if (zip_file_add(archive, name.c_str(), source, ZIP_FL_ENC_UTF_8) < 0) {
      throw std::runtime_error("zip_file_add failed");
    }
  }
  if (zip_close(archive) != 0) throw std::runtime_error("zip_close failed");
  zip_source_open(buffer);
  zip_source_seek(buffer, 0, SEEK_END);
  const zip_int64_t size = zip_source_tell(buffer);
  zip_source_seek(buffer, 0, SEEK_SET);
  std::string bytes(static_cast<std::size_t>(size), '\0');
  zip_source_read(buffer, bytes.data(), static_cast<zip_uint64_t>(size));
  zip_source_close(buffer);
  zip_source_free(buffer);
  zip_error_fini(&error);
  return bytes;
}

// A workbook with one sheet named sheet_name; rows of cells, a number where
// the text parses as one, else an inline string.
std::string Workbook(const std::string& sheet_name,
                     const std::vector<std::vector<std::string>>& rows) {
  const std::string decl = "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n";
  const std::string main = "http://schemas.openxmlformats.org/spreadsheetml/2006/main";
  const std::string rel = "http://schemas.openxmlformats.org/officeDocument/2006/relationships";
  const std::string pkg = "http://schemas.openxmlformats.org/package/2006/relationships";
  std::string sheet = decl + "<worksheet xmlns=\"" + main + "\"><sheetData>";
  for (std::size_t r = 0; r < rows.size(); ++r) {
    const std::string row_number = std::to_string(r + 2);  // the table starts on row 2
    sheet += "<row r=\"" + row_number + "\">";
    for (std::size_t c = 0; c < rows[r].size(); ++c) {
      const std::string ref = std::string(1, static_cast<char>('A' + c)) + row_number;
      const std::string& text = rows[r][c];
      if (text.empty()) continue;  // as spreadsheet programs write it: no cell at all
      char* end = nullptr;
      std::strtod(text.c_str(), &end);
      if (!text.empty() && *end == '\0') {
        sheet += "<c r=\"" + ref + "\"><v>" + text + "</v></c>";
      } else {
        sheet += "<c r=\"" + ref + "\" t=\"inlineStr\"><is><t>" + text + "</t></is></c>";
      }
    }
    sheet += "</row>";
  }
  sheet += "</sheetData></worksheet>";
  return Zip({
      {"[Content_Types].xml",
       decl + "<Types xmlns=\"http://schemas.openxmlformats.org/package/2006/content-types\">"
              "<Default Extension=\"rels\" "
              "ContentType=\"application/vnd.openxmlformats-package.relationships+xml\"/>"
              "<Default Extension=\"xml\" ContentType=\"application/xml\"/>"
              "<Override PartName=\"/xl/workbook.xml\" "
              "ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.sheet."
              "main+xml\"/>"
              "<Override PartName=\"/xl/worksheets/sheet1.xml\" "
              "ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml."
              "worksheet+xml\"/></Types>"},
      {"_rels/.rels", decl + "<Relationships xmlns=\"" + pkg +
                          "\"><Relationship Id=\"rId1\" Type=\"" + rel +
                          "/officeDocument\" Target=\"xl/workbook.xml\"/></Relationships>"},
      {"xl/workbook.xml", decl + "<workbook xmlns=\"" + main + "\" xmlns:r=\"" + rel +
                              "\"><sheets><sheet name=\"" + sheet_name +
                              "\" sheetId=\"1\" r:id=\"rId1\"/></sheets></workbook>"},
      {"xl/_rels/workbook.xml.rels",
       decl + "<Relationships xmlns=\"" + pkg + "\"><Relationship Id=\"rId1\" Type=\"" + rel +
           "/worksheet\" Target=\"worksheets/sheet1.xml\"/></Relationships>"},
      {"xl/worksheets/sheet1.xml", sheet},
  });
}

TEST(ReadPlateBytes, ReadsALongTableInsideAWorkbook) {
  const std::string bytes = Workbook("Kinetics", {{"Well", "Time (s)", "A340"},
                                                  {"A01", "0", "1.25"},
                                                  {"A01", "30", "OVRFLW"},
                                                  {"A01", "60", ""},
                                                  {"P24", "0", "0.5"}});
  const Plate plate = ReadPlateBytes(bytes, "run.xlsx");
  EXPECT_EQ(plate.report.format, "xlsx/long");
  EXPECT_EQ(plate.report.encoding, "xlsx");
  EXPECT_EQ(plate.report.delimiter, "");
  EXPECT_EQ(plate.report.sheet, "Kinetics");
  EXPECT_EQ(plate.geometry, (PlateGeometry{16, 24}));
  // The empty value cell at the end of its row is absent from the sheet: a
  // missing point, not a short row.
  EXPECT_THAT(SeriesOf(plate, "A01").status,
              ElementsAre(PointStatus::kValid, PointStatus::kSaturated, PointStatus::kMissing));
  EXPECT_EQ(SeriesOf(plate, "A01").value[0], 1.25);
}

TEST(ReadPlateBytes, ReadsGridBlocksInsideAWorkbook) {
  std::vector<std::vector<std::string>> rows = {{"Cycle 1 - 00:00:30 - 340 nm"}, {""}};
  for (int c = 1; c <= 12; ++c) rows[1].push_back(std::to_string(c));
  for (int r = 0; r < 8; ++r) {
    rows.push_back({RowLabel(r)});
    for (int c = 0; c < 12; ++c) rows.back().push_back(r == 7 && c == 11 ? "" : "0.75");
  }
  const Plate plate = ReadPlateBytes(Workbook("Sheet1", rows), "run.xlsx");
  EXPECT_EQ(plate.report.format, "xlsx/grid");
  ExpectTimes(SeriesOf(plate, "A01"), {0.5});
  EXPECT_THAT(SeriesOf(plate, "G12").value, ElementsAre(0.75));
  EXPECT_THAT(SeriesOf(plate, "H12").status, ElementsAre(PointStatus::kMissing));
}

TEST(ReadPlateBytes, ErrorsInsideAWorkbookNameTheSheetRow) {
  const std::string bytes = Workbook(
      "Kinetics", {{"Well", "Time (s)", "A340"}, {"A01", "0", "1.25"}, {"A01", "30", "bubble"}});
  try {
    ReadPlateBytes(bytes, "run.xlsx");
    FAIL() << "expected an InputError";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), "run.xlsx");
    EXPECT_EQ(error.line(), 4);  // sheet row 4: the table starts on row 2
    EXPECT_EQ(error.column(), 3);
    EXPECT_THAT(error.reason(), HasSubstr("'bubble'"));
  }
}

TEST(ReadPlateBytes, AnUnknownSheetIsAnError) {
  ReadOptions options;
  options.sheet = "Raw data";
  EXPECT_THROW(
      ReadPlateBytes(Workbook("Kinetics", {{"Well", "Time (s)", "A340"}}), "run.xlsx", options),
      InputError);
}

}  // namespace
}  // namespace ratewell
