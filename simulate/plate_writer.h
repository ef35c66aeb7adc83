// Writing a Plate (importers/plate.h) as a plate-reader style export file.
//
// The three table layouts the importers read (importers/read_plate.h), in our
// own wording:
//
//   long   one row per (well, wavelength, read):
//            Well,Time (s),Wavelength (nm),Absorbance
//            A01,15,340,1.2719
//          Rows go well by well (index order), each well's channels in
//          ascending wavelength, each channel's reads in time order.
//   wide   a time column, a temperature column when the plate has
//          temperatures, then one column per well that has data:
//            Time (s),Temperature (°C),A01,A02,...
//          With more than one wavelength every well gets one column per
//          channel, headed "A01 (340 nm)", "A01 (900 nm)", ... (channel-major:
//          all wells at the first wavelength, then the next).
//   grid   one block per read and channel, read-major, each block headed by a
//          line naming the read, its time as h:mm:ss, the wavelength and the
//          temperature when known:
//            Read 3 - 0:01:30 - 340 nm - 25.0 °C
//            ,1,2,...,12
//            A,1.2719,...
//          and followed by a blank line.
//
// Cells: an absorbance is written with `decimals` places (rounded half away
// from zero); a kSaturated point as the overflow marker ("OVER"); a kMissing
// point (or a well that has no point at that read) as an empty cell. Times in
// the long and wide tables are seconds rounded to the millisecond (header
// "Time (s)"), minutes ("Time (min)") or h:mm:ss(.fff) ("Time"). Lines of
// preamble (free text, as instruments write a run header) may precede the
// table; they must not hold the delimiter, so a reader sees one cell.
//
// Text form: comma, semicolon or tab delimited; a decimal comma only with a
// semicolon or tab delimiter (a comma-separated file cannot also use commas
// in numbers); LF or CRLF line ends; UTF-8, optionally with a byte order mark
// (the "°" in "°C" is UTF-8). A cell holding the delimiter or a double quote
// is quoted, with quotes doubled.
//
// Workbook form: the same rows of cells in one worksheet of an .xlsx file
// (simulate/xlsx_writer.h), numbers as numbers (rounded to `decimals` places,
// times as seconds or minutes; clock times as text), markers and headings as
// text, missing points as empty cells.
//
// Files are written atomically (a temporary file in the same folder, flushed,
// then renamed over the target) and never over a file named in
// `protected_inputs` (the inputs of the run): that is an InputError naming the
// file. The wide and grid layouts need every well's series at one channel to
// share its read times; a plate whose wells were read at different times can
// only be written long (std::invalid_argument otherwise).
//
// Example:
//   PlateTableOptions table;
//   table.layout = TableLayout::kGrid;
//   TextFormat text;
//   text.delimiter = ';';
//   text.decimal_comma = true;
//   WritePlateText(plate, out_folder + "/plate_grid.csv", table, text, {scenario_path});
#pragma once

#include <string>
#include <vector>

#include "importers/file_io.h"
#include "importers/plate.h"
#include "importers/read_plate.h"
#include "simulate/xlsx_writer.h"

namespace ratewell {

// How read times are written in the time column of long and wide tables.
enum class TimeStyle {
  kSeconds,  // "seconds": 90, 90.5 (to the millisecond); header "Time (s)"
  kMinutes,  // "minutes": 1.5 (shortest exact form); header "Time (min)"
  kClock,    // "clock":   0:01:30, 0:01:30.500; header "Time"
};
const char* TimeStyleToString(TimeStyle style);
bool StringToTimeStyle(std::string_view text, TimeStyle* style);

// What goes into the table, whatever the container.
struct PlateTableOptions {
  // kLong, kWide or kGrid (kAuto is not a layout to write: invalid_argument).
  TableLayout layout = TableLayout::kLong;
  // The time column of long and wide tables; grid headings always use h:mm:ss.
  TimeStyle time_style = TimeStyle::kSeconds;
  // Places after the decimal point for absorbances, 0..10. Four is what
  // plate readers usually print (common practice).
  int decimals = 4;
  // Written for kSaturated points. Must be non-empty text that the importers
  // recognise as an overflow marker (e.g. "OVER", "OVRFLW", "****").
  std::string overflow_marker = "OVER";
  // Lines written above the table, one cell each; none by default.
  std::vector<std::string> preamble;
  // Whether plate temperatures (Plate::temperature_C, matched to reads by
  // time) are written: a wide-table column and a grid-heading part.
  bool temperature = true;
};

// How a text table is spelled out.
struct TextFormat {
  char delimiter = ',';        // ',', ';' or '\t'
  bool decimal_comma = false;  // 0,1234; only with ';' or '\t'
  bool crlf = false;           // line ends "\r\n" instead of "\n"
  bool utf8_bom = false;       // start the file with EF BB BF
};

// The table as rows of cells (numbers as numbers), before it is spelled out.
// Throws std::invalid_argument for invalid options or a plate whose wells do
// not share read times when the layout is wide or grid.
std::vector<std::vector<XlsxCell>> PlateTableCells(const Plate& plate,
                                                   const PlateTableOptions& options);

// The table as the text of a file.
std::string PlateTableText(const Plate& plate, const PlateTableOptions& options,
                           const TextFormat& format);

// The table as one worksheet; sheet_name follows Excel's rules (xlsx_writer.h).
XlsxSheet PlateTableSheet(const Plate& plate, const PlateTableOptions& options,
                          const std::string& sheet_name);

// Writes the text (or workbook) atomically to path. Throws InputError when
// path is one of protected_inputs (compared as files, so another spelling of
// the same path is caught), std::runtime_error when the file cannot be written
// (the reason from the system), std::invalid_argument as above.
void WritePlateText(const Plate& plate, const std::string& path, const PlateTableOptions& options,
                    const TextFormat& format,
                    const std::vector<std::string>& protected_inputs = {});
void WritePlateXlsx(const Plate& plate, const std::string& path, const PlateTableOptions& options,
                    const std::string& sheet_name,
                    const std::vector<std::string>& protected_inputs = {});

// WriteFileAtomically and RefuseToReplaceInput: importers/file_io.h.

}  // namespace ratewell
