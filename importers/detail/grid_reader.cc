// The grid layout: one plate-shaped block per read.
//
//   Cycle 4 - 00:01:30 - 340 nm - 25.1 °C      (heading, in any wording)
//   ,1,2,3,...,12                              (column numbers)
//   A,1.201,1.187,...                          (one lettered row per plate row)
//   ...
//   H,...
//
// The heading holds the read's time (with a unit or as h:mm:ss) and may hold
// its wavelength and temperature; it is read from the nearest non-blank lines
// above the column numbers (and the corner cell of that row). A wavelength
// carries over to the following blocks until another is named, so a file may
// hold sections ("Wavelength: 977 nm", then its blocks).
#include "importers/detail/table_readers.h"

namespace ratewell::detail {
namespace {

// Lines above a block searched for its time and temperature (the wavelength
// may come from any line since the previous block).
constexpr int kHeadingLines = 3;

class GridReader {
 public:
  explicit GridReader(const ReaderContext& context)
      : context_(context), table_(context.table), builder_(context.file) {}

  Plate Read(std::size_t first_header_row) {
    const std::size_t rows = table_.num_rows();
    std::vector<std::string_view> cells;
    std::size_t header = first_header_row;
    std::size_t previous_end = 0;
    while (true) {
      const std::size_t end = ReadBlock(header, previous_end);
      previous_end = end;
      // The next block's column numbers, or the end of the file.
      std::size_t next = rows;
      std::size_t footer_lines = 0;
      std::size_t first_footer = rows;
      for (std::size_t row = end; row < rows; ++row) {
        table_.GetRow(row, &cells);
        if (IsBlankRow(cells)) continue;
        const int count = ColumnNumberCount(cells);
        if (GridRowsForColumns(count) > 0) {
          next = row;
          break;
        }
        CheckStrayRow(cells, row, count);
        if (first_footer == rows) first_footer = row;
        ++footer_lines;
      }
      if (next == rows) {
        if (footer_lines > 0) {
          table_.GetRow(first_footer, &cells);
          warnings_.push_back("ignored " + std::to_string(footer_lines) + " line" +
                              (footer_lines == 1 ? "" : "s") + " after the last block, from line " +
                              std::to_string(table_.line_number(first_footer)) + " (" +
                              Quote(JoinCells(cells)) + ")");
        }
        break;
      }
      header = next;
    }
    return builder_.Finish(PlateGeometry{block_rows_, block_columns_},
                           context_.options.assumed_wavelength_nm, std::move(time_unit_text_),
                           std::move(warnings_));
  }

 private:
  // A row between blocks that is neither a heading nor blank nor column
  // numbers: reject rows that look like a broken block.
  void CheckStrayRow(const std::vector<std::string_view>& cells, std::size_t row, int count) {
    const int line = table_.line_number(row);
    if (count >= 2) {
      throw InputError(context_.file, line, count + 2,
                       "a row of column numbers 1 to " + std::to_string(count) +
                           "; expected 12, 24 or 48 columns (a 96, 384 or 1536-well plate)");
    }
    if (cells.empty()) return;
    const std::optional<int> label = ParseRowLabel(cells[0]);
    if (label && UsedCells(cells) >= 2 &&
        ParseValueCell(cells[1], context_.decimal_comma, context_.options.overflow_markers)) {
      throw InputError(context_.file, line, 1,
                       "plate row " + Quote(Trim(cells[0])) +
                           " outside a block; expected a row of column numbers (1, 2, ..., " +
                           std::to_string(block_columns_) + ") above each block's rows");
    }
  }

  // Time, wavelength and temperature for the block whose column numbers are
  // on header_row, from its corner cell and the lines above it.
  Heading BlockHeading(std::size_t header_row, std::size_t previous_end, std::string_view corner) {
    const bool decimal_comma = context_.decimal_comma;
    const TimeUnit bare = context_.options.time_unit;
    Heading heading;
    if (!corner.empty()) heading = ParseHeading(corner, decimal_comma, bare);
    std::vector<std::string_view> cells;
    int lines_seen = 0;
    for (std::size_t row = header_row; row-- > previous_end;) {
      if (heading.time_min && heading.wavelength_nm && heading.temperature_C) break;
      table_.GetRow(row, &cells);
      if (IsBlankRow(cells)) continue;
      ++lines_seen;
      const Heading line = ParseHeading(JoinCells(cells), decimal_comma, bare);
      if (lines_seen <= kHeadingLines) {
        if (!heading.time_min && line.time_min) {
          heading.time_min = line.time_min;
          heading.time_unit = line.time_unit;
        }
        if (!heading.temperature_C) heading.temperature_C = line.temperature_C;
      }
      if (!heading.wavelength_nm) heading.wavelength_nm = line.wavelength_nm;
    }
    return heading;
  }

