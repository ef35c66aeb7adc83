// Internal: parsing single cells - numbers, times, overflow markers, units.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "importers/plate.h"
#include "importers/read_plate.h"

namespace ratewell::detail {

std::string_view Trim(std::string_view text);
bool EqualsIgnoreCase(std::string_view a, std::string_view b);
std::string ToLower(std::string_view text);

// A finite number: "1.25", "-3e-4", "+0.5"; with decimal_comma "1,25" too.
// Rejects empty text, trailing garbage, inf and nan, and magnitudes above 1e300.
std::optional<double> ParseNumber(std::string_view text, bool decimal_comma);

// Built-in overflow markers, compared case-insensitively: OVER, OVRFLW,
// OVERFLOW, OVFLW, OVFL, SAT, SATURATED, HIGH, HI, OUT, OOR, RANGE, INF, +INF,
// INFINITY, ∞. Also a run of symbol characters alone ("****", "####", "+++"),
// and a number written with a '>' in front (">3.5", "> 4").
bool IsOverflowMarker(std::string_view text, const std::vector<std::string>& extra_markers,
                      bool decimal_comma);
// Empty, or NA / N/A / NaN / "-" (the usual written forms of "no value").
bool IsMissingMarker(std::string_view text);

// A value cell: number (kValid), missing or saturated; nullopt if none of these.
struct CellValue {
  double value;
  PointStatus status;
};
std::optional<CellValue> ParseValueCell(std::string_view text, bool decimal_comma,
                                        const std::vector<std::string>& extra_markers);

// A time cell in minutes: "h:mm:ss(.fff)", "mm:ss(.fff)", or a number in unit
// (unit kAuto counts as seconds). Negative times are rejected.
std::optional<double> ParseTimeMinutes(std::string_view text, TimeUnit unit, bool decimal_comma);
// True if the cell holds a clock-style time (has a ':').
bool LooksLikeClockTime(std::string_view text);

// The time unit a column header names: "Time (s)", "time [min]", "t/s",
// "Time_h", "Zeit [sec]". kAuto if it names none.
TimeUnit TimeUnitFromHeader(std::string_view header);
// The unit part of a header, whether or not it is a known unit: the text in
// the last (...) or [...], else after the last '/' or '_'; "" if none.
// "Time (fortnights)" -> "fortnights"; "Time" -> "". Lets a reader reject an
// unknown unit instead of guessing.
std::string_view HeaderUnitToken(std::string_view header);

// Converts an amount in unit to minutes.
double ToMinutes(double amount, TimeUnit unit);

// Decides whether numbers in a file use a decimal comma, from sample cells:
// true if cells like "0,123" occur and no "0.123" does (delimiter is not ',').
bool DetectDecimalComma(const std::vector<std::string_view>& sample_cells, char delimiter);

}  // namespace ratewell::detail
