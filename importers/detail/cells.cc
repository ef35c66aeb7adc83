#include "importers/detail/cells.h"

#include <algorithm>
#include <cctype>
#include <array>
#include <charconv>
#include <cmath>
#include <limits>

namespace ratewell {

const char* TableLayoutToString(TableLayout layout) {
  switch (layout) {
    case TableLayout::kLong: return "long";
    case TableLayout::kWide: return "wide";
    case TableLayout::kGrid: return "grid";
    case TableLayout::kAuto: break;
  }
  return "auto";
}

bool StringToTableLayout(std::string_view text, TableLayout* layout) {
  const std::string word = detail::ToLower(detail::Trim(text));
  if (word == "auto") *layout = TableLayout::kAuto;
  else if (word == "long") *layout = TableLayout::kLong;
  else if (word == "wide") *layout = TableLayout::kWide;
  else if (word == "grid") *layout = TableLayout::kGrid;
  else return false;
  return true;
}

const char* TimeUnitToString(TimeUnit unit) {
  switch (unit) {
    case TimeUnit::kSeconds: return "s";
    case TimeUnit::kMinutes: return "min";
    case TimeUnit::kHours: return "h";
    case TimeUnit::kAuto: break;
  }
  return "auto";
}

bool StringToTimeUnit(std::string_view text, TimeUnit* unit) {
  const std::string word = detail::ToLower(detail::Trim(text));
  static constexpr std::array<std::string_view, 6> kSeconds = {"s", "sec", "secs", "second", "seconds", "sek"};
  static constexpr std::array<std::string_view, 6> kMinutes = {"min", "mins", "minute", "minutes", "m", "minuten"};
  static constexpr std::array<std::string_view, 6> kHours = {"h", "hr", "hrs", "hour", "hours", "std"};
  if (word == "auto") { *unit = TimeUnit::kAuto; return true; }
  if (std::find(kSeconds.begin(), kSeconds.end(), word) != kSeconds.end()) { *unit = TimeUnit::kSeconds; return true; }
  if (std::find(kMinutes.begin(), kMinutes.end(), word) != kMinutes.end()) { *unit = TimeUnit::kMinutes; return true; }
  if (std::find(kHours.begin(), kHours.end(), word) != kHours.end()) { *unit = TimeUnit::kHours; return true; }
  return false;
}

namespace detail {

std::string_view Trim(std::string_view text) {
  std::size_t b = 0;
  std::size_t e = text.size();
  while (b < e && (text[b] == ' ' || text[b] == '\t' || text[b] == '\r' || text[b] == '\n')) ++b;
  while (e > b && (text[e - 1] == ' ' || text[e - 1] == '\t' || text[e - 1] == '\r' || text[e - 1] == '\n')) --e;
  return text.substr(b, e - b);
}

bool EqualsIgnoreCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i) {
    char x = a[i];
    char y = b[i];
    if (x >= 'A' && x <= 'Z') x = static_cast<char>(x - 'A' + 'a');
    if (y >= 'A' && y <= 'Z') y = static_cast<char>(y - 'A' + 'a');
    if (x != y) return false;
  }
  return true;
}

std::string ToLower(std::string_view text) {
  std::string out(text);
  for (char& c : out) {
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  }
  return out;
}

std::optional<double> ParseNumber(std::string_view text, bool decimal_comma) {
  text = Trim(text);
  if (text.empty() || text.size() > 64) return std::nullopt;
  if (text.front() == '+') {
    text.remove_prefix(1);
    if (text.empty() || text.front() == '-' || text.front() == '+') return std::nullopt;
  }
  // from_chars would accept "inf" and "nan"; a value cell must be a number.
  for (char c : text) {
    const bool ok = (c >= '0' && c <= '9') || c == '.' || c == '-' || c == '+' || c == 'e' ||
                    c == 'E' || (decimal_comma && c == ',');
    if (!ok) return std::nullopt;
  }
  char buffer[65];
  const char* first = text.data();
  const char* last = text.data() + text.size();
  if (decimal_comma && text.find(',') != std::string_view::npos) {
    if (text.find('.') != std::string_view::npos) return std::nullopt;
    std::copy(text.begin(), text.end(), buffer);
    std::replace(buffer, buffer + text.size(), ',', '.');
    first = buffer;
    last = buffer + text.size();
  }
  double value = 0.0;
  const auto [end, ec] = std::from_chars(first, last, value, std::chars_format::general);
  if (ec != std::errc() || end != last) return std::nullopt;
  if (!std::isfinite(value) || std::abs(value) > 1e300) return std::nullopt;
  return value;
}

