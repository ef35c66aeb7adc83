// Plate: the absorbance readings of one plate file, as read, never edited.
//
// A plate is a grid of wells (8 x 12, 16 x 24 or 32 x 48). Each well holds one
// Series per wavelength channel: the read times in minutes, the absorbance
// values and a status per point. Points an instrument marked as over range are
// kept with status kSaturated (value NaN) so they can be counted and shown, but
// nothing may fit them; empty cells are kMissing (value NaN). A well with no
// points at all has empty series.
//
// Well index = row * columns + column (both 0-based). Well names are
// zero-padded: A01 ... H12, P24, AF48 (rows after Z are AA ... AF).
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace ratewell {

struct PlateGeometry {
  int rows = 8;
  int columns = 12;

  int num_wells() const { return rows * columns; }
  bool operator==(const PlateGeometry&) const = default;

  // 96 -> 8 x 12, 384 -> 16 x 24, 1536 -> 32 x 48; anything else: nullopt.
  static std::optional<PlateGeometry> FromWellCount(int wells);
  // The smallest standard plate holding the given 0-based row and column.
  static std::optional<PlateGeometry> SmallestHolding(int max_row, int max_column);
};

struct WellPosition {
  int row = 0;     // 0-based: A = 0, Z = 25, AA = 26, AF = 31
  int column = 0;  // 0-based: "01" = 0
  bool operator==(const WellPosition&) const = default;
};

// "A1", "A01", "a01", "AF48", with surrounding spaces allowed. Rows A..Z and
// AA..AF; columns 1..48. Anything else: nullopt. No check against a plate size.
std::optional<WellPosition> ParseWellName(std::string_view text);
// Zero-padded name: {0, 0} -> "A01", {31, 47} -> "AF48".
std::string WellName(WellPosition position);
std::string WellName(int well_index, const PlateGeometry& geometry);
// Row label alone: 0 -> "A", 26 -> "AA". Parses the same; nullopt if not a row label.
std::string RowLabel(int row);
std::optional<int> ParseRowLabel(std::string_view text);

enum class PointStatus : std::uint8_t {
  kValid = 0,      // a number the instrument reported
  kSaturated = 1,  // an overflow marker or a value written as ">3.5"; value is NaN
  kMissing = 2,    // an empty (or NA) cell; value is NaN
};

// One well at one wavelength, in read order (times non-decreasing).
struct Series {
  std::vector<double> time_min;
  std::vector<double> value;
  std::vector<PointStatus> status;

  std::size_t size() const { return time_min.size(); }
  bool empty() const { return time_min.empty(); }
  void Append(double time, double absorbance, PointStatus point_status) {
    time_min.push_back(time);
    value.push_back(absorbance);
    status.push_back(point_status);
  }
};

// What the importer found out about a file, for `ratewell inspect` and reports.
struct ImportReport {
  std::string path;           // as given by the caller
  std::string format;         // "long", "wide", "grid"; "xlsx/long" etc. inside a workbook
  std::string encoding;       // "UTF-8", "UTF-8 with BOM", "UTF-16LE", "UTF-16BE", "xlsx"
  std::string delimiter;      // "comma", "semicolon", "tab"; "" for xlsx
  std::string sheet;          // worksheet name for xlsx, else ""
  bool decimal_comma = false; // numbers were written as 0,123
  std::string time_unit;      // "s", "min", "h" or "h:mm:ss", as understood
  std::vector<std::string> warnings;
};

struct Plate {
  PlateGeometry geometry;
  // Wavelength of each channel, ascending. A file that names no wavelength has
  // one channel at the assumed wavelength (ReadOptions), with a warning.
  std::vector<double> wavelengths_nm;
  // series[channel * geometry.num_wells() + well]
  std::vector<Series> series;
  // Temperature readings, if the file has any (per read or a column).
  std::vector<double> temperature_time_min;
  std::vector<double> temperature_C;
  ImportReport report;

  int num_channels() const { return static_cast<int>(wavelengths_nm.size()); }
  const Series& at(int channel, int well) const {
    return series[static_cast<std::size_t>(channel) * geometry.num_wells() + well];
  }
  Series& at(int channel, int well) {
    return series[static_cast<std::size_t>(channel) * geometry.num_wells() + well];
  }
  // Channel whose wavelength is within 0.5 nm of nm, or -1.
  int ChannelOf(double nm) const;
  // Sizes series for the geometry and channels (all empty).
  void Allocate(const PlateGeometry& plate_geometry, std::vector<double> channels_nm);

  // Summaries for inspect: wells with at least one point in any channel; the
  // largest number of time points in any well and channel; time span over all
  // points; counts of saturated and missing points over all channels.
  int WellsWithData() const;
  int Reads() const;
  std::optional<std::pair<double, double>> TimeSpanMin() const;
  std::optional<std::pair<double, double>> TemperatureRangeC() const;
  long CountPoints(PointStatus status) const;
};

}  // namespace ratewell
