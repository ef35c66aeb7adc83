// Well names, plate geometry and the text table underneath every reader.
#include "importers/plate.h"

#include <gtest/gtest.h>

#include <cmath>

#include "importers/detail/text_table.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

TEST(WellName, ParsesUnpaddedPaddedAndLowerCaseNames) {
  EXPECT_EQ(*ParseWellName("A1"), (WellPosition{0, 0}));
  EXPECT_EQ(*ParseWellName("A01"), (WellPosition{0, 0}));
  EXPECT_EQ(*ParseWellName("a01"), (WellPosition{0, 0}));
  EXPECT_EQ(*ParseWellName(" H12 "), (WellPosition{7, 11}));
  EXPECT_EQ(*ParseWellName("P24"), (WellPosition{15, 23}));
  EXPECT_EQ(*ParseWellName("AF48"), (WellPosition{31, 47}));
  EXPECT_EQ(*ParseWellName("AA1"), (WellPosition{26, 0}));
}

TEST(WellName, RejectsNamesNoPlateHas) {
  for (const char* bad : {"", "A", "1", "A0", "A49", "AG01", "BA01", "A1x", "A-1", "ABC1", "A0001"}) {
    EXPECT_FALSE(ParseWellName(bad).has_value()) << bad;
  }
}

TEST(WellName, WritesZeroPaddedNamesThatParseBack) {
  EXPECT_EQ(WellName(WellPosition{0, 0}), "A01");
  EXPECT_EQ(WellName(WellPosition{31, 47}), "AF48");
  EXPECT_EQ(WellName(95, PlateGeometry{8, 12}), "H12");
  for (int well = 0; well < 1536; ++well) {
    const PlateGeometry g{32, 48};
    EXPECT_EQ(*ParseWellName(WellName(well, g)), (WellPosition{well / 48, well % 48}));
  }
}

TEST(PlateGeometry, KnowsTheThreeStandardPlates) {
  EXPECT_EQ(*PlateGeometry::FromWellCount(96), (PlateGeometry{8, 12}));
  EXPECT_EQ(*PlateGeometry::FromWellCount(384), (PlateGeometry{16, 24}));
  EXPECT_EQ(*PlateGeometry::FromWellCount(1536), (PlateGeometry{32, 48}));
  EXPECT_FALSE(PlateGeometry::FromWellCount(100).has_value());
  EXPECT_EQ(*PlateGeometry::SmallestHolding(7, 11), (PlateGeometry{8, 12}));
  EXPECT_EQ(*PlateGeometry::SmallestHolding(8, 0), (PlateGeometry{16, 24}));
  EXPECT_EQ(*PlateGeometry::SmallestHolding(0, 24), (PlateGeometry{32, 48}));
  EXPECT_FALSE(PlateGeometry::SmallestHolding(32, 0).has_value());
}

TEST(Plate, SummarisesPointsAndTimes) {
  Plate plate;
  plate.Allocate(PlateGeometry{8, 12}, {340.0, 977.0});
  plate.at(0, 0).Append(0.0, 1.0, PointStatus::kValid);
  plate.at(0, 0).Append(0.5, 0.99, PointStatus::kValid);
  plate.at(0, 5).Append(1.0, std::nan(""), PointStatus::kSaturated);
  plate.at(1, 5).Append(2.0, std::nan(""), PointStatus::kMissing);
  EXPECT_EQ(plate.WellsWithData(), 2);
  EXPECT_EQ(plate.Reads(), 2);
  EXPECT_EQ(plate.TimeSpanMin()->first, 0.0);
  EXPECT_EQ(plate.TimeSpanMin()->second, 2.0);
  EXPECT_EQ(plate.CountPoints(PointStatus::kSaturated), 1);
  EXPECT_EQ(plate.CountPoints(PointStatus::kMissing), 1);
  EXPECT_EQ(plate.ChannelOf(977.2), 1);
  EXPECT_EQ(plate.ChannelOf(900.0), -1);
  EXPECT_FALSE(plate.TemperatureRangeC().has_value());
}

