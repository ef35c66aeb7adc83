// The wide layout: a time column (optionally a temperature column), then one
// column per well.
//
//   Time [s],Temp (°C),A01,A02,...          Time,A01 (340 nm),A01 (977 nm),...
//   0,25.0,1.201,1.187,...                   00:00:00,1.201,0.062,...
//
// Several wavelengths either share one table (a suffix on each well header:
// "A01 (340 nm)", "A01@977") or come as sections, each table preceded by a
// line naming its wavelength ("Wavelength: 977 nm").
#include <unordered_map>

#include "importers/detail/table_readers.h"

namespace ratewell::detail {
namespace {

struct WellColumn {
  int column = 0;
  int channel = 0;
  WellPosition position;
};

class WideReader {
 public:
  explicit WideReader(const ReaderContext& context)
      : context_(context), table_(context.table), builder_(context.file) {}

  Plate Read(std::size_t first_header_row) {
    std::vector<std::string_view> cells;
    const std::size_t rows = table_.num_rows();
    std::size_t header = first_header_row;
    std::size_t from = 0;
    int sections = 0;
    int first_unnamed_line = 0;
    while (true) {
      const std::optional<double> section_nm = WavelengthAbove(from, header);
      bool named = false;
      const std::size_t end = ReadSection(header, section_nm, &named);
      ++sections;
      if (!named && first_unnamed_line == 0) first_unnamed_line = table_.line_number(header);
      // What follows: another section's header, or the end of the file. A
      // data row before either means the row at `end` broke the table.
      std::size_t next = rows;
      std::size_t footer_lines = 0;
      for (std::size_t row = end; row < rows; ++row) {
        table_.GetRow(row, &cells);
        if (IsBlankRow(cells)) continue;
        if (IsHeaderRowOf(cells, TableLayout::kWide)) {
          next = row;
          break;
        }
        if (IsDataRow(cells)) {
          table_.GetRow(end, &cells);
          const std::string_view cell =
              time_column_ < cells.size() ? cells[time_column_] : std::string_view();
          ThrowCellError(context_.file, table_.line_number(end), static_cast<int>(time_column_) + 1,
                         time_header_, cell, "a time (the table goes on below this line)");
        }
        ++footer_lines;
      }
      if (next == rows) {
        if (footer_lines > 0) {
          table_.GetRow(end, &cells);
          warnings_.push_back("ignored " + std::to_string(footer_lines) + " line" +
                              (footer_lines == 1 ? "" : "s") + " after the table, from line " +
                              std::to_string(table_.line_number(end)) + " (" +
                              Quote(JoinCells(cells)) + ")");
        }
        break;
      }
      from = end;
      header = next;
    }
    if (sections > 1 && first_unnamed_line > 0) {
      throw InputError(context_.file, first_unnamed_line, 0,
                       "the file holds " + std::to_string(sections) +
                           " tables but the one headed on this line names no wavelength; "
                           "expected a line such as 'Wavelength: 977 nm' above each table, or "
                           "well headers such as 'A01 (977 nm)'");
    }
    return builder_.Finish(std::nullopt, context_.options.assumed_wavelength_nm,
                           std::move(time_unit_text_), std::move(warnings_));
  }

 private:
  // The wavelength named on the nearest non-blank line above header, looking
  // no higher than row from.
  std::optional<double> WavelengthAbove(std::size_t from, std::size_t header) const {
    std::vector<std::string_view> cells;
    for (std::size_t row = header; row-- > from;) {
      table_.GetRow(row, &cells);
      if (IsBlankRow(cells)) continue;
      const Heading heading =
          ParseHeading(JoinCells(cells), context_.decimal_comma, context_.options.time_unit);
      if (heading.wavelength_nm) return heading.wavelength_nm;
    }
    return std::nullopt;
  }