namespace {

constexpr std::array<std::string_view, 17> kOverflowWords = {
    "over", "ovrflw", "overflow", "ovflw", "ovfl", "sat", "saturated", "high", "hi",
    "out",  "oor",    "range",    "inf",   "+inf", "infinity", "\xE2\x88\x9E" /* ∞ */,
    "over range"};

bool IsSymbolRun(std::string_view text) {
  if (text.empty()) return false;
  return std::all_of(text.begin(), text.end(), [](char c) {
    return c == '*' || c == '#' || c == '+' || c == '!' || c == '?' || c == '~' || c == '^';
  });
}

}  // namespace

bool IsOverflowMarker(std::string_view text, const std::vector<std::string>& extra_markers,
                      bool decimal_comma) {
  text = Trim(text);
  if (text.empty()) return false;
  const std::string lower = ToLower(text);
  if (std::find(kOverflowWords.begin(), kOverflowWords.end(), lower) != kOverflowWords.end()) return true;
  for (const std::string& marker : extra_markers) {
    if (EqualsIgnoreCase(Trim(marker), text)) return true;
  }
  if (IsSymbolRun(text)) return true;
  if (text.front() == '>') {
    std::string_view rest = text.substr(1);
    if (!rest.empty() && rest.front() == '=') rest.remove_prefix(1);
    return ParseNumber(rest, decimal_comma).has_value();
  }
  return false;
}

bool IsMissingMarker(std::string_view text) {
  text = Trim(text);
  if (text.empty()) return true;
  const std::string lower = ToLower(text);
  if (lower == "na" || lower == "n/a" || lower == "nan" || lower == "n.a." || lower == "none" ||
      lower == "\xE2\x80\x94" /* em dash */) {
    return true;
  }
  return std::all_of(text.begin(), text.end(), [](char c) { return c == '-'; });
}

std::optional<CellValue> ParseValueCell(std::string_view text, bool decimal_comma,
                                        const std::vector<std::string>& extra_markers) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  if (const auto number = ParseNumber(text, decimal_comma)) {
    return CellValue{*number, PointStatus::kValid};
  }
  if (IsMissingMarker(text)) return CellValue{kNaN, PointStatus::kMissing};
  if (IsOverflowMarker(text, extra_markers, decimal_comma)) return CellValue{kNaN, PointStatus::kSaturated};
  return std::nullopt;
}

bool LooksLikeClockTime(std::string_view text) { return text.find(':') != std::string_view::npos; }

double ToMinutes(double amount, TimeUnit unit) {
  switch (unit) {
    case TimeUnit::kMinutes: return amount;
    case TimeUnit::kHours: return amount * 60.0;
    case TimeUnit::kSeconds:
    case TimeUnit::kAuto: break;
  }
  return amount / 60.0;
}

