// Shared parts of the table readers: header keywords, heading lines, the
// plate builder.
#include "importers/detail/table_readers.h"

#include <algorithm>
#include <array>
#include <cstdio>
#include <numeric>
#include <utility>

namespace ratewell::detail {
namespace {

bool IsAsciiLetter(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z'); }
bool IsDigit(char c) { return c >= '0' && c <= '9'; }
char LowerAscii(char c) { return (c >= 'A' && c <= 'Z') ? static_cast<char>(c - 'A' + 'a') : c; }

// Lower-case words of a header: runs of letters and digits, with a '.'
// between digits kept ("977.5nm" is one word).
std::vector<std::string> Words(std::string_view text) {
  std::vector<std::string> words;
  std::string word;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    const bool inner_dot = c == '.' && !word.empty() && IsDigit(word.back()) &&
                           i + 1 < text.size() && IsDigit(text[i + 1]);
    if (IsAsciiLetter(c) || IsDigit(c) || inner_dot) {
      word.push_back(LowerAscii(c));
    } else if (!word.empty()) {
      words.push_back(std::move(word));
      word.clear();
    }
  }
  if (!word.empty()) words.push_back(std::move(word));
  return words;
}

bool HasWord(const std::vector<std::string>& words, std::string_view word) {
  return std::find(words.begin(), words.end(), word) != words.end();
}

// A word made of prefix then 3 or 4 digits ("a340", "od977"); the number.
std::optional<double> PrefixedWavelength(std::string_view word, std::string_view prefix) {
  if (word.size() < prefix.size() + 3 || word.size() > prefix.size() + 4) return std::nullopt;
  if (word.substr(0, prefix.size()) != prefix) return std::nullopt;
  double nm = 0.0;
  for (char c : word.substr(prefix.size())) {
    if (!IsDigit(c)) return std::nullopt;
    nm = nm * 10.0 + (c - '0');
  }
  return nm;
}

std::optional<double> ValueWordWavelength(std::string_view word) {
  for (std::string_view prefix : {"a", "abs", "od"}) {
    if (auto nm = PrefixedWavelength(word, prefix)) return nm;
  }
  return std::nullopt;
}

constexpr std::array<std::string_view, 18> kValueWords = {
    "abs",     "absorbance",  "absorbances", "od",         "value",   "values",
    "reading", "readings",    "signal",      "raw",        "mean",    "average",
    "avg",     "measurement", "result",      "extinction", "optical", "density"};

// Position just after a "°" or "º" sign (UTF-8) at i, or npos.
std::size_t AfterDegreeSign(std::string_view text, std::size_t i) {
  if (i + 1 < text.size() && static_cast<unsigned char>(text[i]) == 0xC2 &&
      (static_cast<unsigned char>(text[i + 1]) == 0xB0 ||
       static_cast<unsigned char>(text[i + 1]) == 0xBA)) {
    return i + 2;
  }
  return std::string_view::npos;
}

bool HasDegreeCelsius(std::string_view lower) {
  for (std::size_t i = 0; i < lower.size(); ++i) {
    std::size_t j = AfterDegreeSign(lower, i);
    if (j == std::string_view::npos) continue;
    while (j < lower.size() && lower[j] == ' ') ++j;
    if (j < lower.size() && lower[j] == 'c') return true;
  }
  return false;
}

}  // namespace

// ---------------------------------------------------------------------------

ColumnRole ClassifyHeader(std::string_view header) {
  const std::string lower = ToLower(Trim(header));
  if (lower.empty()) return ColumnRole::kOther;
  const std::vector<std::string> words = Words(lower);
  if (lower.find("well") != std::string::npos) return ColumnRole::kWell;
  if (lower.find("temp") != std::string::npos || HasDegreeCelsius(lower) ||
      HasWord(words, "degc") || HasWord(words, "celsius")) {
    return ColumnRole::kTemperature;
  }
  if (lower.find("wavelength") != std::string::npos || HasWord(words, "lambda") ||
      lower.find("\xCE\xBB") != std::string::npos /* λ */ || HasWord(words, "wl") ||
      (words.size() == 1 && words[0] == "nm")) {
    return ColumnRole::kWavelength;
  }
  if (lower.find("time") != std::string::npos || lower.find("zeit") != std::string::npos ||
      HasWord(words, "elapsed") || (!words.empty() && words[0] == "t" && lower[0] == 't')) {
    return ColumnRole::kTime;
  }
  for (const std::string& word : words) {
    if (std::find(kValueWords.begin(), kValueWords.end(), word) != kValueWords.end() ||
        ValueWordWavelength(word)) {
      return ColumnRole::kValue;
    }
  }
  return ColumnRole::kOther;
}

std::optional<double> WavelengthInHeader(std::string_view header) {
  const std::vector<std::string> words = Words(ToLower(header));
  for (std::size_t i = 0; i < words.size(); ++i) {
    const std::string& word = words[i];
    if (auto nm = ValueWordWavelength(word)) return nm;
    if (word.size() > 2 && word.compare(word.size() - 2, 2, "nm") == 0) {
      if (auto nm = ParseNumber(std::string_view(word).substr(0, word.size() - 2), false);
          nm && *nm > 0.0) {
        return nm;
      }
    }
    // "OD 340", "Abs 977": a value word, then a 3 or 4 digit number.
    if (i + 1 < words.size() &&
        (word == "a" || word == "abs" || word == "od" || word == "absorbance")) {
      if (auto nm = PrefixedWavelength(words[i + 1], "")) return nm;
    }
    if (i + 1 < words.size() && words[i + 1] == "nm") {
      if (auto nm = ParseNumber(word, false); nm && *nm > 0.0) return nm;
    }
  }
  return std::nullopt;
}

bool LooksLikeWellName(std::string_view text) {
  text = Trim(text);
  std::size_t letters = 0;
  while (letters < text.size() && IsAsciiLetter(text[letters])) ++letters;
  if (letters < 1 || letters > 2) return false;
  const std::size_t digits = text.size() - letters;
  if (digits < 1 || digits > 3) return false;
  return std::all_of(text.begin() + letters, text.end(), IsDigit);
}

std::optional<WellHeader> ParseWellHeader(std::string_view header, bool decimal_comma) {
  const std::string_view text = Trim(header);
  std::size_t letters = 0;
  while (letters < text.size() && IsAsciiLetter(text[letters])) ++letters;
  if (letters < 1 || letters > 2) return std::nullopt;
  std::size_t end = letters;
  while (end < text.size() && IsDigit(text[end])) ++end;
  if (end == letters || end - letters > 2) return std::nullopt;
  const std::optional<WellPosition> position = ParseWellName(text.substr(0, end));
  if (!position) return std::nullopt;
  WellHeader result{*position};
  std::string_view rest = Trim(text.substr(end));
  if (rest.empty()) return result;
  // A wavelength suffix: "@977", "(340 nm)", "[900nm]", "_340", "- 340 nm".
  const auto is_separator = [](char c) {
    return c == '@' || c == '(' || c == '[' || c == '_' || c == '-' || c == ':' || c == ' ' ||
           c == '/';
  };
  while (!rest.empty() && is_separator(rest.front())) rest.remove_prefix(1);
  while (!rest.empty() && (rest.back() == ')' || rest.back() == ']' || rest.back() == ' ')) {
    rest.remove_suffix(1);
  }
  if (rest.size() >= 2 && EqualsIgnoreCase(rest.substr(rest.size() - 2), "nm")) {
    rest = Trim(rest.substr(0, rest.size() - 2));
  }
  const std::optional<double> nm = ParseNumber(rest, decimal_comma);
  if (!nm || *nm <= 0.0) return std::nullopt;
  result.wavelength_nm = *nm;
  return result;
}

TimeUnit TimeColumnUnit(std::string_view header, const std::string& file, int line, int column) {
  const TimeUnit unit = TimeUnitFromHeader(header);
  if (unit != TimeUnit::kAuto) return unit;
  // A single word in brackets ("Time (ms)", "t [fortnights]") is meant as a
  // unit; if it is not one we know, say so rather than guess.
  header = Trim(header);
  std::string_view token;
  for (const auto& [open, close] : {std::pair{'(', ')'}, std::pair{'[', ']'}}) {
    const std::size_t a = header.rfind(open);
    if (a == std::string_view::npos) continue;
    const std::size_t b = header.find(close, a);
    if (b == std::string_view::npos) continue;
    token = Trim(header.substr(a + 1, b - a - 1));
    break;
  }
  if (token.empty()) {
    // "t/ms"
    const std::size_t slash = header.rfind('/');
    if (slash != std::string_view::npos) token = Trim(header.substr(slash + 1));
  }
  const bool one_word =
      !token.empty() && token.size() <= 12 && std::all_of(token.begin(), token.end(), [](char c) {
        return IsAsciiLetter(c) || static_cast<unsigned char>(c) >= 0x80;
      });
  if (one_word) {
    throw InputError(file, line, column,
                     "unknown time unit " + Quote(token) + " in header " + Quote(header) +
                         "; expected s, min or h (e.g. 'Time (s)'), or h:mm:ss times");
  }
  return TimeUnit::kAuto;
}

// ---------------------------------------------------------------------------

bool LooksLikeDate(std::string_view text) {
  // d{1,4} sep d{1,2} sep d{1,4}, the same separator twice.
  for (std::size_t i = 0; i < text.size(); ++i) {
    if (!IsDigit(text[i]) || (i > 0 && IsDigit(text[i - 1]))) continue;
    std::size_t j = i;
    while (j < text.size() && IsDigit(text[j])) ++j;
    if (j - i > 4 || j >= text.size()) continue;
    const char sep = text[j];
    if (sep != '-' && sep != '/' && sep != '.') continue;
    std::size_t k = j + 1;
    while (k < text.size() && IsDigit(text[k])) ++k;
    if (k - j - 1 < 1 || k - j - 1 > 2 || k >= text.size() || text[k] != sep) continue;
    std::size_t m = k + 1;
    while (m < text.size() && IsDigit(text[m])) ++m;
    if (m - k - 1 >= 1 && m - k - 1 <= 4) return true;
  }
  return false;
}

Heading ParseHeading(std::string_view text, bool decimal_comma, TimeUnit bare_unit) {
  Heading heading;
  const bool has_date = LooksLikeDate(text);
  std::string last_word;  // the word just before a number, lower case
  const auto set_time = [&](double minutes, std::string unit) {
    if (heading.time_min) return;
    heading.time_min = minutes;
    heading.time_unit = std::move(unit);
  };
  const std::size_t n = text.size();
  std::size_t i = 0;
  while (i < n) {
    const char c = text[i];
    if (IsAsciiLetter(c)) {
      std::size_t j = i;
      while (j < n && IsAsciiLetter(text[j])) ++j;
      last_word = ToLower(text.substr(i, j - i));
      i = j;
      continue;
    }
    if (const std::size_t after = AfterDegreeSign(text, i); after != std::string_view::npos) {
      std::size_t j = after;
      while (j < n && text[j] == ' ') ++j;
      if (j < n && LowerAscii(text[j]) == 'c' && (j + 1 == n || !IsAsciiLetter(text[j + 1]))) {
        last_word = "degc";  // "Temperature (°C): 25.1"
        i = j + 1;
      } else {
        i = after;
      }
      continue;
    }
    if (i + 1 < n && static_cast<unsigned char>(c) == 0xCE &&
        static_cast<unsigned char>(text[i + 1]) == 0xBB) {  // λ
      last_word = "lambda";
      i += 2;
      continue;
    }
    if (!IsDigit(c)) {
      if (c == ';' || c == '|' || c == ',') last_word.clear();
      ++i;
      continue;
    }
    // A number or a clock time.
    std::size_t j = i;
    while (j < n && (IsDigit(text[j]) || text[j] == ':' || text[j] == '.' ||
                     (decimal_comma && text[j] == ','))) {
      ++j;
    }
    std::string_view token = text.substr(i, j - i);
    while (!token.empty() && !IsDigit(token.back())) token.remove_suffix(1);
    i = i + token.size();
    const std::string keyword = std::move(last_word);
    last_word.clear();
    if (token.find(':') != std::string_view::npos) {
      if (!has_date) {
        if (auto minutes = ParseTimeMinutes(token, TimeUnit::kAuto, decimal_comma)) {
          set_time(*minutes, "h:mm:ss");
        }
      }
      continue;
    }
    std::optional<double> number = ParseNumber(token, decimal_comma);
    if (!number && decimal_comma) number = ParseNumber(token, false);
    if (!number) continue;
    // The unit after the number.
    std::size_t k = i;
    while (k < n && text[k] == ' ') ++k;
    if (const std::size_t after = AfterDegreeSign(text, k); after != std::string_view::npos) {
      std::size_t m = after;
      while (m < n && text[m] == ' ') ++m;
      if (m < n && LowerAscii(text[m]) == 'c') {
        if (!heading.temperature_C) heading.temperature_C = *number;
        i = m + 1;
        continue;
      }
    }
    std::size_t m = k;
    while (m < n && IsAsciiLetter(text[m])) ++m;
    const std::string unit_word = ToLower(text.substr(k, m - k));
    TimeUnit unit = TimeUnit::kAuto;
    if (unit_word == "nm") {
      if (!heading.wavelength_nm && *number > 0.0) heading.wavelength_nm = *number;
      i = m;
      continue;
    }
    if (!unit_word.empty() && unit_word != "auto" && StringToTimeUnit(unit_word, &unit)) {
      double minutes = ToMinutes(*number, unit);
      i = m;
      // "1 min 30 s", "1h 5min": further parts in smaller units add up.
      TimeUnit last_unit = unit;
      while (true) {
        std::size_t a = i;
        while (a < n && text[a] == ' ') ++a;
        std::size_t b = a;
        while (b < n && IsDigit(text[b])) ++b;
        if (b == a) break;
        std::size_t word_start = b;
        while (word_start < n && text[word_start] == ' ') ++word_start;
        std::size_t word_end = word_start;
        while (word_end < n && IsAsciiLetter(text[word_end])) ++word_end;
        TimeUnit part_unit = TimeUnit::kAuto;
        const std::string part_word = ToLower(text.substr(word_start, word_end - word_start));
        if (part_word.empty() || part_word == "auto" || !StringToTimeUnit(part_word, &part_unit) ||
            ToMinutes(1.0, part_unit) >= ToMinutes(1.0, last_unit)) {
          break;
        }
        const std::optional<double> part = ParseNumber(text.substr(a, b - a), false);
        if (!part) break;
        minutes += ToMinutes(*part, part_unit);
        last_unit = part_unit;
        i = word_end;
      }
      set_time(minutes, TimeUnitToString(unit));
      continue;
    }
    if (unit_word == "c" || unit_word == "degc" || unit_word == "celsius") {
      if (!heading.temperature_C) heading.temperature_C = *number;
      i = m;
      continue;
    }
    // No unit after the number: the keyword before it decides.
    if (keyword == "time" || keyword == "t" || keyword == "zeit") {
      set_time(ToMinutes(*number, bare_unit), "");
    } else if (StringToTimeUnit(keyword, &unit) && unit != TimeUnit::kAuto) {
      set_time(ToMinutes(*number, unit), TimeUnitToString(unit));  // "Time (s): 30"
    } else if (keyword == "wavelength" || keyword == "lambda" || keyword == "wl" ||
               keyword == "nm") {
      if (!heading.wavelength_nm && *number > 0.0) heading.wavelength_nm = *number;
    } else if (keyword == "temp" || keyword == "temperature" || keyword == "degc") {
      if (!heading.temperature_C) heading.temperature_C = *number;
    }
  }
  return heading;
}

std::string JoinCells(const std::vector<std::string_view>& cells) {
  std::string out;
  for (std::size_t i = 0; i < UsedCells(cells); ++i) {
    if (i > 0) out += " ; ";
    out += cells[i];
  }
  return out;
}

bool IsBlankRow(const std::vector<std::string_view>& cells) {
  return std::all_of(cells.begin(), cells.end(),
                     [](std::string_view cell) { return Trim(cell).empty(); });
}

std::size_t UsedCells(const std::vector<std::string_view>& cells) {
  std::size_t used = cells.size();
  while (used > 0 && Trim(cells[used - 1]).empty()) --used;
  return used;
}

void ThrowCellError(const std::string& file, int line, int column_number, std::string_view header,
                    std::string_view cell, const std::string& what) {
  std::string where = "column " + std::to_string(column_number);
  if (!Trim(header).empty()) where += " (" + Quote(Trim(header)) + ")";
  throw InputError(file, line, column_number,
                   "expected " + what + " in " + where + ", found " + FoundText(cell));
}

std::string FoundText(std::string_view cell) {
  cell = Trim(cell);
  return cell.empty() ? std::string("an empty cell") : Quote(cell);
}

std::string Quote(std::string_view text) {
  constexpr std::size_t kMaxShown = 40;
  std::string shown(text.substr(0, kMaxShown));
  // Do not cut a UTF-8 sequence in half.
  if (text.size() > kMaxShown) {
    while (!shown.empty() && (static_cast<unsigned char>(shown.back()) & 0xC0) == 0x80) {
      shown.pop_back();
    }
    if (!shown.empty() && static_cast<unsigned char>(shown.back()) >= 0xC0) shown.pop_back();
    shown += "...";
  }
  return "'" + shown + "'";
}

namespace {
std::string FormatShort(double x) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.6g", x);
  return buffer;
}
}  // namespace