  bool IsDataRow(const std::vector<std::string_view>& cells) const {
    const bool text_rows = dynamic_cast<const TextTable*>(&table_) != nullptr;
    return (cells.size() >= required_cells_ || !text_rows) && time_column_ < cells.size() &&
           ParseTimeMinutes(cells[time_column_], time_unit_, context_.decimal_comma).has_value();
  }

  // Reads the table headed at header_row; returns the first non-blank row
  // after it that is not a data row (or num_rows()). *named tells whether
  // every well column has a wavelength.
  std::size_t ReadSection(std::size_t header_row, std::optional<double> section_nm, bool* named) {
    const std::string& file = context_.file;
    const bool decimal_comma = context_.decimal_comma;
    const std::vector<std::string>& markers = context_.options.overflow_markers;
    std::vector<std::string_view> cells;
    table_.GetRow(header_row, &cells);
    const int header_line = table_.line_number(header_row);
    const std::vector<std::string> headers(cells.begin(), cells.end());
    const std::size_t header_cells = headers.size();
    required_cells_ = UsedCells(cells);

    int time_column = -1;
    int temperature_column = -1;
    for (std::size_t i = 0; i < headers.size(); ++i) {
      const ColumnRole role = ClassifyHeader(headers[i]);
      if (role == ColumnRole::kTime && time_column < 0) time_column = static_cast<int>(i);
      if (role == ColumnRole::kTemperature && temperature_column < 0) {
        temperature_column = static_cast<int>(i);
      }
    }
    if (time_column < 0) {
      throw InputError(file, header_line, 0,
                       "the header names no time column; expected a column headed e.g. "
                       "'Time (s)' before the well columns");
    }
    time_column_ = static_cast<std::size_t>(time_column);
    time_header_ = headers[time_column];

    std::vector<WellColumn> wells;
    std::vector<std::string> ignored;
    std::unordered_map<int, int> column_of_series;
    int first_plain = -1;
    int first_suffixed = -1;
    const double unnamed_nm = section_nm.value_or(std::numeric_limits<double>::quiet_NaN());
    for (std::size_t i = 0; i < headers.size(); ++i) {
      const int column = static_cast<int>(i);
      if (column == time_column || column == temperature_column) continue;
      const std::string_view text = Trim(headers[i]);
      if (text.empty()) continue;
      const std::optional<WellHeader> well = ParseWellHeader(text, decimal_comma);
      if (!well) {
        if (LooksLikeWellName(text)) {
          throw InputError(file, header_line, column + 1,
                           Quote(text) +
                               " is not a well of a 96, 384 or 1536-well plate; "
                               "expected rows A to AF and columns 1 to 48");
        }
        ignored.push_back(Quote(text));
        continue;
      }
      const bool suffixed = !std::isnan(well->wavelength_nm);
      if (suffixed && first_suffixed < 0) first_suffixed = column;
      if (!suffixed && first_plain < 0) first_plain = column;
      const int channel = builder_.Channel(suffixed ? well->wavelength_nm : unnamed_nm);
      const int key = channel * PlateBuilder::kCanvasWells +
                      well->position.row * PlateBuilder::kCanvasColumns + well->position.column;
      const auto [at, inserted] = column_of_series.emplace(key, column);
      if (!inserted) {
        throw InputError(file, header_line, column + 1,
                         "well " + WellName(well->position) + " has a second column (columns " +
                             std::to_string(at->second + 1) + " and " + std::to_string(column + 1) +
                             "); expected one column per well and wavelength");
      }
      builder_.NoteWell(well->position);
      wells.push_back({column, channel, well->position});
    }
    if (wells.empty()) {
      throw InputError(file, header_line, 0,
                       "the header names no well columns; expected columns headed by well "
                       "names such as A01");
    }
    if (first_plain >= 0 && first_suffixed >= 0) {
      throw InputError(file, header_line, first_plain + 1,
                       Quote(Trim(headers[first_plain])) + " names no wavelength while " +
                           Quote(Trim(headers[first_suffixed])) +
                           " does; expected every well column to name its wavelength, or none "
                           "to");
    }
    *named = first_plain < 0 || section_nm.has_value();
    if (!ignored.empty()) {
      std::string list;
      for (const std::string& name : ignored) list += (list.empty() ? "" : ", ") + name;
      warnings_.push_back("ignored column" + std::string(ignored.size() == 1 ? " " : "s ") + list +
                          " of the table headed on line " + std::to_string(header_line));
    }

    const TimeUnit header_unit =
        TimeColumnUnit(headers[time_column], file, header_line, time_column + 1);
    time_unit_ = header_unit != TimeUnit::kAuto ? header_unit : context_.options.time_unit;

    const std::size_t rows = table_.num_rows();
    std::size_t data_rows = 0;
    std::size_t row = header_row + 1;
    const RowReader row_reader(table_, header_cells);
    for (; row < rows; ++row) {
      row_reader.Get(row, &cells);
      if (IsBlankRow(cells)) continue;
      const std::size_t n = cells.size();
      const std::string_view time_cell =
          time_column_ < n ? cells[time_column_] : std::string_view();
      double time_min = 0.0;
      if (!ReadTimeCell(time_cell, time_unit_, decimal_comma, &time_min)) break;
      const int line = table_.line_number(row);
      if (n < required_cells_) {
        throw InputError(file, line, static_cast<int>(n) + 1,
                         "the row has " + std::to_string(n) + " cells; expected " +
                             std::to_string(required_cells_) + " as in the header on line " +
                             std::to_string(header_line));
      }
      for (std::size_t i = header_cells; i < n; ++i) {
        if (!Trim(cells[i]).empty()) {
          throw InputError(file, line, static_cast<int>(i) + 1,
                           "a cell beyond the header's " + std::to_string(header_cells) +
                               " columns; expected nothing there");
        }
      }
      if (time_unit_text_.empty()) {
        if (LooksLikeClockTime(time_cell)) {
          time_unit_text_ = "h:mm:ss";
        } else if (time_unit_ != TimeUnit::kAuto) {
          time_unit_text_ = TimeUnitToString(time_unit_);
        } else {
          time_unit_text_ = "s";
          warnings_.push_back("times in column " + Quote(headers[time_column]) +
                              " name no unit; read as seconds (set the time unit if they are "
                              "not)");
        }
      }
      for (const WellColumn& well : wells) {
        const std::string_view cell = cells[well.column];
        CellValue value;
        if (!ReadValueCell(cell, decimal_comma, markers, &value)) {
          ThrowCellError(file, line, well.column + 1, headers[well.column], cell,
                         "an absorbance (a number), an empty cell or an overflow marker");
        }
        builder_.Append(well.channel, well.position, time_min, value, line, time_column + 1);
      }
      if (temperature_column >= 0) {
        const std::string_view cell = cells[temperature_column];
        if (!IsMissingMarker(cell)) {
          const std::optional<double> celsius = ParseNumber(cell, decimal_comma);
          if (!celsius) {
            ThrowCellError(file, line, temperature_column + 1, headers[temperature_column], cell,
                           "a temperature in °C");
          }
          builder_.AddTemperature(time_min, *celsius);
        }
      }
      ++data_rows;
    }
    if (data_rows == 0) {
      throw InputError(file, header_line, 0,
                       "the header has no data rows below it; expected one row per read "
                       "time");
    }
    return row;
  }

  const ReaderContext& context_;
  const Table& table_;
  PlateBuilder builder_;
  std::vector<std::string> warnings_;
  std::string time_unit_text_;
  // Of the section being read.
  std::size_t time_column_ = 0;
  std::string time_header_;
  std::size_t required_cells_ = 0;
  TimeUnit time_unit_ = TimeUnit::kAuto;
};

}  // namespace

Plate ReadWideTable(const ReaderContext& context, std::size_t header_row) {
  WideReader reader(context);
  return reader.Read(header_row);
}

}  // namespace ratewell::detail
