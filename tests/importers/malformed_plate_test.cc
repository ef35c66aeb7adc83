// Bad plate files: each gets one InputError naming the file, the line (and
// column where one cell is at fault) and a reason that says what was
// expected. Never a crash, never a silent NaN. Files are invented and inline.
#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "importers/input_error.h"
#include "importers/read_plate.h"

namespace ratewell {
namespace {

using ::testing::HasSubstr;

constexpr char kName[] = "bad.csv";

// The InputError reading bytes throws; fails the test if there is none.
InputError ErrorOf(const std::string& bytes, const ReadOptions& options = {}) {
  try {
    ReadPlateBytes(bytes, kName, options);
  } catch (const InputError& error) {
    return error;
  }
  ADD_FAILURE() << "no InputError was thrown";
  return InputError("", -1, -1, "");
}

// A 96-well grid block: heading, column numbers, rows A..H of 0.5.
std::string Block(const std::string& heading, int rows = 8, int columns = 12) {
  std::string text = heading + "\n";
  for (int c = 1; c <= columns; ++c) (text += ',') += std::to_string(c);
  text += "\n";
  for (int r = 0; r < rows; ++r) {
    text += RowLabel(r);
    for (int c = 0; c < columns; ++c) text += ",0.5";
    text += "\n";
  }
  return text;
}

// Block with the row at plate_row replaced by line.
std::string BlockWithRow(const std::string& heading, int plate_row, const std::string& line) {
  std::istringstream in(Block(heading));
  std::string out;
  std::string row;
  int index = 0;
  while (std::getline(in, row)) {
    out += (index == plate_row + 2 ? line : row) + "\n";  // +2: heading, column numbers
    ++index;
  }
  return out;
}

// ---------------------------------------------------------------------------
// Whole-file problems.

TEST(MalformedPlate, EmptyFile) {
  const InputError error = ErrorOf("");
  EXPECT_EQ(error.file(), kName);
  EXPECT_EQ(error.line(), 0);
  EXPECT_THAT(error.reason(), HasSubstr("empty"));
  EXPECT_THAT(error.reason(), HasSubstr("expected a text table"));
}

TEST(MalformedPlate, BlankLinesOnly) {
  const InputError error = ErrorOf("\r\n\r\n   \r\n");
  EXPECT_EQ(error.line(), 0);
  EXPECT_THAT(error.reason(), HasSubstr("no text"));
}

TEST(MalformedPlate, BinaryGarbage) {
  std::string bytes = "Well,Time (s),A340\nA01,0,1.0\n";
  bytes += std::string("\x89PNG\r\n\x1a\n\0\0\0\rIHDR", 16);
  const InputError error = ErrorOf(bytes);
  EXPECT_EQ(error.file(), kName);
  EXPECT_EQ(error.line(), 5);  // the NUL follows four line ends
  EXPECT_THAT(error.reason(), HasSubstr("binary"));
}

TEST(MalformedPlate, TextWithNoTableInIt) {
  const InputError error =
      ErrorOf("Dear colleague,\nthe plate is in the fridge.\nTime to go home, well done!\n");
  EXPECT_EQ(error.file(), kName);
  EXPECT_EQ(error.line(), 0);
  EXPECT_THAT(error.reason(), HasSubstr("no plate table found"));
  EXPECT_THAT(error.reason(), HasSubstr("expected a long table"));
}

TEST(MalformedPlate, Utf16WithAnOddNumberOfBytes) {
  const std::string bytes("\xFF\xFEW\0e\0l\0l\0,\0T", 13);
  const InputError error = ErrorOf(bytes);
  EXPECT_EQ(error.line(), 0);
  EXPECT_THAT(error.reason(), HasSubstr("odd number of bytes"));
}

TEST(MalformedPlate, Utf16WithALoneSurrogate) {
  const std::string bytes("\xFF\xFEW\0\x00\xDC", 6);
  const InputError error = ErrorOf(bytes);
  EXPECT_THAT(error.reason(), HasSubstr("surrogate"));
}

TEST(MalformedPlate, HeaderOnlyAndNoData) {
  const InputError error = ErrorOf("Instrument: KestrelScan 7\nWell,Time (s),A340\n\n");
  EXPECT_EQ(error.line(), 2);
  EXPECT_THAT(error.reason(), HasSubstr("no data rows"));
  EXPECT_THAT(error.reason(), HasSubstr("expected one row per well and time"));
}

TEST(MalformedPlate, WideHeaderOnlyAndNoData) {
  const InputError error = ErrorOf("Time (s),A01,A02\n");
  EXPECT_EQ(error.line(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("no data rows"));
}

// ---------------------------------------------------------------------------
// Headers.

TEST(MalformedPlate, LongFileMissingItsValueColumn) {
  const InputError error = ErrorOf("Well,Time (s),Sample\nA01,0,S1\nA01,30,S1\n");
  EXPECT_EQ(error.line(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("no value column"));
  EXPECT_THAT(error.reason(), HasSubstr("expected a column headed"));
}

TEST(MalformedPlate, UnknownTimeUnitInTheHeader) {
  const InputError error = ErrorOf("Well,Time (ms),A340\nA01,0,1.0\n");
  EXPECT_EQ(error.line(), 1);
  EXPECT_EQ(error.column(), 2);
  EXPECT_THAT(error.reason(), HasSubstr("unknown time unit 'ms'"));
  EXPECT_THAT(error.reason(), HasSubstr("expected s, min or h"));
}

TEST(MalformedPlate, SeveralValueColumnsWithoutWavelengths) {
  const InputError error = ErrorOf("Well,Time (s),Abs,Value\nA01,0,1.0,1.1\n");
  EXPECT_EQ(error.line(), 1);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("names no wavelength"));
}

TEST(MalformedPlate, WideHeaderMixingWavelengthSuffixesAndPlainWells) {
  const InputError error = ErrorOf("Time (s),A01 (340 nm),A02\n0,1.0,1.1\n");
  EXPECT_EQ(error.line(), 1);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("'A02' names no wavelength"));
}

TEST(MalformedPlate, WideSectionsWhereOneNamesNoWavelength) {
  const InputError error =
      ErrorOf("Wavelength: 340 nm\nTime (s),A01\n0,1.0\n\nSecond table\nTime (s),A01\n0,0.1\n");
  EXPECT_EQ(error.line(), 6);
  EXPECT_THAT(error.reason(), HasSubstr("names no wavelength"));
  EXPECT_THAT(error.reason(), HasSubstr("expected a line such as 'Wavelength: 977 nm'"));
}

TEST(MalformedPlate, DuplicateWellColumnInAWideTable) {
  const InputError error = ErrorOf("Time (s),A01,B02,A1\n0,1.0,1.1,1.2\n");
  EXPECT_EQ(error.line(), 1);
  EXPECT_EQ(error.column(), 4);
  EXPECT_THAT(error.reason(), HasSubstr("well A01 has a second column (columns 2 and 4)"));
}

TEST(MalformedPlate, WideColumnOutsideA1536WellPlate) {
  const InputError error = ErrorOf("Time (s),A01,A49\n0,1.0,1.1\n");
  EXPECT_EQ(error.line(), 1);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("'A49' is not a well"));
}

// ---------------------------------------------------------------------------
// Rows and cells of long and wide tables.

TEST(MalformedPlate, TruncatedLongFile) {
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,1.0\nA02,0,1.1\nA01,30");
  EXPECT_EQ(error.file(), kName);
  EXPECT_EQ(error.line(), 4);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("the row has 2 cells; expected 3"));
}

