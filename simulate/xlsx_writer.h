// Writing small Office Open XML workbooks (.xlsx), for `ratewell simulate`.
//
// A workbook is a zip archive of XML parts (ECMA-376 Part 1, SpreadsheetML;
// Part 2, Open Packaging Conventions). The writer produces the smallest set of
// parts spreadsheet programs accept:
//
//   [Content_Types].xml         the content type of every part
//   _rels/.rels                 package -> xl/workbook.xml
//   xl/workbook.xml             the sheet names, in order
//   xl/_rels/workbook.xml.rels  rIdN -> worksheets/sheetN.xml, styles, shared strings
//   xl/worksheets/sheetN.xml    the cells: numbers in place, strings by index
//   xl/sharedStrings.xml        each distinct string once (only if there are strings)
//   xl/styles.xml               one default cell format
//
// Every part is deflated, and every entry carries the same fixed time stamp, so
// the same sheets always give the same bytes. Numbers are written in shortest
// round-trip form (std::to_chars), so reading them back gives the same double
// bit for bit. Strings are UTF-8; control characters other than tab and line
// feed are written as _xHHHH_ escapes, as Excel does: XML 1.0 cannot hold most
// of them, and a parser turns a raw carriage return into a line feed.
//
// Example:
//   XlsxSheet sheet{"Kinetics", {{std::string("Time (s)"), std::string("A1")},
//                                {0.0, 1.254},
//                                {30.0, 1.231}}};
//   WriteXlsx(out_folder + "/plate.xlsx", {sheet});
#pragma once

#include <string>
#include <variant>
#include <vector>

namespace ratewell {

// One cell: empty (std::monostate), a number, or a UTF-8 string. An empty
// string is written as an empty cell.
using XlsxCell = std::variant<std::monostate, double, std::string>;

struct XlsxSheet {
  // The tab name. Excel's rules: 1 to 31 characters, none of : \ / ? * [ ],
  // not starting or ending with an apostrophe, not "History" (reserved), unique
  // in the workbook ignoring (ASCII) case. Names that break them are refused
  // rather than changed.
  std::string name;
  // rows[i][j] is the cell in sheet row i + 1, column j + 1 (column 1 is A).
  // Rows may differ in length; empty cells and rows are simply not written.
  // At most 1,048,576 rows of 16,384 columns (Excel's limits).
  std::vector<std::vector<XlsxCell>> rows;
};

// The workbook's bytes. Throws std::runtime_error saying which sheet and cell
// is at fault when sheets is empty, a sheet name breaks Excel's rules, a number
// is not finite (NaN or infinite: a sheet cannot hold it), a string is not
// valid UTF-8, or a sheet exceeds Excel's limits.
std::string XlsxBytes(const std::vector<XlsxSheet>& sheets);

// Writes the workbook to path, atomically: the bytes go to a new temporary
// file in the same folder, which is flushed to disk and then renamed over
// path, so a reader never sees half a workbook and an existing file is only
// replaced by a complete one. Throws std::runtime_error naming path and the
// reason (the errors of XlsxBytes, or the system's reason for a failed
// create, write or rename); the temporary file is removed on failure.
void WriteXlsx(const std::string& path, const std::vector<XlsxSheet>& sheets);

}  // namespace ratewell