std::optional<double> ParseTimeMinutes(std::string_view text, TimeUnit unit, bool decimal_comma) {
  text = Trim(text);
  if (text.empty()) return std::nullopt;
  if (!LooksLikeClockTime(text)) {
    const auto number = ParseNumber(text, decimal_comma);
    if (!number || *number < 0.0) return std::nullopt;
    return ToMinutes(*number, unit);
  }
  // h:mm:ss(.fff) or mm:ss(.fff). Fields after the first must be 0..59.
  std::array<std::string_view, 3> fields;
  std::size_t count = 0;
  std::size_t start = 0;
  while (true) {
    const std::size_t colon = text.find(':', start);
    if (count == fields.size()) return std::nullopt;
    fields[count++] = text.substr(start, colon == std::string_view::npos ? text.npos : colon - start);
    if (colon == std::string_view::npos) break;
    start = colon + 1;
  }
  if (count < 2) return std::nullopt;
  const auto whole = [](std::string_view f) -> std::optional<long> {
    if (f.empty() || f.size() > 9) return std::nullopt;
    long v = 0;
    for (char c : f) {
      if (c < '0' || c > '9') return std::nullopt;
      v = v * 10 + (c - '0');
    }
    return v;
  };
  const auto seconds = ParseNumber(fields[count - 1], true);
  if (!seconds || *seconds < 0.0 || *seconds >= 60.0 || fields[count - 1].front() == '-' ||
      fields[count - 1].find_first_of("eE") != std::string_view::npos) {
    return std::nullopt;
  }
  const auto minutes = whole(fields[count - 2]);
  if (!minutes) return std::nullopt;
  if (count == 3) {
    const auto hours = whole(fields[0]);
    if (!hours || *minutes >= 60) return std::nullopt;
    return static_cast<double>(*hours) * 60.0 + static_cast<double>(*minutes) + *seconds / 60.0;
  }
  return static_cast<double>(*minutes) + *seconds / 60.0;
}

std::string_view HeaderUnitToken(std::string_view header) {
  header = Trim(header);
  const std::size_t open_paren = header.rfind('(');
  const std::size_t open_bracket = header.rfind('[');
  std::size_t open = std::string_view::npos;
  if (open_paren != std::string_view::npos) open = open_paren;
  if (open_bracket != std::string_view::npos &&
      (open == std::string_view::npos || open_bracket > open)) {
    open = open_bracket;
  }
  if (open != std::string_view::npos) {
    const char close_char = header[open] == '(' ? ')' : ']';
    const std::size_t close = header.find(close_char, open);
    if (close != std::string_view::npos) return Trim(header.substr(open + 1, close - open - 1));
  }
  for (char separator : {'/', '_'}) {
    const std::size_t at = header.rfind(separator);
    if (at != std::string_view::npos && at + 1 < header.size()) return Trim(header.substr(at + 1));
  }
  // "Time s", "Time min": a last word that is a time unit.
  const std::size_t space = header.rfind(' ');
  if (space != std::string_view::npos) {
    const std::string_view last = Trim(header.substr(space + 1));
    TimeUnit unit;
    if (StringToTimeUnit(last, &unit) && unit != TimeUnit::kAuto) return last;
  }
  return {};
}

TimeUnit TimeUnitFromHeader(std::string_view header) {
  TimeUnit unit = TimeUnit::kAuto;
  const std::string_view token = HeaderUnitToken(header);
  if (!token.empty() && StringToTimeUnit(token, &unit)) return unit;
  return TimeUnit::kAuto;
}

bool DetectDecimalComma(const std::vector<std::string_view>& sample_cells, char delimiter) {
  if (delimiter == ',') return false;
  int comma = 0;
  int dot = 0;
  for (std::string_view cell : sample_cells) {
    cell = Trim(cell);
    if (cell.empty() || cell.find(':') != std::string_view::npos) continue;
    bool digits_only = true;
    int commas = 0;
    int dots = 0;
    for (char c : cell) {
      if (c == ',') ++commas;
      else if (c == '.') ++dots;
      else if (!((c >= '0' && c <= '9') || c == '-' || c == '+' || c == 'e' || c == 'E')) digits_only = false;
    }
    if (!digits_only) continue;
    if (commas == 1 && dots == 0) ++comma;
    if (dots == 1 && commas == 0) ++dot;
  }
  return comma > 0 && dot == 0;
}

}  // namespace detail
}  // namespace ratewell
