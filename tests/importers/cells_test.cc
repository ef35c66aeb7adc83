// Single-cell parsing: numbers, times, overflow and missing markers, units.
#include "importers/detail/cells.h"

#include <gtest/gtest.h>

#include <cmath>

namespace ratewell::detail {
namespace {

// Closed-form conversions (division by 60 and the like) are exact to a few
// ulps; 1e-12 absolute on values of order 1-100 leaves room for that only.
constexpr double kExact = 1e-12;

TEST(ParseNumber, ReadsPlainScientificAndSignedNumbers) {
  EXPECT_DOUBLE_EQ(*ParseNumber("1.25", false), 1.25);
  EXPECT_DOUBLE_EQ(*ParseNumber("  -3e-4 ", false), -3e-4);
  EXPECT_DOUBLE_EQ(*ParseNumber("+0.5", false), 0.5);
  EXPECT_DOUBLE_EQ(*ParseNumber("2", false), 2.0);
}

TEST(ParseNumber, ReadsDecimalCommaOnlyWhenAsked) {
  EXPECT_DOUBLE_EQ(*ParseNumber("0,125", true), 0.125);
  EXPECT_FALSE(ParseNumber("0,125", false).has_value());
  EXPECT_FALSE(ParseNumber("1.000,5", true).has_value());
}

TEST(ParseNumber, RejectsGarbageInfinityNanAndHugeMagnitudes) {
  for (const char* bad : {"", "abc", "1.2.3", "1e", "inf", "nan", "-inf", "1e400", "2e301",
                          "12abc", "--1", "+-1", "0x1p3"}) {
    EXPECT_FALSE(ParseNumber(bad, false).has_value()) << bad;
  }
}

TEST(ParseValueCell, SortsCellsIntoValidMissingAndSaturated) {
  const std::vector<std::string> none;
  EXPECT_EQ(ParseValueCell("0.8", false, none)->status, PointStatus::kValid);
  EXPECT_EQ(ParseValueCell("", false, none)->status, PointStatus::kMissing);
  EXPECT_EQ(ParseValueCell("N/A", false, none)->status, PointStatus::kMissing);
  EXPECT_EQ(ParseValueCell("OVER", false, none)->status, PointStatus::kSaturated);
  EXPECT_EQ(ParseValueCell("****", false, none)->status, PointStatus::kSaturated);
  EXPECT_EQ(ParseValueCell(">3.5", false, none)->status, PointStatus::kSaturated);
  EXPECT_EQ(ParseValueCell("> 4,0", true, none)->status, PointStatus::kSaturated);
  EXPECT_TRUE(std::isnan(ParseValueCell("OVER", false, none)->value));
  EXPECT_FALSE(ParseValueCell("hello", false, none).has_value());
  EXPECT_FALSE(ParseValueCell(">abc", false, none).has_value());
}

TEST(ParseValueCell, AcceptsUserOverflowMarkersCaseInsensitively) {
  const std::vector<std::string> markers = {"Bright"};
  EXPECT_EQ(ParseValueCell("BRIGHT", false, markers)->status, PointStatus::kSaturated);
  EXPECT_FALSE(ParseValueCell("BRIGHT", false, {}).has_value());
}

TEST(ParseTimeMinutes, ReadsClockTimesAndNumbersInAUnit) {
  EXPECT_NEAR(*ParseTimeMinutes("0:01:30", TimeUnit::kAuto, false), 1.5, kExact);
  EXPECT_NEAR(*ParseTimeMinutes("1:02:03.5", TimeUnit::kAuto, false), 62.0 + 3.5 / 60.0, kExact);
  EXPECT_NEAR(*ParseTimeMinutes("02:30", TimeUnit::kAuto, false), 2.5, kExact);
  EXPECT_NEAR(*ParseTimeMinutes("90", TimeUnit::kSeconds, false), 1.5, kExact);
  EXPECT_NEAR(*ParseTimeMinutes("90", TimeUnit::kAuto, false), 1.5, kExact);
  EXPECT_NEAR(*ParseTimeMinutes("1,5", TimeUnit::kMinutes, true), 1.5, kExact);
  EXPECT_NEAR(*ParseTimeMinutes("0.25", TimeUnit::kHours, false), 15.0, kExact);
}

TEST(ParseTimeMinutes, RejectsNegativeAndMalformedTimes) {
  for (const char* bad : {"-5", "1:60:00", "0:00:61", "a:bc", "1:2:3:4", ":", "12:", "x"}) {
    EXPECT_FALSE(ParseTimeMinutes(bad, TimeUnit::kSeconds, false).has_value()) << bad;
  }
}

TEST(TimeUnitFromHeader, FindsTheUnitInTheUsualWritings) {
  EXPECT_EQ(TimeUnitFromHeader("Time (s)"), TimeUnit::kSeconds);
  EXPECT_EQ(TimeUnitFromHeader("time [min]"), TimeUnit::kMinutes);
  EXPECT_EQ(TimeUnitFromHeader("t/s"), TimeUnit::kSeconds);
  EXPECT_EQ(TimeUnitFromHeader("Time_h"), TimeUnit::kHours);
  EXPECT_EQ(TimeUnitFromHeader("Time (sec)"), TimeUnit::kSeconds);
  EXPECT_EQ(TimeUnitFromHeader("Time min"), TimeUnit::kMinutes);
  EXPECT_EQ(TimeUnitFromHeader("Time"), TimeUnit::kAuto);
  EXPECT_EQ(HeaderUnitToken("Time (fortnights)"), "fortnights");
  EXPECT_EQ(HeaderUnitToken("Time"), "");
}

TEST(DetectDecimalComma, NeedsCommaNumbersAndNoDotNumbers) {
  EXPECT_TRUE(DetectDecimalComma({"0,5", "1,25", "A01"}, ';'));
  EXPECT_FALSE(DetectDecimalComma({"0,5", "1.25"}, ';'));
  EXPECT_FALSE(DetectDecimalComma({"0,5"}, ','));
  EXPECT_FALSE(DetectDecimalComma({"0:01:30", "12"}, '\t'));
}

}  // namespace
}  // namespace ratewell::detail