TEST(MalformedPlate, RaggedRowInsideAWideTable) {
  const InputError error = ErrorOf("Time (s),A01,A02,A03\n0,1,1,1\n30,1,1\n60,1,1,1\n");
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 4);
  EXPECT_THAT(error.reason(), HasSubstr("expected 4 as in the header on line 1"));
}

TEST(MalformedPlate, CellBeyondTheHeader) {
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,1.0,0.7\n");
  EXPECT_EQ(error.line(), 2);
  EXPECT_EQ(error.column(), 4);
  EXPECT_THAT(error.reason(), HasSubstr("beyond the header's 3 columns"));
}

TEST(MalformedPlate, NonNumericValueInALongTable) {
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,1.0\nA01,30,bubble\n");
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("expected an absorbance (a number), an empty cell or an "
                                        "overflow marker in column 3 ('A340'), found 'bubble'"));
}

TEST(MalformedPlate, NonNumericValueInAWideTable) {
  const InputError error = ErrorOf("Time (s);A01;A02\n0;1,0;1,1\n30;0,9;1.0.1\n");
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("('A02'), found '1.0.1'"));
}

TEST(MalformedPlate, HugeNumbersAreNotAbsorbances) {
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,1e301\n");
  EXPECT_EQ(error.line(), 2);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("found '1e301'"));
}

