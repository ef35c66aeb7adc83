#include "importers/plate.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "importers/detail/cells.h"

namespace ratewell {
namespace {

constexpr int kMaxRows = 32;     // AF
constexpr int kMaxColumns = 48;  // 1536-well plate

bool IsAsciiLetter(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z'); }
int LetterValue(char c) { return (c >= 'a' ? c - 'a' : c - 'A'); }

}  // namespace

std::optional<PlateGeometry> PlateGeometry::FromWellCount(int wells) {
  switch (wells) {
    case 96: return PlateGeometry{8, 12};
    case 384: return PlateGeometry{16, 24};
    case 1536: return PlateGeometry{32, 48};
    default: return std::nullopt;
  }
}

std::optional<PlateGeometry> PlateGeometry::SmallestHolding(int max_row, int max_column) {
  for (int wells : {96, 384, 1536}) {
    const PlateGeometry g = *FromWellCount(wells);
    if (max_row >= 0 && max_column >= 0 && max_row < g.rows && max_column < g.columns) return g;
  }
  return std::nullopt;
}

std::string RowLabel(int row) {
  if (row < 26) return std::string(1, static_cast<char>('A' + row));
  return std::string{'A', static_cast<char>('A' + row - 26)};
}

std::optional<int> ParseRowLabel(std::string_view text) {
  text = detail::Trim(text);
  if (text.size() == 1 && IsAsciiLetter(text[0])) return LetterValue(text[0]);
  if (text.size() == 2 && IsAsciiLetter(text[0]) && IsAsciiLetter(text[1]) &&
      LetterValue(text[0]) == 0) {
    const int row = 26 + LetterValue(text[1]);
    if (row < kMaxRows) return row;
  }
  return std::nullopt;
}

std::optional<WellPosition> ParseWellName(std::string_view text) {
  text = detail::Trim(text);
  std::size_t letters = 0;
  while (letters < text.size() && letters < 3 && IsAsciiLetter(text[letters])) ++letters;
  if (letters == 0 || letters > 2 || letters == text.size()) return std::nullopt;
  const std::optional<int> row = ParseRowLabel(text.substr(0, letters));
  if (!row) return std::nullopt;
  const std::string_view digits = text.substr(letters);
  if (digits.size() > 3) return std::nullopt;
  int column = 0;
  for (char c : digits) {
    if (c < '0' || c > '9') return std::nullopt;
    column = column * 10 + (c - '0');
  }
  if (column < 1 || column > kMaxColumns) return std::nullopt;
  return WellPosition{*row, column - 1};
}

std::string WellName(WellPosition position) {
  std::string name = RowLabel(position.row);
  const int column = position.column + 1;
  name += static_cast<char>('0' + column / 10);
  name += static_cast<char>('0' + column % 10);
  return name;
}

std::string WellName(int well_index, const PlateGeometry& geometry) {
  return WellName(WellPosition{well_index / geometry.columns, well_index % geometry.columns});
}

int Plate::ChannelOf(double nm) const {
  for (std::size_t i = 0; i < wavelengths_nm.size(); ++i) {
    if (std::abs(wavelengths_nm[i] - nm) <= 0.5) return static_cast<int>(i);
  }
  return -1;
}

void Plate::Allocate(const PlateGeometry& plate_geometry, std::vector<double> channels_nm) {
  geometry = plate_geometry;
  wavelengths_nm = std::move(channels_nm);
  series.assign(wavelengths_nm.size() * static_cast<std::size_t>(geometry.num_wells()), Series{});
}

int Plate::WellsWithData() const {
  int count = 0;
  const int wells = geometry.num_wells();
  for (int well = 0; well < wells; ++well) {
    for (int channel = 0; channel < num_channels(); ++channel) {
      if (!at(channel, well).empty()) {
        ++count;
        break;
      }
    }
  }
  return count;
}

int Plate::Reads() const {
  std::size_t reads = 0;
  for (const Series& s : series) reads = std::max(reads, s.size());
  return static_cast<int>(reads);
}

std::optional<std::pair<double, double>> Plate::TimeSpanMin() const {
  double lo = std::numeric_limits<double>::infinity();
  double hi = -lo;
  for (const Series& s : series) {
    if (s.empty()) continue;
    lo = std::min(lo, *std::min_element(s.time_min.begin(), s.time_min.end()));
    hi = std::max(hi, *std::max_element(s.time_min.begin(), s.time_min.end()));
  }
  if (lo > hi) return std::nullopt;
  return std::make_pair(lo, hi);
}

std::optional<std::pair<double, double>> Plate::TemperatureRangeC() const {
  if (temperature_C.empty()) return std::nullopt;
  const auto [lo, hi] = std::minmax_element(temperature_C.begin(), temperature_C.end());
  return std::make_pair(*lo, *hi);
}

long Plate::CountPoints(PointStatus point_status) const {
  long count = 0;
  for (const Series& s : series) {
    count += std::count(s.status.begin(), s.status.end(), point_status);
  }
  return count;
}

}  // namespace ratewell
