// Internal: the three table readers (long, wide, grid) and what they share.
//
// ReadPlateBytes() decodes a file into a Table, finds where the plate table
// starts and which layout it has (FindTableStart), and hands the table to one
// reader. A reader walks the rows once and appends points straight into
// Series vectors held by a PlateBuilder on a 32 x 48 canvas (the largest
// plate), so it never needs to know the plate size in advance; Finish() then
// picks the smallest standard plate holding every well named and moves the
// series into a Plate.
//
// Errors are InputError with the file, the 1-based line and column of the
// offending cell, and a reason that says what was expected.
#pragma once

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "importers/detail/cells.h"
#include "importers/detail/text_table.h"
#include "importers/input_error.h"
#include "importers/plate.h"
#include "importers/read_plate.h"

namespace ratewell::detail {

// Everything a reader needs besides the header row.
struct ReaderContext {
  const Table& table;
  const std::string& file;
  const ReadOptions& options;
  bool decimal_comma = false;
};

// ---------------------------------------------------------------------------
// Finding the table.

// Where a plate table starts: its layout and the row of its header (for grid:
// the row of column numbers of the first block).
struct TableStart {
  TableLayout layout = TableLayout::kAuto;
  std::size_t header_row = 0;
};
// Scans rows from the top for the first header row of the wanted layout (any
// layout for kAuto) whose next non-blank row looks like data (or that has no
// row below it at all). nullopt if there is none.
std::optional<TableStart> FindTableStart(const Table& table, TableLayout wanted);
// True if the row's cells could head a table of the layout (without looking
// at the rows below).
bool IsHeaderRowOf(const std::vector<std::string_view>& cells, TableLayout layout);

// ---------------------------------------------------------------------------
// The readers. Each returns a Plate whose report has time_unit and warnings
// filled; the caller fills the other report fields.

Plate ReadLongTable(const ReaderContext& context, std::size_t header_row);
Plate ReadWideTable(const ReaderContext& context, std::size_t header_row);
Plate ReadGridTable(const ReaderContext& context, std::size_t header_row);

// ---------------------------------------------------------------------------
// Fast paths for the cells of large tables. Each either returns the same
// answer as the general function in cells.h / plate.h or declines (nullopt /
// false), and the caller then asks the general function.

// "123", "-0.0456", "1,25" (decimal_comma): digits with at most one decimal
// separator, at most 15 significant digits and 22 decimals. The result is the
// correctly rounded double, as std::from_chars gives: the integer mantissa and
// the power of ten are both exact doubles, and one IEEE division rounds
// correctly (Clinger's fast path). Returns false (value untouched) otherwise.
// Out-parameters rather than std::optional keep the hot loop in registers.
inline bool FastNumber(std::string_view text, bool decimal_comma, double* value) {
  static constexpr double kPow10[] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                      1e8,  1e9,  1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
                                      1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
  const char separator = decimal_comma ? ',' : '.';
  std::size_t i = 0;
  const std::size_t n = text.size();
  const bool negative = n > 0 && text[0] == '-';
  if (negative) ++i;
  std::uint64_t mantissa = 0;
  int digits = 0;
  int decimals = 0;
  bool before = false;
  for (; i < n && text[i] >= '0' && text[i] <= '9'; ++i, before = true) {
    mantissa = mantissa * 10 + static_cast<std::uint64_t>(text[i] - '0');
    if (mantissa != 0) ++digits;
  }
  if (!before) return false;
  if (i < n) {
    if (text[i] != separator || i + 1 == n) return false;
    for (++i; i < n && text[i] >= '0' && text[i] <= '9'; ++i) {
      mantissa = mantissa * 10 + static_cast<std::uint64_t>(text[i] - '0');
      if (mantissa != 0) ++digits;
      ++decimals;
    }
    if (i < n || decimals == 0) return false;
  }
  if (digits > 15 || decimals > 22) return false;
  double number = static_cast<double>(mantissa);
  if (decimals > 0) number /= kPow10[decimals];
  *value = negative ? -number : number;
  return true;
}

inline std::optional<double> FastNumber(std::string_view text, bool decimal_comma) {
  double value = 0.0;
  if (FastNumber(text, decimal_comma, &value)) return value;
  return std::nullopt;
}

// ParseValueCell, trying FastNumber first; false if the cell is neither a
// number, a missing marker nor an overflow marker.
inline bool ReadValueCell(std::string_view cell, bool decimal_comma,
                          const std::vector<std::string>& markers, CellValue* value) {
  if (FastNumber(cell, decimal_comma, &value->value)) {
    value->status = PointStatus::kValid;
    return true;
  }
  const std::optional<CellValue> general = ParseValueCell(cell, decimal_comma, markers);
  if (!general) return false;
  *value = *general;
  return true;
}

// ToMinutes with the same arithmetic (seconds / 60, hours * 60), inline.
inline double AmountToMinutes(double amount, TimeUnit unit) {
  switch (unit) {
    case TimeUnit::kMinutes:
      return amount;
    case TimeUnit::kHours:
      return amount * 60.0;
    case TimeUnit::kSeconds:
    case TimeUnit::kAuto:
      break;
  }
  return amount / 60.0;
}

// ParseTimeMinutes, trying FastNumber first; false if the cell is no time.
inline bool ReadTimeCell(std::string_view cell, TimeUnit unit, bool decimal_comma,
                         double* minutes) {
  double number = 0.0;
  if (FastNumber(cell, decimal_comma, &number) && number >= 0.0) {
    *minutes = AmountToMinutes(number, unit);
    return true;
  }
  const std::optional<double> general = ParseTimeMinutes(cell, unit, decimal_comma);
  if (!general) return false;
  *minutes = *general;
  return true;
}

// "A01", "a1", "AF48" with nothing around them; as ParseWellName.
inline std::optional<WellPosition> FastWellName(std::string_view text) {
  const auto upper = [](char c) { return static_cast<char>(c & ~0x20); };
  const auto letter = [&](char c) { return upper(c) >= 'A' && upper(c) <= 'Z'; };
  const std::size_t n = text.size();
  if (n < 2 || n > 5 || !letter(text[0])) return std::nullopt;
  std::size_t i = 1;
  int row = upper(text[0]) - 'A';
  if (letter(text[1])) {
    if (row != 0) return std::nullopt;
    row = 26 + (upper(text[1]) - 'A');
    if (row >= 32) return std::nullopt;
    i = 2;
  }
  if (i == n || n - i > 3) return std::nullopt;
  int column = 0;
  for (; i < n; ++i) {
    if (text[i] < '0' || text[i] > '9') return std::nullopt;
    column = column * 10 + (text[i] - '0');
  }
  if (column < 1 || column > 48) return std::nullopt;
  return WellPosition{row, column - 1};
}

// Splits a row into cells as Table::GetRow does, but for a TextTable line
// with no quote character it splits the line itself in one pass (the long
// reader's hot path); anything else goes to GetRow. Rows of other tables
// (.xlsx sheets, which leave out empty cells at the end of a row) are padded
// with empty cells to pad_to cells; a text row keeps its own length, so a
// short row there is still ragged.
class RowReader {
 public:
  explicit RowReader(const Table& table, std::size_t pad_to = 0)
      : table_(table),
        text_table_(dynamic_cast<const TextTable*>(&table)),
        delimiter_(text_table_ != nullptr ? text_table_->delimiter() : '\0'),
        pad_to_(pad_to) {}