  // Reads the block whose column numbers are on header_row; returns the row
  // after its last plate row.
  std::size_t ReadBlock(std::size_t header_row, std::size_t previous_end) {
    const std::string& file = context_.file;
    const bool decimal_comma = context_.decimal_comma;
    const std::vector<std::string>& markers = context_.options.overflow_markers;
    const std::size_t rows = table_.num_rows();
    std::vector<std::string_view> cells;
    table_.GetRow(header_row, &cells);
    const int header_line = table_.line_number(header_row);
    const int columns = ColumnNumberCount(cells);
    if (blocks_ == 0) {
      block_columns_ = columns;
      block_rows_ = GridRowsForColumns(columns);
      first_block_line_ = header_line;
    } else if (columns != block_columns_) {
      throw InputError(file, header_line, 0,
                       "a block of " + std::to_string(columns) + " columns after blocks of " +
                           std::to_string(block_columns_) + " (line " +
                           std::to_string(first_block_line_) +
                           "); expected every block to cover the same plate");
    }
    const std::string corner(cells.empty() ? std::string_view() : Trim(cells[0]));
    const Heading heading = BlockHeading(header_row, previous_end, corner);
    if (!heading.time_min) {
      throw InputError(file, header_line, 0,
                       "the block whose column numbers are on this line has no read time; "
                       "expected a heading line above it giving the time, e.g. 'Read 3 - 90 s', "
                       "'t = 1.5 min' or '00:01:30'");
    }
    const double time_min = *heading.time_min;
    if (time_unit_text_.empty()) {
      time_unit_text_ = heading.time_unit.empty()
                            ? TimeUnitToString(context_.options.time_unit == TimeUnit::kAuto
                                                   ? TimeUnit::kSeconds
                                                   : context_.options.time_unit)
                            : heading.time_unit;
    }
    if (heading.time_unit.empty() && context_.options.time_unit == TimeUnit::kAuto &&
        !warned_bare_time_) {
      warned_bare_time_ = true;
      warnings_.push_back("the heading of the block on line " + std::to_string(header_line) +
                          " gives its time without a unit; read as seconds (set the time unit "
                          "if it is not)");
    }
    if (heading.wavelength_nm) {
      if (first_unnamed_line_ > 0) {
        throw InputError(file, header_line, 0,
                         "this block names its wavelength (" +
                             FormatWavelength(*heading.wavelength_nm) + ") but the block on line " +
                             std::to_string(first_unnamed_line_) +
                             " names none; expected every block to name its wavelength, or "
                             "none to");
      }
      current_nm_ = heading.wavelength_nm;
    } else if (!current_nm_ && first_unnamed_line_ == 0) {
      first_unnamed_line_ = header_line;
    }
    const int channel =
        builder_.Channel(current_nm_.value_or(std::numeric_limits<double>::quiet_NaN()));
    if (static_cast<std::size_t>(channel) >= last_time_.size()) {
      last_time_.resize(channel + 1, -1.0);
      last_line_.resize(channel + 1, 0);
    }
    if (last_line_[channel] > 0 && !(time_min > last_time_[channel])) {
      const std::string at_nm =
          current_nm_ ? " at " + FormatWavelength(*current_nm_) : std::string();
      throw InputError(
          file, header_line, 0,
          time_min == last_time_[channel]
              ? "a second block" + at_nm + " at " + FormatMinutes(time_min) +
                    " (the first is on line " + std::to_string(last_line_[channel]) +
                    "); expected one block per read time and wavelength"
              : "time goes backwards: this block" + at_nm + " is at " + FormatMinutes(time_min) +
                    ", after the block on line " + std::to_string(last_line_[channel]) + " at " +
                    FormatMinutes(last_time_[channel]) + "; expected read times to increase");
    }
    last_time_[channel] = time_min;
    last_line_[channel] = header_line;
    if (heading.temperature_C) builder_.AddTemperature(time_min, *heading.temperature_C);

    const RowReader row_reader(table_, static_cast<std::size_t>(block_columns_) + 1);
    for (int plate_row = 0; plate_row < block_rows_; ++plate_row) {
      const std::size_t row = header_row + 1 + static_cast<std::size_t>(plate_row);
      const std::string expected = RowLabel(plate_row);
      const std::string block = "the block of line " + std::to_string(header_line);
      if (row >= rows) {
        throw InputError(file, table_.line_number(rows - 1), 0,
                         "the file ends inside " + block + "; expected row " + Quote(expected) +
                             " and " + std::to_string(block_rows_) + " rows in all for " +
                             std::to_string(block_columns_) + " columns");
      }
      row_reader.Get(row, &cells);
      const int line = table_.line_number(row);
      const std::string_view label = cells.empty() ? std::string_view() : Trim(cells[0]);
      const std::optional<int> label_row = ParseRowLabel(label);
      if (!label_row || *label_row != plate_row) {
        std::string reason;
        if (label_row && *label_row > plate_row) {
          reason = "row " + Quote(expected) + " of " + block + " is missing (found row " +
                   Quote(label) + "); expected rows A to " + RowLabel(block_rows_ - 1) +
                   " in order";
        } else if (IsBlankRow(cells)) {
          reason = "expected row " + Quote(expected) + " of " + block + ", found an empty line (" +
                   std::to_string(block_rows_) + " rows are needed for " +
                   std::to_string(block_columns_) + " columns)";
        } else {
          reason =
              "expected row " + Quote(expected) + " of " + block + ", found " + FoundText(label);
        }
        throw InputError(file, line, 1, reason);
      }
      const std::size_t n = cells.size();
      const std::size_t needed = static_cast<std::size_t>(block_columns_) + 1;
      if (n < needed) {
        throw InputError(file, line, static_cast<int>(n) + 1,
                         "row " + Quote(expected) + " has " + std::to_string(n - 1) +
                             " values; expected " + std::to_string(block_columns_) +
                             ", one per column number on line " + std::to_string(header_line));
      }
      if (UsedCells(cells) > needed) {
        throw InputError(file, line, static_cast<int>(needed) + 1,
                         "row " + Quote(expected) + " has more than " +
                             std::to_string(block_columns_) + " values; expected " +
                             std::to_string(block_columns_) + ", one per column number on line " +
                             std::to_string(header_line));
      }
      for (int column = 0; column < block_columns_; ++column) {
        const std::string_view cell = cells[static_cast<std::size_t>(column) + 1];
        CellValue value;
        if (!ReadValueCell(cell, decimal_comma, markers, &value)) {
          ThrowCellError(file, line, column + 2, "", cell,
                         "an absorbance (a number), an empty cell or an overflow marker for well " +
                             WellName(WellPosition{plate_row, column}));
        }
        builder_.Append(channel, WellPosition{plate_row, column}, time_min, value, line,
                        column + 2);
      }
    }
    const std::size_t after = header_row + 1 + static_cast<std::size_t>(block_rows_);
    if (after < rows) {
      table_.GetRow(after, &cells);
      if (!cells.empty() && ParseRowLabel(cells[0]) && UsedCells(cells) >= 2) {
        throw InputError(file, table_.line_number(after), 1,
                         "an extra row " + Quote(Trim(cells[0])) + " after row " +
                             Quote(RowLabel(block_rows_ - 1)) + " of the block of line " +
                             std::to_string(header_line) + "; expected " +
                             std::to_string(block_rows_) + " rows for " +
                             std::to_string(block_columns_) + " columns");
      }
    }
    ++blocks_;
    return after;
  }

  const ReaderContext& context_;
  const Table& table_;
  PlateBuilder builder_;
  std::vector<std::string> warnings_;
  std::string time_unit_text_;
  int blocks_ = 0;
  int block_columns_ = 0;
  int block_rows_ = 0;
  int first_block_line_ = 0;
  int first_unnamed_line_ = 0;
  std::optional<double> current_nm_;
  std::vector<double> last_time_;  // per channel: time of its last block
  std::vector<int> last_line_;     // per channel: line of its last block's column numbers
  bool warned_bare_time_ = false;
};

}  // namespace

Plate ReadGridTable(const ReaderContext& context, std::size_t header_row) {
  GridReader reader(context);
  return reader.Read(header_row);
}

}  // namespace ratewell::detail
