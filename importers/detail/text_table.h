// Internal: decoded text split into rows of cells, with source line numbers.
//
// The readers see a file as a Table: rows of string_view cells. A TextTable
// owns the UTF-8 text of a delimited file and splits a row when asked (no
// per-cell allocation, so a 4 MB file costs about 4 MB plus 4 bytes a line).
// A CellTable holds cells already split, for .xlsx sheets.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace ratewell::detail {

class Table {
 public:
  virtual ~Table() = default;
  virtual std::size_t num_rows() const = 0;
  // Fills cells with the row's cells, trimmed of spaces and enclosing quotes.
  // Views stay valid until the next GetRow call on this table or its end.
  virtual void GetRow(std::size_t row, std::vector<std::string_view>* cells) const = 0;
  // 1-based line in the source file (or row in the sheet) of a row.
  virtual int line_number(std::size_t row) const = 0;
};

// Result of decoding raw bytes to UTF-8.
struct DecodedText {
  std::string text;      // UTF-8, BOM removed, line ends left as they were
  std::string encoding;  // "UTF-8", "UTF-8 with BOM", "UTF-16LE", "UTF-16BE"
};
// Decodes bytes (UTF-8 with or without BOM, UTF-16 LE/BE with BOM). Throws
// InputError naming file for invalid UTF-16, a NUL byte in 8-bit text
// (binary), or an empty file.
DecodedText DecodeText(std::string_view bytes, const std::string& file);

class TextTable : public Table {
 public:
  // Splits text into lines (LF, CRLF or CR). delimiter is ',', ';' or '\t'.
  // Blank lines are kept as rows with no cells so line numbers stay true.
  TextTable(std::string text, char delimiter);

  std::size_t num_rows() const override { return line_starts_.size(); }
  void GetRow(std::size_t row, std::vector<std::string_view>* cells) const override;
  int line_number(std::size_t row) const override { return static_cast<int>(row) + 1; }
  char delimiter() const { return delimiter_; }
  std::string_view line(std::size_t row) const;

 private:
  std::string text_;
  char delimiter_;
  std::vector<std::uint32_t> line_starts_;  // offset of each line
  mutable std::string unquoted_;            // scratch for quoted cells with "" escapes
};

// Picks the delimiter of a text file: the one of ',', ';', '\t' that splits the
// first lines most consistently into more than one cell. Decimal commas are
// taken into account (a file of "0,5;0,7" is semicolon separated).
char DetectDelimiter(std::string_view text);
const char* DelimiterName(char delimiter);  // "comma", "semicolon", "tab"

class CellTable : public Table {
 public:
  std::size_t num_rows() const override { return rows_.size(); }
  void GetRow(std::size_t row, std::vector<std::string_view>* cells) const override;
  int line_number(std::size_t row) const override { return lines_[row]; }
  void AddRow(std::vector<std::string> cells, int line) {
    rows_.push_back(std::move(cells));
    lines_.push_back(line);
  }

 private:
  std::vector<std::vector<std::string>> rows_;
  std::vector<int> lines_;
};

}  // namespace ratewell::detail