  void Get(std::size_t row, std::vector<std::string_view>* cells) const {
    if (text_table_ == nullptr) {
      table_.GetRow(row, cells);
      if (cells->size() < pad_to_) cells->resize(pad_to_);
    } else if (!SplitPlainLine(text_table_->line(row), cells)) {
      table_.GetRow(row, cells);
    }
  }

 private:
  bool SplitPlainLine(std::string_view line, std::vector<std::string_view>* cells) const {
    cells->clear();
    if (line.empty()) return true;
    const char* p = line.data();
    const char* const end = p + line.size();
    const char* start = p;
    const bool trim_tab = delimiter_ != '\t';
    const auto push = [&](const char* b, const char* e) {
      while (b < e && (*b == ' ' || (trim_tab && *b == '\t'))) ++b;
      while (e > b && (e[-1] == ' ' || (trim_tab && e[-1] == '\t'))) --e;
      cells->emplace_back(b, static_cast<std::size_t>(e - b));
    };
    for (; p < end; ++p) {
      const char c = *p;
      if (c == delimiter_) {
        push(start, p);
        start = p + 1;
      } else if (c == '"') {
        return false;
      }
    }
    push(start, end);
    return true;
  }

  const Table& table_;
  const TextTable* text_table_;
  char delimiter_;
  std::size_t pad_to_;
};

// ---------------------------------------------------------------------------
// Column headers.

enum class ColumnRole { kOther, kWell, kTime, kValue, kWavelength, kTemperature };
// What a header of a long or wide table names, by keyword: "Well" -> kWell;
// "Temp", "°C" -> kTemperature; "Wavelength", "lambda", "WL", "nm" ->
// kWavelength; "Time", "t", "t/s", "Zeit", "elapsed" -> kTime; "Absorbance",
// "Abs", "OD", "A340", "Value", "Reading", "Signal", "Raw", "Mean" -> kValue.
ColumnRole ClassifyHeader(std::string_view header);

// The wavelength a value header names: "A340", "OD 977", "Abs 340 nm",
// "Absorbance (340nm)". nullopt if none.
std::optional<double> WavelengthInHeader(std::string_view header);

// True if text has the shape of a well name (one or two letters, one to three
// digits), whether or not such a well exists.
bool LooksLikeWellName(std::string_view text);

// A wide table's well column header: "A01", "a1", "A01 (340 nm)", "A01@977",
// "B3 [900nm]". wavelength_nm is NaN when the header names none.
struct WellHeader {
  WellPosition position;
  double wavelength_nm = std::numeric_limits<double>::quiet_NaN();
};
std::optional<WellHeader> ParseWellHeader(std::string_view header, bool decimal_comma);

// Unit of a time column from its header ("Time (s)", "t [min]", "Time_h"):
// kAuto if the header names none. Throws InputError at (line, column) when the
// header names a unit in brackets that is not a time unit ("Time (ms)").
TimeUnit TimeColumnUnit(std::string_view header, const std::string& file, int line, int column);

// ---------------------------------------------------------------------------
// Heading lines ("Cycle 4 — 00:01:30 — 340 nm", "Read 2; t = 30 s; 25.1 °C",
// "Wavelength: 977 nm").

struct Heading {
  std::optional<double> time_min;
  // How the time was written: "s", "min", "h", "h:mm:ss", or "" for a bare
  // number after a time keyword ("Time: 30"), read in the bare unit.
  std::string time_unit;
  std::optional<double> wavelength_nm;
  std::optional<double> temperature_C;
};
// Finds the first time, wavelength and temperature written in text: a clock
// time or a number followed by a time unit; a number followed by "nm" or
// after "wavelength"/"lambda"; a number followed by "°C"/"C"/"degC" or after
// "temp"/"temperature". A number after "time"/"t" with no unit is read in
// bare_unit (kAuto: seconds).
Heading ParseHeading(std::string_view text, bool decimal_comma, TimeUnit bare_unit);

// True for text holding a calendar date (2024-03-05, 05/03/2024, 5.3.2024):
// such preamble lines carry a clock time that is not a read time.
bool LooksLikeDate(std::string_view text);

// The cells of a row joined by " ; ", for reading a heading split by the
// delimiter.
std::string JoinCells(const std::vector<std::string_view>& cells);

// k if cells[1..] read "1", "2", ..., "k" (trailing empty cells allowed; cell 0
// is the corner and may hold anything), else 0. A grid block's header row has
// k = 12, 24 or 48.
int ColumnNumberCount(const std::vector<std::string_view>& cells);
// Rows of the grid block whose header has this many column numbers (8, 16,
// 32), or 0 for a count that is not a standard plate's.
int GridRowsForColumns(int columns);

// True if the row has no cells or only empty ones.
bool IsBlankRow(const std::vector<std::string_view>& cells);

// Index one past the last non-empty cell.
std::size_t UsedCells(const std::vector<std::string_view>& cells);

// Throws InputError at (line, column_number): "expected <what> in column N
// ('<header>'), found '<cell>'" (or "found an empty cell"). column_number is
// 1-based.
[[noreturn]] void ThrowCellError(const std::string& file, int line, int column_number,
                                 std::string_view header, std::string_view cell,
                                 const std::string& what);
// "'text'" or "an empty cell", for messages.
std::string FoundText(std::string_view cell);

// Shortens a cell's text for quoting it in a message.
std::string Quote(std::string_view text);

// "340 nm", "977.5 nm" for messages.
std::string FormatWavelength(double nm);
// "1.5 min" for messages.
std::string FormatMinutes(double minutes);

// ---------------------------------------------------------------------------
// Collecting points.

// Holds series on a 32 x 48 canvas, one canvas per wavelength channel, and
// turns them into a Plate.
class PlateBuilder {
 public:
  static constexpr int kCanvasRows = 32;
  static constexpr int kCanvasColumns = 48;
  static constexpr int kCanvasWells = kCanvasRows * kCanvasColumns;