TEST(MalformedPlate, MinusInfinityIsNotAnAbsorbance) {
  // "inf" is on the overflow list (saturated); "-inf" is no reading at all.
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,-inf\n");
  EXPECT_EQ(error.line(), 2);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("found '-inf'"));
}

TEST(MalformedPlate, NegativeOrMissingTime) {
  const InputError negative = ErrorOf("Well,Time (s),A340\nA01,-30,1.0\n");
  EXPECT_EQ(negative.line(), 2);
  EXPECT_EQ(negative.column(), 2);
  EXPECT_THAT(negative.reason(), HasSubstr("expected a time"));
  const InputError empty = ErrorOf("Well,Time (s),A340\nA01,0,1.0\nA01,,1.0\n");
  EXPECT_EQ(empty.line(), 3);
  EXPECT_EQ(empty.column(), 2);
  EXPECT_THAT(empty.reason(), HasSubstr("found an empty cell"));
}

TEST(MalformedPlate, NonNumericWavelengthOrTemperature) {
  const InputError wavelength =
      ErrorOf("Well,Time (s),Wavelength,Abs\nA01,0,340,1.0\nA01,0,UV,1.0\n");
  EXPECT_EQ(wavelength.line(), 3);
  EXPECT_EQ(wavelength.column(), 3);
  EXPECT_THAT(wavelength.reason(), HasSubstr("expected a wavelength in nm"));
  const InputError temperature = ErrorOf("Time (s),Temp,A01\n0,25.0,1.0\n30,warm,0.9\n");
  EXPECT_EQ(temperature.line(), 3);
  EXPECT_EQ(temperature.column(), 2);
  EXPECT_THAT(temperature.reason(), HasSubstr("expected a temperature"));
}

TEST(MalformedPlate, DuplicateWellAndTime) {
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,1.0\nA02,0,1.0\nA1,0,1.1\n");
  EXPECT_EQ(error.line(), 4);
  EXPECT_EQ(error.column(), 2);
  EXPECT_THAT(error.reason(), HasSubstr("well A01 at 340 nm has a second reading at 0 min"));
  EXPECT_THAT(error.reason(), HasSubstr("expected one reading per well, time and wavelength"));
}

TEST(MalformedPlate, TimeGoingBackwardsWithinAWell) {
  const InputError error =
      ErrorOf("Well,Time (s),A340\nA01,0,1.0\nA01,60,0.9\nA02,0,1.0\nA01,30,0.8\n");
  EXPECT_EQ(error.line(), 5);
  EXPECT_EQ(error.column(), 2);
  EXPECT_THAT(error.reason(), HasSubstr("time goes backwards for well A01"));
  EXPECT_THAT(error.reason(), HasSubstr("0.5 min after 1 min"));
}

TEST(MalformedPlate, TimeGoingBackwardsInAWideTable) {
  const InputError error = ErrorOf("Time (s),A01\n0,1.0\n60,0.9\n30,0.8\n");
  EXPECT_EQ(error.line(), 4);
  EXPECT_EQ(error.column(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("expected times to increase"));
}

TEST(MalformedPlate, WellOutsideA1536WellPlate) {
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,1.0\nAG01,0,1.0\n");
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("'AG01' is not a well"));
  EXPECT_THAT(error.reason(), HasSubstr("expected rows A to AF and columns 1 to 48"));
}

TEST(MalformedPlate, BadWellCellWithDataBelowIsNotAFooter) {
  const InputError error = ErrorOf("Well,Time (s),A340\nA01,0,1.0\nxx?,30,1.0\nA01,60,0.9\n");
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("expected a well name such as A01"));
  EXPECT_THAT(error.reason(), HasSubstr("found 'xx?'"));
}

TEST(MalformedPlate, BadTimeCellWithDataBelowIsNotAFooter) {
  const InputError error = ErrorOf("Time (s),A01\n0,1.0\nlater,0.9\n60,0.8\n");
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("expected a time"));
  EXPECT_THAT(error.reason(), HasSubstr("found 'later'"));
}

// ---------------------------------------------------------------------------
// Grid blocks.