std::string FormatWavelength(double nm) { return FormatShort(nm) + " nm"; }
std::string FormatMinutes(double minutes) { return FormatShort(minutes) + " min"; }

// ---------------------------------------------------------------------------

int PlateBuilder::Channel(double wavelength_nm) {
  for (std::size_t i = 0; i < channel_nm_.size(); ++i) {
    const double nm = channel_nm_[i];
    if (std::isnan(wavelength_nm) ? std::isnan(nm) : std::abs(nm - wavelength_nm) <= 0.5) {
      return static_cast<int>(i);
    }
  }
  channel_nm_.push_back(wavelength_nm);
  canvas_.emplace_back(static_cast<std::size_t>(kCanvasWells));
  return static_cast<int>(channel_nm_.size()) - 1;
}

void PlateBuilder::Reserve(Series* series, std::size_t reads) {
  series->time_min.reserve(reads);
  series->value.reserve(reads);
  series->status.reserve(reads);
}

void PlateBuilder::ReserveReads(std::size_t reads) {
  reserve_reads_ = reads;
  for (std::vector<Series>& channel : canvas_) {
    for (Series& series : channel) {
      if (!series.empty()) Reserve(&series, reads);
    }
  }
}

void PlateBuilder::ThrowTimeOrder(int channel, WellPosition position, double time_min,
                                  double previous_min, int line, int column) const {
  std::string where = "well " + WellName(position);
  if (!std::isnan(channel_nm_[channel])) where += " at " + FormatWavelength(channel_nm_[channel]);
  if (time_min == previous_min) {
    throw InputError(file_, line, column,
                     where + " has a second reading at " + FormatMinutes(time_min) +
                         "; expected one reading per well, time and wavelength");
  }
  throw InputError(file_, line, column,
                   "time goes backwards for " + where + ": " + FormatMinutes(time_min) + " after " +
                       FormatMinutes(previous_min) + "; expected times to increase within a well");
}