  explicit PlateBuilder(const std::string& file) : file_(file) {}

  // Channel index for a wavelength; NaN stands for "the file names none".
  // Channels are created on first use.
  int Channel(double wavelength_nm);
  int num_channels() const { return static_cast<int>(channel_nm_.size()); }
  double channel_nm(int channel) const { return channel_nm_[channel]; }

  // Records a well as part of the plate even if it never gets a point (a
  // wide table's column, a grid cell).
  void NoteWell(WellPosition position) {
    if (position.row > max_row_) max_row_ = position.row;
    if (position.column > max_column_) max_column_ = position.column;
  }

  // Appends one point. Times must increase within a (well, channel) series:
  // an equal time is a duplicate, a smaller one goes backwards; both throw
  // InputError at (line, column).
  void Append(int channel, WellPosition position, double time_min, CellValue cell, int line,
              int column) {
    Series& series =
        canvas_[channel][static_cast<std::size_t>(position.row) * kCanvasColumns + position.column];
    if (series.time_min.empty()) {
      NoteWell(position);
      if (reserve_reads_ > 0) Reserve(&series, reserve_reads_);
    } else if (!(time_min > series.time_min.back())) {
      ThrowTimeOrder(channel, position, time_min, series.time_min.back(), line, column);
    }
    series.Append(time_min, cell.value, cell.status);
  }

