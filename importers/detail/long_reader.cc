// The long layout: one row per (well, time[, wavelength]) with a value column.
//
//   Well,Time (s),A340          or   Time [min];Well;Wavelength;Abs;Temp
//   A01,0,1.201                      0;A01;340;1,201;25,0
//
// Rows may come sorted by time then well, by well then time, or in any
// interleaving; each (well, wavelength) series must have increasing times.
// This reader is the hot path for large plates: one pass, no per-cell
// allocation, points appended straight to their Series.
#include <algorithm>

#include "importers/detail/table_readers.h"

namespace ratewell::detail {
namespace {

struct ValueColumn {
  int column = 0;
  int channel = -1;  // -1: from the wavelength column of each row
};

}  // namespace

Plate ReadLongTable(const ReaderContext& context, std::size_t header_row) {
  const Table& table = context.table;
  const std::string& file = context.file;
  const bool decimal_comma = context.decimal_comma;
  const std::vector<std::string>& markers = context.options.overflow_markers;

  std::vector<std::string_view> cells;
  cells.reserve(16);
  table.GetRow(header_row, &cells);
  const int header_line = table.line_number(header_row);
  const std::vector<std::string> headers(cells.begin(), cells.end());
  const std::size_t header_cells = headers.size();
  const std::size_t required_cells = UsedCells(cells);

  int well_column = -1;
  int time_column = -1;
  int wavelength_column = -1;
  int temperature_column = -1;
  std::vector<int> value_columns;
  for (std::size_t i = 0; i < headers.size(); ++i) {
    const int column = static_cast<int>(i);
    switch (ClassifyHeader(headers[i])) {
      case ColumnRole::kWell:
        if (well_column < 0) well_column = column;
        break;
      case ColumnRole::kTime:
        if (time_column < 0) time_column = column;
        break;
      case ColumnRole::kWavelength:
        if (wavelength_column < 0) wavelength_column = column;
        break;
      case ColumnRole::kTemperature:
        if (temperature_column < 0) temperature_column = column;
        break;
      case ColumnRole::kValue:
        value_columns.push_back(column);
        break;
      case ColumnRole::kOther:
        break;
    }
  }
  if (well_column < 0) {
    throw InputError(file, header_line, 0,
                     "the header names no well column; expected a column headed 'Well'");
  }
  if (time_column < 0) {
    throw InputError(file, header_line, 0,
                     "the header names no time column; expected a column headed e.g. "
                     "'Time (s)', 'time [min]' or 't/s'");
  }
  if (value_columns.empty()) {
    throw InputError(file, header_line, 0,
                     "the header names no value column; expected a column headed e.g. "
                     "'Absorbance', 'A340', 'OD' or 'Value' beside the well and time columns");
  }

  PlateBuilder builder(file);
  std::vector<ValueColumn> values;
  if (value_columns.size() == 1) {
    const int column = value_columns[0];
    const double nm =
        WavelengthInHeader(headers[column]).value_or(std::numeric_limits<double>::quiet_NaN());
    values.push_back({column, wavelength_column >= 0 ? -1 : builder.Channel(nm)});
  } else {
    if (wavelength_column >= 0) {
      throw InputError(file, header_line, wavelength_column + 1,
                       "a wavelength column beside several value columns; expected either one "
                       "value column and a wavelength column, or one value column per "
                       "wavelength (e.g. 'A340', 'A977') and no wavelength column");
    }
    for (int column : value_columns) {
      const std::optional<double> nm = WavelengthInHeader(headers[column]);
      if (!nm) {
        throw InputError(file, header_line, column + 1,
                         "several value columns, but " + Quote(headers[column]) +
                             " names no wavelength; expected one value column, or one per "
                             "wavelength headed e.g. 'A340', 'A977'");
      }
      const int channels_before = builder.num_channels();
      const int channel = builder.Channel(*nm);
      if (builder.num_channels() == channels_before) {
        throw InputError(file, header_line, column + 1,
                         "a second value column for " + FormatWavelength(*nm) +
                             "; expected one value column per wavelength");
      }
      values.push_back({column, channel});
    }
  }

  const TimeUnit header_unit =
      TimeColumnUnit(headers[time_column], file, header_line, time_column + 1);
  const TimeUnit time_unit =
      header_unit != TimeUnit::kAuto ? header_unit : context.options.time_unit;
  std::string time_unit_text;
  std::vector<std::string> warnings;

  const std::size_t rows = table.num_rows();
  const std::size_t total_rows = rows - header_row - 1;
  // Reserve the series from the first rows: rows sorted by time repeat the
  // first series after one cycle; rows sorted by well fill the first series
  // before starting the next.
  bool estimated = false;
  bool saw_other_series = false;
  int first_key = -1;
  int first_well_index = -1;
  std::size_t data_rows = 0;

  double last_nm = std::numeric_limits<double>::quiet_NaN();
  int last_nm_channel = -1;
  const std::size_t well_at = static_cast<std::size_t>(well_column);
  const RowReader row_reader(table, header_cells);
  const bool text_rows = dynamic_cast<const TextTable*>(&table) != nullptr;
  for (std::size_t row = header_row + 1; row < rows; ++row) {
    row_reader.Get(row, &cells);
    const std::size_t n = cells.size();
    std::optional<WellPosition> well;
    if (well_at < n) {
      well = FastWellName(cells[well_at]);
      if (!well) well = ParseWellName(cells[well_at]);
    }
    if (!well) {
      if (IsBlankRow(cells)) continue;
      const std::string_view cell = well_at < n ? Trim(cells[well_at]) : std::string_view();
      if (LooksLikeWellName(cell)) {
        throw InputError(file, table.line_number(row), well_column + 1,
                         Quote(cell) +
                             " is not a well of a 96, 384 or 1536-well plate; "
                             "expected rows A to AF and columns 1 to 48");
      }
      const std::string reason = "expected a well name such as A01 in column " +
                                 std::to_string(well_column + 1) + " (" +
                                 Quote(headers[well_column]) + "), found " + FoundText(cell) +
                                 " (the table goes on below this line)";
      EndTableAt(
          context, row, well_column + 1, reason,
          [&](const std::vector<std::string_view>& later) {
            return (later.size() >= required_cells || !text_rows) && well_at < later.size() &&
                   ParseWellName(later[well_at]).has_value();
          },
          &warnings);
      break;
    }
    const int line = table.line_number(row);
    if (n < required_cells) {
      throw InputError(file, line, static_cast<int>(n) + 1,
                       "the row has " + std::to_string(n) + " cells; expected " +
                           std::to_string(required_cells) + " as in the header on line " +
                           std::to_string(header_line));
    }
    if (n > header_cells) {
      for (std::size_t i = header_cells; i < n; ++i) {
        if (!Trim(cells[i]).empty()) {
          throw InputError(file, line, static_cast<int>(i) + 1,
                           "a cell beyond the header's " + std::to_string(header_cells) +
                               " columns; expected nothing there");
        }
      }
    }

    const std::string_view time_cell = cells[time_column];
    double time_min = 0.0;
    if (!ReadTimeCell(time_cell, time_unit, decimal_comma, &time_min)) {
      ThrowCellError(file, line, time_column + 1, headers[time_column], time_cell,
                     "a time (a number, or h:mm:ss) not below zero");
    }
    if (time_unit_text.empty()) {
      if (LooksLikeClockTime(time_cell)) {
        time_unit_text = "h:mm:ss";
      } else if (time_unit != TimeUnit::kAuto) {
        time_unit_text = TimeUnitToString(time_unit);
      } else {
        time_unit_text = "s";
        std::string warning = "times in column ";  // built step by step: GCC 12 -Wrestrict
        warning += Quote(headers[time_column]);
        warning += " name no unit; read as seconds (set the time unit if they are not)";
        warnings.push_back(std::move(warning));
      }
    }

    int row_channel = -1;
    if (wavelength_column >= 0) {
      const std::string_view nm_cell = cells[wavelength_column];
      const std::optional<double> nm = ParseNumber(nm_cell, decimal_comma);
      if (!nm || *nm <= 0.0)
        ThrowCellError(file, line, wavelength_column + 1, headers[wavelength_column], nm_cell,
                       "a wavelength in nm");
      if (*nm != last_nm) {
        last_nm = *nm;
        last_nm_channel = builder.Channel(*nm);
      }
      row_channel = last_nm_channel;
    }

    const int canvas_index = well->row * PlateBuilder::kCanvasColumns + well->column;
    if (!estimated) {
      const int channel = values[0].channel >= 0 ? values[0].channel : row_channel;
      const int key = channel * PlateBuilder::kCanvasWells + canvas_index;
      if (data_rows == 0) {
        first_key = key;
        first_well_index = canvas_index;
      } else if (key == first_key) {
        if (saw_other_series) {
          builder.ReserveReads(std::min(total_rows, total_rows / data_rows + 2));
          estimated = true;
        }
      } else if (!saw_other_series) {
        saw_other_series = true;
        if (data_rows >= 4) {
          builder.ReserveReads(data_rows + 1);
          estimated = true;
        }
      }
    }
    ++data_rows;

    for (const ValueColumn& value_column : values) {
      const std::string_view cell = cells[value_column.column];
      CellValue value;
      if (!ReadValueCell(cell, decimal_comma, markers, &value)) {
        ThrowCellError(file, line, value_column.column + 1, headers[value_column.column], cell,
                       "an absorbance (a number), an empty cell or an overflow marker");
      }
      builder.Append(value_column.channel >= 0 ? value_column.channel : row_channel, *well,
                     time_min, value, line, time_column + 1);
    }

    if (temperature_column >= 0 && canvas_index == first_well_index) {
      const std::string_view cell = cells[temperature_column];
      if (!IsMissingMarker(cell)) {
        const std::optional<double> celsius = ParseNumber(cell, decimal_comma);
        if (!celsius)
          ThrowCellError(file, line, temperature_column + 1, headers[temperature_column], cell,
                         "a temperature in °C");
        builder.AddTemperature(time_min, *celsius);
      }
    }
  }
  if (data_rows == 0) {
    throw InputError(file, header_line, 0,
                     "the header has no data rows below it; expected one row per well and "
                     "time");
  }
  return builder.Finish(std::nullopt, context.options.assumed_wavelength_nm,
                        std::move(time_unit_text), std::move(warnings));
}

}  // namespace ratewell::detail