TEST(MalformedPlate, GridWithAMissingRow) {
  std::string text = Block("Read 1 - 0 s");
  text.erase(text.find("D,"), text.find("E,") - text.find("D,"));
  const InputError error = ErrorOf(text);
  EXPECT_EQ(error.line(), 6);  // the E row, where D was expected
  EXPECT_EQ(error.column(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("row 'D' of the block of line 2 is missing"));
}

TEST(MalformedPlate, GridWithItsLastRowMissing) {
  std::string text = Block("Read 1 - 0 s", 7);
  text += "\n";
  text += Block("Read 2 - 30 s");
  const InputError error = ErrorOf(text);
  EXPECT_EQ(error.line(), 10);
  EXPECT_THAT(error.reason(), HasSubstr("expected row 'H' of the block of line 2, found an "
                                        "empty line"));
}

TEST(MalformedPlate, GridWithAnExtraRow) {
  const InputError error = ErrorOf(Block("Read 1 - 0 s") + "I,1,2,3,4,5,6,7,8,9,10,11,12\n");
  EXPECT_EQ(error.line(), 11);
  EXPECT_EQ(error.column(), 1);
  EXPECT_THAT(error.reason(), HasSubstr("an extra row 'I' after row 'H'"));
  EXPECT_THAT(error.reason(), HasSubstr("expected 8 rows for 12 columns"));
}

TEST(MalformedPlate, GridBlockWithoutATime) {
  const InputError error = ErrorOf(Block("Read 1 - 0 s") + Block("Read 2"));
  EXPECT_EQ(error.line(), 12);  // the second block's column numbers
  EXPECT_THAT(error.reason(), HasSubstr("has no read time"));
  EXPECT_THAT(error.reason(), HasSubstr("expected a heading line"));
}

TEST(MalformedPlate, ADateLineIsNotTakenForAMissingBlockTime) {
  const InputError error = ErrorOf("Date: 2031-05-14 10:22:13\n" + Block("Read 1"));
  EXPECT_EQ(error.line(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("has no read time"));
}

TEST(MalformedPlate, GridEndsInsideABlock) {
  std::string text = Block("Read 1 - 0 s");
  text.erase(text.find("F,"));
  const InputError error = ErrorOf(text);
  EXPECT_EQ(error.line(), 7);  // the last line, row E
  EXPECT_THAT(error.reason(), HasSubstr("the file ends inside the block of line 2"));
  EXPECT_THAT(error.reason(), HasSubstr("expected row 'F'"));
}

TEST(MalformedPlate, GridRowWithTooFewOrTooManyValues) {
  const InputError few = ErrorOf(BlockWithRow("Read 1 - 0 s", 2, "C,1,2,3,4,5,6,7,8,9,10,11"));
  EXPECT_EQ(few.line(), 5);
  EXPECT_EQ(few.column(), 13);
  EXPECT_THAT(few.reason(), HasSubstr("row 'C' has 11 values; expected 12"));
  const InputError many =
      ErrorOf(BlockWithRow("Read 1 - 0 s", 2, "C,1,2,3,4,5,6,7,8,9,10,11,12,13"));
  EXPECT_EQ(many.line(), 5);
  EXPECT_EQ(many.column(), 14);
  EXPECT_THAT(many.reason(), HasSubstr("more than 12 values"));
}

TEST(MalformedPlate, NonNumericCellInAGrid) {
  const InputError error = ErrorOf(BlockWithRow("Read 1 - 0 s", 2, "C,1,1,1,1,dust,1,1,1,1,1,1,1"));
  EXPECT_EQ(error.line(), 5);
  EXPECT_EQ(error.column(), 6);
  EXPECT_THAT(error.reason(), HasSubstr("for well C05"));
  EXPECT_THAT(error.reason(), HasSubstr("found 'dust'"));
}

TEST(MalformedPlate, GridBlockWithAnUnusualColumnCount) {
  const InputError error = ErrorOf(Block("Read 1 - 0 s") + Block("Read 2 - 30 s", 8, 11));
  EXPECT_EQ(error.line(), 12);
  EXPECT_THAT(error.reason(), HasSubstr("column numbers 1 to 11; expected 12, 24 or 48"));
}

TEST(MalformedPlate, GridBlocksOfDifferentPlates) {
  std::string text = Block("Read 1 - 0 s");
  text += Block("Read 2 - 30 s", 16, 24);
  const InputError error = ErrorOf(text);
  EXPECT_EQ(error.line(), 12);
  EXPECT_THAT(error.reason(), HasSubstr("expected every block to cover the same plate"));
}

TEST(MalformedPlate, GridTimeGoingBackwards) {
  const InputError error = ErrorOf(Block("Read 1 - 60 s") + Block("Read 2 - 30 s"));
  EXPECT_EQ(error.line(), 12);
  EXPECT_THAT(error.reason(), HasSubstr("time goes backwards"));
  EXPECT_THAT(error.reason(), HasSubstr("after the block on line 2"));
}

TEST(MalformedPlate, GridBlockNamingAWavelengthAfterOneThatDidNot) {
  const InputError error = ErrorOf(Block("Read 1 - 0 s") + Block("Read 1 - 0 s - 977 nm"));
  EXPECT_EQ(error.line(), 12);
  EXPECT_THAT(error.reason(), HasSubstr("the block on line 2 names none"));
}

TEST(MalformedPlate, PlateRowsWithoutColumnNumbers) {
  std::string text = Block("Read 1 - 0 s") + "\nRead 2 - 30 s\n";
  text += "A,1,1,1,1,1,1,1,1,1,1,1,1\n";
  const InputError error = ErrorOf(text);
  EXPECT_EQ(error.line(), 13);
  EXPECT_THAT(error.reason(), HasSubstr("outside a block"));
}

// ---------------------------------------------------------------------------
// Whatever the bytes, the readers answer with a plate or an InputError, and a
// plate never holds a NaN that is not marked saturated or missing.

std::string ReadDataFile(const std::string& name) {
  std::ifstream in(std::string(RATEWELL_TEST_DATA_DIR) + "/plates/" + name, std::ios::binary);
  std::ostringstream out;
  out << in.rdbuf();
  return out.str();
}

TEST(MalformedPlate, MutatedFilesGiveAPlateOrAnInputErrorAndNoUnmarkedNaN) {
  const std::vector<std::string> seeds = {
      ReadDataFile("long_by_time.csv"), ReadDataFile("long_decimal_comma.csv"),
      ReadDataFile("wide_sections.tsv"), ReadDataFile("wide_suffixes.csv"),
      ReadDataFile("grid_cycles.csv")};
  const std::string alphabet = "0123456789.,;\t\n\r:-+eE AHhmsn\"*>";
  std::mt19937 random(20310514);  // fixed seed: the same mutations every run
  int plates = 0;
  int errors = 0;
  for (int trial = 0; trial < 3000; ++trial) {
    std::string bytes = seeds[trial % seeds.size()];
    ASSERT_FALSE(bytes.empty());
    const int edits = 1 + static_cast<int>(random() % 4);
    for (int e = 0; e < edits && !bytes.empty(); ++e) {
      const std::size_t at = random() % bytes.size();
      switch (random() % 4) {
        case 0:
          bytes[at] = alphabet[random() % alphabet.size()];
          break;
        case 1:
          bytes.erase(at, 1 + random() % 8);
          break;
        case 2:
          bytes.insert(at, 1, alphabet[random() % alphabet.size()]);
          break;
        default:
          bytes.resize(at);
          break;  // truncate
      }
    }
    try {
      const Plate plate = ReadPlateBytes(bytes, "mutant.csv");
      ++plates;
      for (const Series& series : plate.series) {
        ASSERT_EQ(series.value.size(), series.size());
        ASSERT_EQ(series.status.size(), series.size());
        for (std::size_t i = 0; i < series.size(); ++i) {
          ASSERT_TRUE(std::isfinite(series.time_min[i]));
          ASSERT_EQ(std::isnan(series.value[i]), series.status[i] != PointStatus::kValid)
              << "trial " << trial;
          if (i > 0) {
            ASSERT_GT(series.time_min[i], series.time_min[i - 1]);
          }
        }
      }
    } catch (const InputError& error) {
      ++errors;
      ASSERT_EQ(error.file(), "mutant.csv");
      ASSERT_FALSE(error.reason().empty());
    }
  }
  // Both outcomes occur, so the check above saw real plates and real errors.
  EXPECT_GT(plates, 100);
  EXPECT_GT(errors, 100);
}

}  // namespace
}  // namespace ratewell