Plate PlateBuilder::Finish(std::optional<PlateGeometry> geometry, double assumed_wavelength_nm,
                           std::string time_unit, std::vector<std::string> warnings) {
  if (max_row_ < 0) {
    throw InputError(file_, 0, 0, "the table names no well; expected well names such as A01");
  }
  if (!geometry) geometry = PlateGeometry::SmallestHolding(max_row_, max_column_);
  if (!geometry || max_row_ >= geometry->rows || max_column_ >= geometry->columns) {
    throw InputError(file_, 0, 0,
                     "well " + WellName(WellPosition{max_row_, max_column_}) +
                         " lies outside the plate; expected a 96, 384 or 1536-well plate");
  }
  if (channel_nm_.empty()) Channel(std::numeric_limits<double>::quiet_NaN());
  const auto unnamed = std::find_if(channel_nm_.begin(), channel_nm_.end(),
                                    [](double nm) { return std::isnan(nm); });
  if (unnamed != channel_nm_.end()) {
    if (channel_nm_.size() > 1) {
      throw InputError(file_, 0, 0,
                       "some readings name their wavelength and some do not; expected every "
                       "table or block of a multi-wavelength file to name its wavelength");
    }
    if (!std::isfinite(assumed_wavelength_nm) || assumed_wavelength_nm <= 0.0) {
      throw InputError(file_, 0, 0,
                       "the file names no wavelength and the assumed wavelength is not a "
                       "positive number");
    }
    channel_nm_[0] = assumed_wavelength_nm;
    warnings.push_back("the file names no wavelength; its readings are taken as " +
                       FormatWavelength(assumed_wavelength_nm));
  }
  std::vector<int> order(channel_nm_.size());
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(),
            [&](int a, int b) { return channel_nm_[a] < channel_nm_[b]; });
  std::vector<double> sorted_nm;
  for (int channel : order) sorted_nm.push_back(channel_nm_[channel]);

  Plate plate;
  plate.Allocate(*geometry, std::move(sorted_nm));
  for (std::size_t k = 0; k < order.size(); ++k) {
    std::vector<Series>& canvas = canvas_[order[k]];
    for (int row = 0; row < geometry->rows; ++row) {
      for (int column = 0; column < geometry->columns; ++column) {
        plate.at(static_cast<int>(k), row * geometry->columns + column) =
            std::move(canvas[static_cast<std::size_t>(row) * kCanvasColumns + column]);
      }
    }
  }
  canvas_.clear();

  std::vector<std::size_t> by_time(temperature_time_min_.size());
  std::iota(by_time.begin(), by_time.end(), std::size_t{0});
  std::stable_sort(by_time.begin(), by_time.end(), [&](std::size_t a, std::size_t b) {
    return temperature_time_min_[a] < temperature_time_min_[b];
  });
  for (std::size_t index : by_time) {
    const double t = temperature_time_min_[index];
    if (!plate.temperature_time_min.empty() && plate.temperature_time_min.back() == t) continue;
    plate.temperature_time_min.push_back(t);
    plate.temperature_C.push_back(temperature_C_[index]);
  }
  plate.report.time_unit = std::move(time_unit);
  plate.report.warnings = std::move(warnings);
  return plate;
}

}  // namespace ratewell::detail