  // Number of points of one series so far.
  std::size_t SeriesSize(int channel, WellPosition position) const {
    return canvas_[channel]
                  [static_cast<std::size_t>(position.row) * kCanvasColumns + position.column]
                      .size();
  }

  // Reserves room for reads points in every series created from now on and in
  // those that exist already.
  void ReserveReads(std::size_t reads);

  void AddTemperature(double time_min, double celsius) {
    temperature_time_min_.push_back(time_min);
    temperature_C_.push_back(celsius);
  }

  // Builds the plate: geometry as given, else the smallest standard plate
  // holding every well noted; channels sorted by wavelength; a single unnamed
  // channel becomes options.assumed_wavelength_nm with a warning. Temperature
  // readings are sorted by time, repeated times dropped. Throws InputError
  // (line 0) if no well was named or an unnamed channel sits beside named
  // ones.
  Plate Finish(std::optional<PlateGeometry> geometry, double assumed_wavelength_nm,
               std::string time_unit, std::vector<std::string> warnings);

 private:
  static void Reserve(Series* series, std::size_t reads);
  [[noreturn]] void ThrowTimeOrder(int channel, WellPosition position, double time_min,
                                   double previous_min, int line, int column) const;

  const std::string& file_;
  std::vector<double> channel_nm_;
  std::vector<std::vector<Series>> canvas_;
  int max_row_ = -1;
  int max_column_ = -1;
  std::size_t reserve_reads_ = 0;
  std::vector<double> temperature_time_min_;
  std::vector<double> temperature_C_;
};

// ---------------------------------------------------------------------------
// After the table.

// Called when a long or wide table meets a row that does not continue it, at
// row end_row. is_data_row says whether a later row would have been a data
// row of this table. If one follows, the bad row was inside the table and
// this throws InputError at (line of end_row, column) with reason; otherwise
// the rest is a footer: a warning naming its first line is added (if it holds
// anything) and the function returns.
template <typename IsDataRow>
void EndTableAt(const ReaderContext& context, std::size_t end_row, int column,
                const std::string& reason, IsDataRow is_data_row,
                std::vector<std::string>* warnings) {
  const Table& table = context.table;
  std::vector<std::string_view> cells;
  std::size_t non_blank = 0;
  for (std::size_t row = end_row + 1; row < table.num_rows(); ++row) {
    table.GetRow(row, &cells);
    if (IsBlankRow(cells)) continue;
    ++non_blank;
    if (is_data_row(cells)) {
      throw InputError(context.file, table.line_number(end_row), column, reason);
    }
  }
  table.GetRow(end_row, &cells);
  warnings->push_back("ignored " + std::to_string(non_blank + 1) + " line" +
                      (non_blank == 0 ? "" : "s") + " after the table, from line " +
                      std::to_string(table.line_number(end_row)) + " (" + Quote(JoinCells(cells)) +
                      ")");
}

}  // namespace ratewell::detail
