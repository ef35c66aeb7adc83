#include "importers/detail/text_table.h"

#include <algorithm>
#include <array>
#include <cstring>
#include <limits>

#include "importers/input_error.h"

namespace ratewell::detail {
namespace {

// Appends the UTF-8 encoding of a code point.
void AppendUtf8(std::uint32_t cp, std::string* out) {
  if (cp < 0x80) {
    out->push_back(static_cast<char>(cp));
  } else if (cp < 0x800) {
    out->push_back(static_cast<char>(0xC0 | (cp >> 6)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else if (cp < 0x10000) {
    out->push_back(static_cast<char>(0xE0 | (cp >> 12)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  } else {
    out->push_back(static_cast<char>(0xF0 | (cp >> 18)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 12) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | ((cp >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (cp & 0x3F)));
  }
}

// Line number (1-based) of a byte offset in decoded text, for messages.
int LineOfOffset(std::string_view text, std::size_t offset) {
  return 1 + static_cast<int>(std::count(text.begin(), text.begin() + std::min(offset, text.size()), '\n'));
}

std::string DecodeUtf16(std::string_view bytes, bool little_endian, const std::string& file) {
  if (bytes.size() % 2 != 0) {
    throw InputError(file, 0, 0,
                     "the file starts with a UTF-16 byte-order mark but has an odd number of "
                     "bytes; expected whole UTF-16 code units (file truncated?)");
  }
  std::string out;
  out.reserve(bytes.size() / 2 + bytes.size() / 8);
  const auto unit = [&](std::size_t i) -> std::uint32_t {
    const auto lo = static_cast<unsigned char>(bytes[i]);
    const auto hi = static_cast<unsigned char>(bytes[i + 1]);
    return little_endian ? (lo | (hi << 8)) : ((lo << 8) | hi);
  };
  int line = 1;
  for (std::size_t i = 0; i < bytes.size(); i += 2) {
    std::uint32_t cp = unit(i);
    if (cp >= 0xD800 && cp <= 0xDBFF) {
      if (i + 3 >= bytes.size() + 0 || i + 2 >= bytes.size()) {
        throw InputError(file, line, 0, "UTF-16 text ends inside a surrogate pair");
      }
      const std::uint32_t low = unit(i + 2);
      if (low < 0xDC00 || low > 0xDFFF) {
        throw InputError(file, line, 0, "invalid UTF-16: a high surrogate not followed by a low one");
      }
      cp = 0x10000 + ((cp - 0xD800) << 10) + (low - 0xDC00);
      i += 2;
    } else if (cp >= 0xDC00 && cp <= 0xDFFF) {
      throw InputError(file, line, 0, "invalid UTF-16: a low surrogate without a high one");
    } else if (cp == 0) {
      throw InputError(file, line, 0,
                       "a NUL character in UTF-16 text; expected a text table, not binary data");
    }
    if (cp == '\n') ++line;
    AppendUtf8(cp, &out);
  }
  return out;
}

// Length of the valid UTF-8 sequence at text[i], or 0 if invalid.
std::size_t Utf8SequenceLength(std::string_view text, std::size_t i) {
  const auto c = static_cast<unsigned char>(text[i]);
  std::size_t n = 0;
  if (c < 0x80) return 1;
  if ((c & 0xE0) == 0xC0 && c >= 0xC2) n = 2;
  else if ((c & 0xF0) == 0xE0) n = 3;
  else if ((c & 0xF8) == 0xF0 && c <= 0xF4) n = 4;
  else return 0;
  if (i + n > text.size()) return 0;
  for (std::size_t k = 1; k < n; ++k) {
    if ((static_cast<unsigned char>(text[i + k]) & 0xC0) != 0x80) return 0;
  }
  return n;
}

bool IsValidUtf8(std::string_view text) {
  for (std::size_t i = 0; i < text.size();) {
    // Fast path over ASCII.
    if (static_cast<unsigned char>(text[i]) < 0x80) {
      ++i;
      continue;
    }
    const std::size_t n = Utf8SequenceLength(text, i);
    if (n == 0) return false;
    i += n;
  }
  return true;
}

}  // namespace

DecodedText DecodeText(std::string_view bytes, const std::string& file) {
  if (bytes.empty()) throw InputError(file, 0, 0, "the file is empty; expected a text table");
  DecodedText out;
  if (bytes.size() >= 2 && static_cast<unsigned char>(bytes[0]) == 0xFF &&
      static_cast<unsigned char>(bytes[1]) == 0xFE) {
    out.text = DecodeUtf16(bytes.substr(2), /*little_endian=*/true, file);
    out.encoding = "UTF-16LE";
  } else if (bytes.size() >= 2 && static_cast<unsigned char>(bytes[0]) == 0xFE &&
             static_cast<unsigned char>(bytes[1]) == 0xFF) {
    out.text = DecodeUtf16(bytes.substr(2), /*little_endian=*/false, file);
    out.encoding = "UTF-16BE";
  } else {
    bool bom = bytes.size() >= 3 && bytes.substr(0, 3) == "\xEF\xBB\xBF";
    if (bom) bytes.remove_prefix(3);
    const std::size_t nul = bytes.find('\0');
    if (nul != std::string_view::npos) {
      throw InputError(file, LineOfOffset(bytes, nul), 0,
                       "the file holds binary data (a NUL byte); expected a text table "
                       "(CSV, semicolon or tab separated) or an .xlsx workbook");
    }
    if (IsValidUtf8(bytes)) {
      out.text.assign(bytes);
      out.encoding = bom ? "UTF-8 with BOM" : "UTF-8";
    } else {
      // Older instrument software writes Latin-1 (e.g. a lone 0xB0 for the
      // degree sign). Read it as such rather than refuse the file.
      out.text.reserve(bytes.size() + bytes.size() / 16);
      for (char c : bytes) AppendUtf8(static_cast<unsigned char>(c), &out.text);
      out.encoding = "Latin-1";
    }
  }
  if (out.text.find_first_not_of(" \t\r\n") == std::string::npos) {
    throw InputError(file, 0, 0, "the file holds no text; expected a text table");
  }
  return out;
}

TextTable::TextTable(std::string text, char delimiter)
    : text_(std::move(text)), delimiter_(delimiter) {
  if (text_.size() >= std::numeric_limits<std::uint32_t>::max()) {
    throw InputError("", 0, 0, "the file is larger than 4 GB; expected a plate export");
  }
  line_starts_.reserve(text_.size() / 24 + 1);
  line_starts_.push_back(0);
  const char* data = text_.data();
  const std::size_t n = text_.size();
  std::size_t i = 0;
  while (i < n) {
    const void* hit = std::memchr(data + i, '\n', n - i);
    // A file with bare CR line ends has no LF at all: handle it separately.
    if (hit == nullptr) break;
    i = static_cast<const char*>(hit) - data + 1;
    if (i < n) line_starts_.push_back(static_cast<std::uint32_t>(i));
  }
  if (line_starts_.size() == 1 && text_.find('\r') != std::string::npos) {
    line_starts_.clear();
    line_starts_.push_back(0);
    for (std::size_t k = 0; k + 1 < n; ++k) {
      if (data[k] == '\r') line_starts_.push_back(static_cast<std::uint32_t>(k + 1));
    }
  }
  // Drop a final empty line after the last line end.
  while (line_starts_.size() > 1 && line_starts_.back() >= n) line_starts_.pop_back();
}

std::string_view TextTable::line(std::size_t row) const {
  const std::size_t start = line_starts_[row];
  std::size_t end = row + 1 < line_starts_.size() ? line_starts_[row + 1] : text_.size();
  while (end > start && (text_[end - 1] == '\n' || text_[end - 1] == '\r')) --end;
  return std::string_view(text_).substr(start, end - start);
}

namespace {

std::string_view TrimCell(std::string_view cell, char delimiter) {
  std::size_t b = 0;
  std::size_t e = cell.size();
  while (b < e && (cell[b] == ' ' || (cell[b] == '\t' && delimiter != '\t'))) ++b;
  while (e > b && (cell[e - 1] == ' ' || (cell[e - 1] == '\t' && delimiter != '\t'))) --e;
  return cell.substr(b, e - b);
}

}  // namespace

void TextTable::GetRow(std::size_t row, std::vector<std::string_view>* cells) const {
  cells->clear();
  const std::string_view text = line(row);
  if (text.empty()) return;
  // Fast path: no quotes on the line.
  if (text.find('"') == std::string_view::npos) {
    std::size_t start = 0;
    while (true) {
      const std::size_t end = text.find(delimiter_, start);
      if (end == std::string_view::npos) {
        cells->push_back(TrimCell(text.substr(start), delimiter_));
        break;
      }
      cells->push_back(TrimCell(text.substr(start, end - start), delimiter_));
      start = end + 1;
    }
    return;
  }
  // Quoted cells: "a, b" and "say ""hi""". Unescaped text goes to a scratch
  // buffer reserved to the line length so earlier views stay valid.
  unquoted_.clear();
  unquoted_.reserve(text.size());
  std::size_t i = 0;
  while (true) {
    while (i < text.size() && text[i] == ' ') ++i;
    if (i < text.size() && text[i] == '"') {
      const std::size_t begin = unquoted_.size();
      ++i;
      while (i < text.size()) {
        if (text[i] == '"') {
          if (i + 1 < text.size() && text[i + 1] == '"') {
            unquoted_.push_back('"');
            i += 2;
            continue;
          }
          ++i;
          break;
        }
        unquoted_.push_back(text[i++]);
      }
      cells->push_back(TrimCell(std::string_view(unquoted_).substr(begin), delimiter_));
      // Skip anything up to the next delimiter.
      const std::size_t next = text.find(delimiter_, i);
      if (next == std::string_view::npos) break;
      i = next + 1;
    } else {
      const std::size_t end = text.find(delimiter_, i);
      if (end == std::string_view::npos) {
        cells->push_back(TrimCell(text.substr(i), delimiter_));
        break;
      }
      cells->push_back(TrimCell(text.substr(i, end - i), delimiter_));
      i = end + 1;
    }
  }
}

char DetectDelimiter(std::string_view text) {
  constexpr std::array<char, 3> kCandidates = {'\t', ';', ','};
  constexpr int kMaxLines = 200;
  std::array<std::vector<int>, 3> counts;
  std::size_t start = 0;
  for (int line = 0; line < kMaxLines && start < text.size(); ++line) {
    std::size_t end = text.find_first_of("\r\n", start);
    if (end == std::string_view::npos) end = text.size();
    const std::string_view row = text.substr(start, end - start);
    if (!row.empty()) {
      for (std::size_t c = 0; c < kCandidates.size(); ++c) {
        int n = 0;
        bool quoted = false;
        for (char ch : row) {
          if (ch == '"') quoted = !quoted;
          else if (!quoted && ch == kCandidates[c]) ++n;
        }
        counts[c].push_back(n);
      }
    }
    start = end + 1;
    if (start < text.size() && text[start - 1] == '\r' && text[start] == '\n') ++start;
  }
  // A table's rows agree on how many delimiters they hold; free text does
  // not. Tab and semicolon are tried first: a file that uses them often has
  // decimal commas, which would otherwise outnumber the real delimiter.
  const long lines = static_cast<long>(counts[0].size());
  for (std::size_t c = 0; c < kCandidates.size(); ++c) {
    std::vector<int> nonzero;
    for (int n : counts[c]) if (n > 0) nonzero.push_back(n);
    if (nonzero.empty()) continue;
    std::sort(nonzero.begin(), nonzero.end());
    long mode_lines = 0;
    for (std::size_t i = 0; i < nonzero.size();) {
      std::size_t j = i;
      while (j < nonzero.size() && nonzero[j] == nonzero[i]) ++j;
      mode_lines = std::max(mode_lines, static_cast<long>(j - i));
      i = j;
    }
    const bool last = c + 1 == kCandidates.size();
    if (last || 2 * mode_lines >= lines) return kCandidates[c];
  }
  return ',';
}

const char* DelimiterName(char delimiter) {
  switch (delimiter) {
    case '\t': return "tab";
    case ';': return "semicolon";
    default: return "comma";
  }
}

void CellTable::GetRow(std::size_t row, std::vector<std::string_view>* cells) const {
  cells->clear();
  for (const std::string& cell : rows_[row]) cells->push_back(TrimCell(cell, ','));
}

}  // namespace ratewell::detail
