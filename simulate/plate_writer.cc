#include "simulate/plate_writer.h"

#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <functional>
#include <stdexcept>
#include <system_error>

#include "importers/input_error.h"

namespace ratewell {
namespace {

// Read times of different wells count as the same read within this many
// minutes (far below any reader's time resolution, far above rounding).
constexpr double kSameTimeToleranceMin = 1e-6;

// A cell before it is spelled out: text, or a number with its format.
struct Cell {
  enum class Kind { kEmpty, kNumber, kText };
  Kind kind = Kind::kEmpty;
  double number = 0.0;
  int decimals = -1;  // fixed places; -1 = shortest exact form
  std::string text;

  static Cell Empty() { return {}; }
  static Cell Number(double value, int places) { return {Kind::kNumber, value, places, {}}; }
  static Cell Text(std::string value) { return {Kind::kText, 0.0, -1, std::move(value)}; }
};
using Row = std::vector<Cell>;
// Receives the rows of a table one at a time; the row is reused afterwards.
using RowSink = std::function<void(const Row&)>;

// value rounded half away from zero to `decimals` places; the nearest double
// to the decimal that is printed, so reading the text back gives it exactly.
double Quantize(double value, int decimals) {
  const double scale = std::pow(10.0, decimals);
  const double q = std::round(value * scale) / scale;
  return q == 0.0 ? 0.0 : q;  // no "-0.0000"
}

// Appends value with `decimals` fixed places (-1: shortest exact form).
void AppendNumber(double value, int decimals, bool decimal_comma, std::string* out) {
  char buffer[64];
  std::to_chars_result result;
  if (decimals >= 0) {
    result =
        std::to_chars(buffer, buffer + sizeof buffer, value, std::chars_format::fixed, decimals);
  } else {
    result = std::to_chars(buffer, buffer + sizeof buffer, value);
  }
  if (decimal_comma) {
    for (char* c = buffer; c != result.ptr; ++c) {
      if (*c == '.') *c = ',';
    }
  }
  out->append(buffer, result.ptr);
}

std::string FormatNumber(double value, int decimals, bool decimal_comma) {
  std::string text;
  AppendNumber(value, decimals, decimal_comma, &text);
  return text;
}

// h:mm:ss, with .fff when the time is not a whole second.
std::string ClockTime(double time_min) {
  const long long total_ms = std::llround(time_min * 60000.0);
  const long long hours = total_ms / 3600000;
  const long long minutes = (total_ms / 60000) % 60;
  const long long seconds = (total_ms / 1000) % 60;
  const long long ms = total_ms % 1000;
  char buffer[64];
  if (ms == 0) {
    std::snprintf(buffer, sizeof buffer, "%lld:%02lld:%02lld", hours, minutes, seconds);
  } else {
    std::snprintf(buffer, sizeof buffer, "%lld:%02lld:%02lld.%03lld", hours, minutes, seconds, ms);
  }
  return buffer;
}

double SecondsToMillisecond(double time_min) {
  const double seconds = std::round(time_min * 60.0 * 1000.0) / 1000.0;
  return seconds == 0.0 ? 0.0 : seconds;
}

Cell TimeCell(double time_min, TimeStyle style) {
  switch (style) {
    case TimeStyle::kSeconds:
      return Cell::Number(SecondsToMillisecond(time_min), -1);
    case TimeStyle::kMinutes:
      return Cell::Number(time_min == 0.0 ? 0.0 : time_min, -1);
    case TimeStyle::kClock:
      return Cell::Text(ClockTime(time_min));
  }
  return Cell::Empty();
}

const char* TimeHeader(TimeStyle style) {
  switch (style) {
    case TimeStyle::kSeconds:
      return "Time (s)";
    case TimeStyle::kMinutes:
      return "Time (min)";
    case TimeStyle::kClock:
      return "Time";
  }
  return "Time";
}

std::string WavelengthText(double nm) { return FormatNumber(nm, -1, false); }

Cell ValueCell(const Series& series, std::size_t i, const PlateTableOptions& options) {
  switch (series.status[i]) {
    case PointStatus::kValid:
      return Cell::Number(Quantize(series.value[i], options.decimals), options.decimals);
    case PointStatus::kSaturated:
      return Cell::Text(options.overflow_marker);
    case PointStatus::kMissing:
      return Cell::Empty();
  }
  return Cell::Empty();
}

void CheckOptions(const PlateTableOptions& options) {
  if (options.layout == TableLayout::kAuto) {
    throw std::invalid_argument("plate writer: the table layout must be long, wide or grid");
  }
  if (options.decimals < 0 || options.decimals > 10) {
    throw std::invalid_argument("plate writer: decimals must be 0..10");
  }
  if (options.overflow_marker.empty()) {
    throw std::invalid_argument("plate writer: the overflow marker must not be empty");
  }
}

// The read times every non-empty series shares (wide and grid tables).
std::vector<double> SharedReadTimes(const Plate& plate) {
  const std::vector<double>* reference = nullptr;
  for (const Series& series : plate.series) {
    if (series.empty()) continue;
    if (reference == nullptr) {
      reference = &series.time_min;
      continue;
    }
    bool same = series.size() == reference->size();
    for (std::size_t i = 0; same && i < series.size(); ++i) {
      same = std::fabs(series.time_min[i] - (*reference)[i]) <= kSameTimeToleranceMin;
    }
    if (!same) {
      throw std::invalid_argument(
          "plate writer: wide and grid tables need the same read times in every well and "
          "channel; write this plate as a long table");
    }
  }
  return reference == nullptr ? std::vector<double>() : *reference;
}

// Temperature at a read time, if the plate has one within tolerance.
std::optional<double> TemperatureAt(const Plate& plate, double time_min) {
  const std::size_t n = std::min(plate.temperature_time_min.size(), plate.temperature_C.size());
  for (std::size_t i = 0; i < n; ++i) {
    if (std::fabs(plate.temperature_time_min[i] - time_min) <= kSameTimeToleranceMin) {
      return plate.temperature_C[i];
    }
  }
  return std::nullopt;
}

bool WellHasData(const Plate& plate, int well) {
  for (int c = 0; c < plate.num_channels(); ++c) {
    if (!plate.at(c, well).empty()) return true;
  }
  return false;
}

void EmitPreamble(const PlateTableOptions& options, const RowSink& emit) {
  Row row(1);
  for (const std::string& line : options.preamble) {
    row[0] = Cell::Text(line);
    emit(row);
  }
}

void EmitLong(const Plate& plate, const PlateTableOptions& options, const RowSink& emit) {
  EmitPreamble(options, emit);
  Row row = {Cell::Text("Well"), Cell::Text(TimeHeader(options.time_style)),
             Cell::Text("Wavelength (nm)"), Cell::Text("Absorbance")};
  emit(row);
  for (int well = 0; well < plate.geometry.num_wells(); ++well) {
    row[0] = Cell::Text(WellName(well, plate.geometry));
    for (int c = 0; c < plate.num_channels(); ++c) {
      const Series& series = plate.at(c, well);
      row[2] = Cell::Number(plate.wavelengths_nm[c], -1);
      for (std::size_t i = 0; i < series.size(); ++i) {
        row[1] = TimeCell(series.time_min[i], options.time_style);
        row[3] = ValueCell(series, i, options);
        emit(row);
      }
    }
  }
}

void EmitWide(const Plate& plate, const PlateTableOptions& options, const RowSink& emit) {
  const std::vector<double> times = SharedReadTimes(plate);
  std::vector<int> wells;
  for (int well = 0; well < plate.geometry.num_wells(); ++well) {
    if (WellHasData(plate, well)) wells.push_back(well);
  }
  bool with_temperature = false;
  if (options.temperature) {
    for (double t : times) with_temperature = with_temperature || TemperatureAt(plate, t);
  }
  const bool per_channel = plate.num_channels() > 1;

  EmitPreamble(options, emit);
  Row row = {Cell::Text(TimeHeader(options.time_style))};
  if (with_temperature) row.push_back(Cell::Text("Temperature (°C)"));
  for (int c = 0; c < plate.num_channels(); ++c) {
    for (int well : wells) {
      std::string name = WellName(well, plate.geometry);
      if (per_channel) name += " (" + WavelengthText(plate.wavelengths_nm[c]) + " nm)";
      row.push_back(Cell::Text(std::move(name)));
    }
  }
  emit(row);
  for (std::size_t read = 0; read < times.size(); ++read) {
    row.clear();
    row.push_back(TimeCell(times[read], options.time_style));
    if (with_temperature) {
      const std::optional<double> celsius = TemperatureAt(plate, times[read]);
      row.push_back(celsius ? Cell::Number(*celsius, 1) : Cell::Empty());
    }
    for (int c = 0; c < plate.num_channels(); ++c) {
      for (int well : wells) {
        const Series& series = plate.at(c, well);
        row.push_back(read < series.size() ? ValueCell(series, read, options) : Cell::Empty());
      }
    }
    emit(row);
  }
}

void EmitGrid(const Plate& plate, const PlateTableOptions& options, bool decimal_comma,
              const RowSink& emit) {
  const std::vector<double> times = SharedReadTimes(plate);
  const PlateGeometry& g = plate.geometry;
  EmitPreamble(options, emit);
  Row numbers = {Cell::Empty()};
  for (int column = 0; column < g.columns; ++column) {
    numbers.push_back(Cell::Number(column + 1, -1));
  }
  const Row blank;
  Row row;
  for (std::size_t read = 0; read < times.size(); ++read) {
    const std::optional<double> celsius =
        options.temperature ? TemperatureAt(plate, times[read]) : std::nullopt;
    for (int c = 0; c < plate.num_channels(); ++c) {
      std::string heading = "Read " + std::to_string(read + 1) + " - " + ClockTime(times[read]) +
                            " - " + WavelengthText(plate.wavelengths_nm[c]) + " nm";
      if (celsius) heading += " - " + FormatNumber(*celsius, 1, decimal_comma) + " °C";
      emit(Row{Cell::Text(std::move(heading))});
      emit(numbers);
      for (int r = 0; r < g.rows; ++r) {
        row.clear();
        row.push_back(Cell::Text(RowLabel(r)));
        for (int column = 0; column < g.columns; ++column) {
          const Series& series = plate.at(c, r * g.columns + column);
          row.push_back(read < series.size() ? ValueCell(series, read, options) : Cell::Empty());
        }
        emit(row);
      }
      emit(blank);
    }
  }
}

void EmitRows(const Plate& plate, const PlateTableOptions& options, bool decimal_comma,
              const RowSink& emit) {
  CheckOptions(options);
  switch (options.layout) {
    case TableLayout::kLong:
      EmitLong(plate, options, emit);
      break;
    case TableLayout::kWide:
      EmitWide(plate, options, emit);
      break;
    case TableLayout::kGrid:
      EmitGrid(plate, options, decimal_comma, emit);
      break;
    case TableLayout::kAuto:
      break;
  }
}

XlsxCell ToXlsxCell(const Cell& cell) {
  switch (cell.kind) {
    case Cell::Kind::kEmpty:
      return std::monostate{};
    case Cell::Kind::kNumber:
      return cell.number;
    case Cell::Kind::kText:
      return cell.text;
  }
  return std::monostate{};
}

void AppendQuotedIfNeeded(const std::string& text, char delimiter, std::string* out) {
  const bool quote = text.find(delimiter) != std::string::npos ||
                     text.find('"') != std::string::npos || text.find('\n') != std::string::npos ||
                     text.find('\r') != std::string::npos;
  if (!quote) {
    *out += text;
    return;
  }
  *out += '"';
  for (char c : text) {
    if (c == '"') *out += '"';
    *out += c;
  }
  *out += '"';
}

void CheckFormat(const TextFormat& format) {
  if (format.delimiter != ',' && format.delimiter != ';' && format.delimiter != '\t') {
    throw std::invalid_argument("plate writer: the delimiter must be ',', ';' or a tab");
  }
  if (format.decimal_comma && format.delimiter == ',') {
    throw std::invalid_argument("plate writer: a decimal comma needs a semicolon or tab delimiter");
  }
}

}  // namespace

const char* TimeStyleToString(TimeStyle style) {
  switch (style) {
    case TimeStyle::kSeconds:
      return "seconds";
    case TimeStyle::kMinutes:
      return "minutes";
    case TimeStyle::kClock:
      return "clock";
  }
  return "unknown";
}

bool StringToTimeStyle(std::string_view text, TimeStyle* style) {
  for (TimeStyle s : {TimeStyle::kSeconds, TimeStyle::kMinutes, TimeStyle::kClock}) {
    if (text == TimeStyleToString(s)) {
      *style = s;
      return true;
    }
  }
  return false;
}

std::vector<std::vector<XlsxCell>> PlateTableCells(const Plate& plate,
                                                   const PlateTableOptions& options) {
  std::vector<std::vector<XlsxCell>> rows;
  EmitRows(plate, options, false, [&rows](const Row& row) {
    std::vector<XlsxCell>& cells = rows.emplace_back();
    cells.reserve(row.size());
    for (const Cell& cell : row) cells.push_back(ToXlsxCell(cell));
  });
  return rows;
}

std::string PlateTableText(const Plate& plate, const PlateTableOptions& options,
                           const TextFormat& format) {
  CheckFormat(format);
  const char* line_end = format.crlf ? "\r\n" : "\n";
  std::string text;
  if (format.utf8_bom) text += "\xEF\xBB\xBF";
  EmitRows(plate, options, format.decimal_comma, [&](const Row& row) {
    for (std::size_t i = 0; i < row.size(); ++i) {
      if (i > 0) text += format.delimiter;
      const Cell& cell = row[i];
      switch (cell.kind) {
        case Cell::Kind::kEmpty:
          break;
        case Cell::Kind::kNumber:
          AppendNumber(cell.number, cell.decimals, format.decimal_comma, &text);
          break;
        case Cell::Kind::kText:
          AppendQuotedIfNeeded(cell.text, format.delimiter, &text);
          break;
      }
    }
    text += line_end;
  });
  return text;
}

XlsxSheet PlateTableSheet(const Plate& plate, const PlateTableOptions& options,
                          const std::string& sheet_name) {
  return XlsxSheet{sheet_name, PlateTableCells(plate, options)};
}

void WritePlateText(const Plate& plate, const std::string& path, const PlateTableOptions& options,
                    const TextFormat& format, const std::vector<std::string>& protected_inputs) {
  WriteFileAtomically(path, PlateTableText(plate, options, format), protected_inputs);
}

void WritePlateXlsx(const Plate& plate, const std::string& path, const PlateTableOptions& options,
                    const std::string& sheet_name,
                    const std::vector<std::string>& protected_inputs) {
  WriteFileAtomically(path, XlsxBytes({PlateTableSheet(plate, options, sheet_name)}),
                      protected_inputs);
}

}  // namespace ratewell