TEST(DecodeText, ReadsUtf8WithAndWithoutBomAndUtf16BothOrders) {
  EXPECT_EQ(detail::DecodeText("a,b\n", "f").encoding, "UTF-8");
  const auto bom = detail::DecodeText("\xEF\xBB\xBF" "a,b\n", "f");
  EXPECT_EQ(bom.encoding, "UTF-8 with BOM");
  EXPECT_EQ(bom.text, "a,b\n");
  const std::string le("\xFF\xFE" "a\0,\0\xB5\0\n\0", 10);
  const auto le_text = detail::DecodeText(le, "f");
  EXPECT_EQ(le_text.encoding, "UTF-16LE");
  EXPECT_EQ(le_text.text, "a,\xC2\xB5\n");  // µ as UTF-8
  const std::string be("\xFE\xFF\0a\0,\0b", 8);
  EXPECT_EQ(detail::DecodeText(be, "f").text, "a,b");
}

TEST(DecodeText, ReadsLatin1WhenTheBytesAreNotUtf8) {
  const auto text = detail::DecodeText("Temp 37\xB0" "C\n", "f");
  EXPECT_EQ(text.encoding, "Latin-1");
  EXPECT_EQ(text.text, "Temp 37\xC2\xB0" "C\n");
}

TEST(DecodeText, RejectsEmptyBinaryAndBrokenUtf16WithTheFileName) {
  EXPECT_THROW(detail::DecodeText("", "empty.csv"), InputError);
  try {
    detail::DecodeText(std::string("ab\ncd\0ef", 8), "bin.dat");
    FAIL() << "binary data accepted";
  } catch (const InputError& e) {
    EXPECT_EQ(e.file(), "bin.dat");
    EXPECT_EQ(e.line(), 2);
    EXPECT_NE(e.reason().find("binary"), std::string::npos);
  }
  EXPECT_THROW(detail::DecodeText(std::string("\xFF\xFE" "a\0b", 5), "odd.csv"), InputError);
  EXPECT_THROW(detail::DecodeText(std::string("\xFF\xFE\x00\xDC", 4), "lone.csv"), InputError);
  EXPECT_THROW(detail::DecodeText(" \r\n\n", "blank.csv"), InputError);
}

TEST(TextTable, SplitsLinesOfEveryEndingAndKeepsLineNumbers) {
  detail::TextTable crlf("a,b\r\n\r\nc, d \r\n", ',');
  ASSERT_EQ(crlf.num_rows(), 3u);
  std::vector<std::string_view> cells;
  crlf.GetRow(1, &cells);
  EXPECT_TRUE(cells.empty());
  crlf.GetRow(2, &cells);
  ASSERT_EQ(cells.size(), 2u);
  EXPECT_EQ(cells[1], "d");
  EXPECT_EQ(crlf.line_number(2), 3);
  detail::TextTable cr("x;y\ry;z", ';');
  EXPECT_EQ(cr.num_rows(), 2u);
}

TEST(TextTable, UnquotesCellsAndKeepsEarlierViewsValid) {
  detail::TextTable table("\"a, b\",\"say \"\"hi\"\"\",c\n", ',');
  std::vector<std::string_view> cells;
  table.GetRow(0, &cells);
  ASSERT_EQ(cells.size(), 3u);
  EXPECT_EQ(cells[0], "a, b");
  EXPECT_EQ(cells[1], "say \"hi\"");
  EXPECT_EQ(cells[2], "c");
}

TEST(DetectDelimiter, PrefersTheSeparatorThatSplitsRowsConsistently) {
  EXPECT_EQ(detail::DetectDelimiter("a,b,c\n1,2,3\n"), ',');
  EXPECT_EQ(detail::DetectDelimiter("Well;Time;A\nA1;0;0,5\nA1;30;0,4\n"), ';');
  EXPECT_EQ(detail::DetectDelimiter("Time\tA1\tA2\n0\t0,5\t0,6\n30\t0,4\t0,5\n"), '\t');
  EXPECT_EQ(detail::DetectDelimiter("Reader: X, Y; Z\nWell,Time,A\nA1,0,1\nA1,1,1\n"), ',');
}

// Levenshtein distance: "kitten" -> "sitting" is 3, the textbook example.
TEST(EditDistanceIgnoreCase, CountsEditsAndIgnoresCase) {
  EXPECT_EQ(EditDistanceIgnoreCase("kitten", "sitting"), 3);
  EXPECT_EQ(EditDistanceIgnoreCase("Km_uM", "km_um"), 0);
  EXPECT_EQ(EditDistanceIgnoreCase("", "abc"), 3);
  EXPECT_EQ(EditDistanceIgnoreCase("epsilon", "epsilom"), 1);
}

}  // namespace
}  // namespace ratewell
