#pragma once
#include <memory>
#include <string>
#include <string_view>
#include "importers/detail/text_table.h"
namespace ratewell::detail {
bool LooksLikeZip(std::string_view bytes);  // starts with "PK\x03\x04"
// Reads one worksheet (by name, or the first sheet in workbook order when sheet is empty) into a CellTable;
// numbers are given as text in shortest round-trip form (std::to_chars), shared strings and inline strings
// as text, booleans as TRUE/FALSE, cells placed by their r="B7" reference (gaps become empty cells, rows with
// no cells become empty rows so row numbers stay true); line_number = the sheet row number (1-based).
// Error cells (t="e", e.g. #N/A, #DIV/0!) come through as their text. Formula cells: the cached <v> value.
// Throws InputError(file, row, column, reason) for: not a zip / corrupt zip, missing workbook.xml or the sheet
// part, unknown sheet name (list the sheets that exist), malformed XML (say which part), a shared-string index
// out of range, absurd sizes (zip bomb guard: refuse parts whose uncompressed size exceeds e.g. 256 MB, and
// sheets beyond 1,048,576 rows or 16,384 columns, Excel's limits).
std::unique_ptr<CellTable> ReadXlsxSheet(std::string_view bytes, const std::string& file,
                                         const std::string& sheet, std::string* sheet_name_used);
}
