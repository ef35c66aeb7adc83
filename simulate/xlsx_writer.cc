#include "simulate/xlsx_writer.h"

#include "importers/file_io.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zip.h>

#include <atomic>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <memory>
#include <optional>
#include <pugixml.hpp>
#include <stdexcept>
#include <string_view>
#include <unordered_map>
#include <utility>

namespace ratewell {
namespace {

// Excel's sheet limits (Excel specifications and limits, Excel 2007 on).
constexpr std::size_t kMaxRows = 1048576;
constexpr std::size_t kMaxColumns = 16384;
constexpr std::size_t kMaxSheetNameUnits = 31;  // UTF-16 code units, as Excel counts

constexpr char kMainNamespace[] = "http://schemas.openxmlformats.org/spreadsheetml/2006/main";
constexpr char kPackageRelationshipsNamespace[] =
    "http://schemas.openxmlformats.org/package/2006/relationships";
constexpr char kContentTypesNamespace[] =
    "http://schemas.openxmlformats.org/package/2006/content-types";
// The namespace of r:id attributes; relationship types are this plus "/" and a word.
constexpr char kOfficeRelationshipsNamespace[] =
    "http://schemas.openxmlformats.org/officeDocument/2006/relationships";
constexpr char kContentTypePrefix[] = "application/vnd.openxmlformats-officedocument.spreadsheetml.";

// The time stamp of every zip entry, 2000-01-01 00:00:00 UTC, so that output
// does not depend on when it was made (zip keeps local time from 1980 on).
constexpr std::time_t kEntryTime = 946684800;
// zlib's default trade of speed for size.
constexpr zip_uint32_t kDeflateLevel = 6;

// "A" for 1, "Z" for 26, "AA" for 27, ...
std::string ColumnName(std::size_t column) {
  std::string name;
  for (; column > 0; column = (column - 1) / 26) {
    name.insert(name.begin(), static_cast<char>('A' + (column - 1) % 26));
  }
  return name;
}

std::string CellName(std::size_t row, std::size_t column) {
  return ColumnName(column) + std::to_string(row);
}

[[noreturn]] void Fail(const std::string& reason) { throw std::runtime_error(reason); }

// Decodes the UTF-8 sequence at text[*at] and advances *at past it; nullopt
// for invalid UTF-8 (stray or missing continuation bytes, overlong forms,
// surrogates, code points above U+10FFFF).
std::optional<std::uint32_t> NextCodePoint(std::string_view text, std::size_t* at) {
  const auto lead = static_cast<unsigned char>(text[*at]);
  std::size_t length = 0;
  std::uint32_t code_point = 0;
  std::uint32_t smallest = 0;
  if (lead < 0x80) {
    ++*at;
    return lead;
  } else if ((lead & 0xE0) == 0xC0) {
    length = 2, code_point = lead & 0x1F, smallest = 0x80;
  } else if ((lead & 0xF0) == 0xE0) {
    length = 3, code_point = lead & 0x0F, smallest = 0x800;
  } else if ((lead & 0xF8) == 0xF0) {
    length = 4, code_point = lead & 0x07, smallest = 0x10000;
  } else {
    return std::nullopt;
  }
  if (*at + length > text.size()) return std::nullopt;
  for (std::size_t i = 1; i < length; ++i) {
    const auto next = static_cast<unsigned char>(text[*at + i]);
    if ((next & 0xC0) != 0x80) return std::nullopt;
    code_point = (code_point << 6) | (next & 0x3F);
  }
  if (code_point < smallest || code_point > 0x10FFFF ||
      (code_point >= 0xD800 && code_point <= 0xDFFF)) {
    return std::nullopt;
  }
  *at += length;
  return code_point;
}

bool IsHexDigit(char c) {
  return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f') || (c >= 'A' && c <= 'F');
}

// True if text[at] starts something a reader would take for an _xHHHH_ escape.
bool LooksLikeEscape(std::string_view text, std::size_t at) {
  return at + 7 <= text.size() && text[at] == '_' && text[at + 1] == 'x' && IsHexDigit(text[at + 2]) &&
         IsHexDigit(text[at + 3]) && IsHexDigit(text[at + 4]) && IsHexDigit(text[at + 5]) &&
         text[at + 6] == '_';
}

// text as ST_Xstring content (ECMA-376 Part 1, 22.9.2.19): characters XML 1.0
// cannot carry, and the carriage return a parser would turn into a line feed,
// become _xHHHH_; an underscore that would read as an escape becomes _x005F_.
// nullopt if text is not valid UTF-8.
std::optional<std::string> EscapeXstring(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (std::size_t at = 0; at < text.size();) {
    const std::size_t start = at;
    const std::optional<std::uint32_t> code_point = NextCodePoint(text, &at);
    if (!code_point) return std::nullopt;
    if ((*code_point < 0x20 && *code_point != '\t' && *code_point != '\n') ||
        *code_point == 0xFFFE || *code_point == 0xFFFF) {
      char escape[8];
      std::snprintf(escape, sizeof(escape), "_x%04X_", static_cast<unsigned>(*code_point));
      out += escape;
    } else if (*code_point == '_' && LooksLikeEscape(text, start)) {
      out += "_x005F_";
    } else {
      out.append(text.substr(start, at - start));
    }
  }
  return out;
}

std::string AsciiLower(std::string_view text) {
  std::string lower(text);
  for (char& c : lower) {
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c + 32);
  }
  return lower;
}

// Why name cannot be a sheet name, or empty if it can.
std::string SheetNameProblem(const std::string& name) {
  if (name.empty()) return "is empty";
  std::size_t utf16_units = 0;
  for (std::size_t at = 0; at < name.size();) {
    const std::optional<std::uint32_t> code_point = NextCodePoint(name, &at);
    if (!code_point) return "is not valid UTF-8";
    if (*code_point < 0x20) return "holds a control character";
    if (*code_point < 0x80 &&
        std::string_view(":\\/?*[]").find(static_cast<char>(*code_point)) != std::string_view::npos) {
      return "holds one of : \\ / ? * [ ], which Excel does not allow in sheet names";
    }
    utf16_units += *code_point >= 0x10000 ? 2 : 1;
  }
  if (utf16_units > kMaxSheetNameUnits) {
    return "has " + std::to_string(utf16_units) + " characters; Excel allows at most 31";
  }
  if (name.front() == '\'' || name.back() == '\'') {
    return "starts or ends with an apostrophe, which Excel does not allow";
  }
  if (AsciiLower(name) == "history") return "is reserved by Excel";
  return {};
}

bool NeedsSpacePreserve(std::string_view text) {
  const auto is_space = [](char c) { return c == ' ' || c == '\t' || c == '\n'; };
  return !text.empty() && (is_space(text.front()) || is_space(text.back()));
}

class StringWriter : public pugi::xml_writer {
 public:
  explicit StringWriter(std::string* out) : out_(out) {}
  void write(const void* data, std::size_t size) override {
    out_->append(static_cast<const char*>(data), size);
  }

 private:
  std::string* out_;
};

// A document holding the standard declaration; its root element is added next.
void StartDocument(pugi::xml_document* doc) {
  pugi::xml_node declaration = doc->append_child(pugi::node_declaration);
  declaration.append_attribute("version") = "1.0";
  declaration.append_attribute("encoding") = "UTF-8";
  declaration.append_attribute("standalone") = "yes";
}

std::string Serialize(const pugi::xml_document& doc) {
  std::string text;
  StringWriter writer(&text);
  doc.save(writer, "", pugi::format_raw, pugi::encoding_utf8);
  return text;
}

// Distinct strings in order of first use, already escaped.
class SharedStrings {
 public:
  std::size_t Add(const std::string& escaped) {
    ++uses_;
    const auto [it, inserted] = index_.try_emplace(escaped, strings_.size());
    if (inserted) strings_.push_back(escaped);
    return it->second;
  }
  bool empty() const { return strings_.empty(); }

  std::string Xml() const {
    pugi::xml_document doc;
    StartDocument(&doc);
    pugi::xml_node sst = doc.append_child("sst");
    sst.append_attribute("xmlns") = kMainNamespace;
    sst.append_attribute("count") = static_cast<unsigned long long>(uses_);
    sst.append_attribute("uniqueCount") = static_cast<unsigned long long>(strings_.size());
    for (const std::string& text : strings_) {
      pugi::xml_node t = sst.append_child("si").append_child("t");
      if (NeedsSpacePreserve(text)) t.append_attribute("xml:space") = "preserve";
      t.append_child(pugi::node_pcdata).set_value(text.c_str());
    }
    return Serialize(doc);
  }

 private:
  std::unordered_map<std::string, std::size_t> index_;
  std::vector<std::string> strings_;
  std::size_t uses_ = 0;
};

std::string WorksheetXml(const XlsxSheet& sheet, SharedStrings* shared) {
  const auto fail = [&](std::size_t row, std::size_t column, const std::string& reason) {
    Fail("sheet '" + sheet.name + "' cell " + CellName(row, column) + ": " + reason);
  };
  if (sheet.rows.size() > kMaxRows) {
    Fail("sheet '" + sheet.name + "' has " + std::to_string(sheet.rows.size()) +
         " rows; Excel allows at most 1,048,576");
  }
  pugi::xml_document doc;
  StartDocument(&doc);
  pugi::xml_node worksheet = doc.append_child("worksheet");
  worksheet.append_attribute("xmlns") = kMainNamespace;
  pugi::xml_node dimension = worksheet.append_child("dimension");
  pugi::xml_node sheet_data = worksheet.append_child("sheetData");

  std::size_t first_row = 0, last_row = 0, first_column = 0, last_column = 0;
  for (std::size_t i = 0; i < sheet.rows.size(); ++i) {
    const std::vector<XlsxCell>& cells = sheet.rows[i];
    const std::size_t row = i + 1;
    if (cells.size() > kMaxColumns) {
      fail(row, kMaxColumns + 1, "the row has " + std::to_string(cells.size()) +
                                     " cells; Excel allows at most 16,384 columns");
    }
    pugi::xml_node row_node;
    for (std::size_t j = 0; j < cells.size(); ++j) {
      const std::size_t column = j + 1;
      const XlsxCell& cell = cells[j];
      const auto* number = std::get_if<double>(&cell);
      const auto* text = std::get_if<std::string>(&cell);
      if (number == nullptr && (text == nullptr || text->empty())) continue;

      std::string value;
      if (number != nullptr) {
        if (!std::isfinite(*number)) {
          fail(row, column, std::string(std::isnan(*number) ? "NaN" : "an infinite number") +
                                " cannot be stored in a sheet cell");
        }
        char buffer[32];
        const auto written = std::to_chars(buffer, buffer + sizeof(buffer), *number);
        value.assign(buffer, written.ptr);
      } else {
        const std::optional<std::string> escaped = EscapeXstring(*text);
        if (!escaped) fail(row, column, "the string is not valid UTF-8");
        value = std::to_string(shared->Add(*escaped));
      }
      if (!row_node) {
        row_node = sheet_data.append_child("row");
        row_node.append_attribute("r") = static_cast<unsigned long long>(row);
      }
      pugi::xml_node c = row_node.append_child("c");
      c.append_attribute("r") = CellName(row, column).c_str();
      if (text != nullptr) c.append_attribute("t") = "s";
      c.append_child("v").append_child(pugi::node_pcdata).set_value(value.c_str());

      if (first_row == 0) first_row = row;
      last_row = row;
      if (first_column == 0 || column < first_column) first_column = column;
      if (column > last_column) last_column = column;
    }
  }
  if (first_row == 0) {
    worksheet.remove_child(dimension);
  } else {
    const std::string ref = CellName(first_row, first_column) + ":" + CellName(last_row, last_column);
    dimension.append_attribute("ref") = ref.c_str();
  }
  return Serialize(doc);
}

std::string ContentTypesXml(std::size_t num_sheets, bool has_shared_strings) {
  pugi::xml_document doc;
  StartDocument(&doc);
  pugi::xml_node types = doc.append_child("Types");
  types.append_attribute("xmlns") = kContentTypesNamespace;
  const auto add_default = [&](const char* extension, const char* content_type) {
    pugi::xml_node node = types.append_child("Default");
    node.append_attribute("Extension") = extension;
    node.append_attribute("ContentType") = content_type;
  };
  const auto add_override = [&](const std::string& part, const std::string& kind) {
    pugi::xml_node node = types.append_child("Override");
    node.append_attribute("PartName") = part.c_str();
    node.append_attribute("ContentType") = (kContentTypePrefix + kind + "+xml").c_str();
  };
  add_default("rels", "application/vnd.openxmlformats-package.relationships+xml");
  add_default("xml", "application/xml");
  add_override("/xl/workbook.xml", "sheet.main");
  for (std::size_t i = 1; i <= num_sheets; ++i) {
    add_override("/xl/worksheets/sheet" + std::to_string(i) + ".xml", "worksheet");
  }
  add_override("/xl/styles.xml", "styles");
  if (has_shared_strings) add_override("/xl/sharedStrings.xml", "sharedStrings");
  return Serialize(doc);
}

// A relationships part: (type, target) pairs get ids rId1, rId2, ... in order.
std::string RelationshipsXml(const std::vector<std::pair<std::string, std::string>>& targets) {
  pugi::xml_document doc;
  StartDocument(&doc);
  pugi::xml_node relationships = doc.append_child("Relationships");
  relationships.append_attribute("xmlns") = kPackageRelationshipsNamespace;
  for (std::size_t i = 0; i < targets.size(); ++i) {
    pugi::xml_node node = relationships.append_child("Relationship");
    node.append_attribute("Id") = ("rId" + std::to_string(i + 1)).c_str();
    node.append_attribute("Type") = (std::string(kOfficeRelationshipsNamespace) + "/" + targets[i].first).c_str();
    node.append_attribute("Target") = targets[i].second.c_str();
  }
  return Serialize(doc);
}

std::string WorkbookXml(const std::vector<XlsxSheet>& sheets) {
  pugi::xml_document doc;
  StartDocument(&doc);
  pugi::xml_node workbook = doc.append_child("workbook");
  workbook.append_attribute("xmlns") = kMainNamespace;
  workbook.append_attribute("xmlns:r") = kOfficeRelationshipsNamespace;
  pugi::xml_node sheets_node = workbook.append_child("sheets");
  for (std::size_t i = 0; i < sheets.size(); ++i) {
    pugi::xml_node node = sheets_node.append_child("sheet");
    node.append_attribute("name") = sheets[i].name.c_str();
    node.append_attribute("sheetId") = static_cast<unsigned long long>(i + 1);
    node.append_attribute("r:id") = ("rId" + std::to_string(i + 1)).c_str();
  }
  return Serialize(doc);
}

// One font, the two fills Excel requires (none, gray125), one border, one cell format.
std::string StylesXml() {
  pugi::xml_document doc;
  StartDocument(&doc);
  pugi::xml_node styles = doc.append_child("styleSheet");
  styles.append_attribute("xmlns") = kMainNamespace;
  pugi::xml_node fonts = styles.append_child("fonts");
  fonts.append_attribute("count") = 1;
  pugi::xml_node font = fonts.append_child("font");
  font.append_child("sz").append_attribute("val") = 11;
  font.append_child("name").append_attribute("val") = "Calibri";
  pugi::xml_node fills = styles.append_child("fills");
  fills.append_attribute("count") = 2;
  fills.append_child("fill").append_child("patternFill").append_attribute("patternType") = "none";
  fills.append_child("fill").append_child("patternFill").append_attribute("patternType") = "gray125";
  pugi::xml_node borders = styles.append_child("borders");
  borders.append_attribute("count") = 1;
  pugi::xml_node border = borders.append_child("border");
  for (const char* side : {"left", "right", "top", "bottom", "diagonal"}) border.append_child(side);
  const auto add_format = [](pugi::xml_node list, bool with_style_id) {
    list.append_attribute("count") = 1;
    pugi::xml_node xf = list.append_child("xf");
    for (const char* id : {"numFmtId", "fontId", "fillId", "borderId"}) xf.append_attribute(id) = 0;
    if (with_style_id) xf.append_attribute("xfId") = 0;
  };
  add_format(styles.append_child("cellStyleXfs"), false);
  add_format(styles.append_child("cellXfs"), true);
  pugi::xml_node cell_styles = styles.append_child("cellStyles");
  cell_styles.append_attribute("count") = 1;
  pugi::xml_node normal = cell_styles.append_child("cellStyle");
  normal.append_attribute("name") = "Normal";
  normal.append_attribute("xfId") = 0;
  normal.append_attribute("builtinId") = 0;
  return Serialize(doc);
}

using SourcePtr = std::unique_ptr<zip_source_t, decltype(&zip_source_free)>;

// The parts, deflated, as a zip archive built in memory.
std::string ZipParts(const std::vector<std::pair<std::string, std::string>>& parts) {
  zip_error_t error;
  zip_error_init(&error);
  SourcePtr buffer(zip_source_buffer_create(nullptr, 0, 0, &error), &zip_source_free);
  if (!buffer) {
    const std::string reason = zip_error_strerror(&error);
    zip_error_fini(&error);
    Fail("cannot start a zip archive in memory: " + reason);
  }
  zip_source_keep(buffer.get());  // the archive must not free it on close
  zip_t* archive = zip_open_from_source(buffer.get(), ZIP_TRUNCATE, &error);
  if (archive == nullptr) {
    zip_source_free(buffer.get());  // drops the reference zip_source_keep added
    const std::string reason = zip_error_strerror(&error);
    zip_error_fini(&error);
    Fail("cannot start a zip archive in memory: " + reason);
  }
  zip_error_fini(&error);
  const auto fail = [&](const std::string& what) {
    const std::string reason = what + ": " + zip_strerror(archive);
    zip_discard(archive);
    Fail(reason);
  };
  for (const auto& [name, data] : parts) {
    zip_source_t* source = zip_source_buffer(archive, data.data(), data.size(), 0);
    if (source == nullptr) fail("cannot add " + name + " to the zip archive");
    const zip_int64_t index = zip_file_add(archive, name.c_str(), source, ZIP_FL_ENC_UTF_8);
    if (index < 0) {
      zip_source_free(source);
      fail("cannot add " + name + " to the zip archive");
    }
    const auto entry = static_cast<zip_uint64_t>(index);
    if (zip_set_file_compression(archive, entry, ZIP_CM_DEFLATE, kDeflateLevel) != 0 ||
        zip_file_set_mtime(archive, entry, kEntryTime, 0) != 0) {
      fail("cannot set up " + name + " in the zip archive");
    }
  }
  if (zip_close(archive) != 0) fail("cannot finish the zip archive");

  zip_source_t* source = buffer.get();
  const auto source_fail = [&](const char* what) {
    Fail(std::string(what) + ": " + zip_error_strerror(zip_source_error(source)));
  };
  if (zip_source_open(source) != 0) source_fail("cannot read back the zip archive");
  std::string bytes;
  if (zip_source_seek(source, 0, SEEK_END) != 0) source_fail("cannot size the zip archive");
  const zip_int64_t size = zip_source_tell(source);
  if (size < 0 || zip_source_seek(source, 0, SEEK_SET) != 0) source_fail("cannot size the zip archive");
  bytes.resize(static_cast<std::size_t>(size));
  const zip_int64_t read = zip_source_read(source, bytes.data(), static_cast<zip_uint64_t>(size));
  zip_source_close(source);
  if (read != size) source_fail("cannot read back the zip archive");
  return bytes;
}

}  // namespace

std::string XlsxBytes(const std::vector<XlsxSheet>& sheets) {
  if (sheets.empty()) Fail("a workbook needs at least one sheet");
  std::unordered_map<std::string, const XlsxSheet*> names;
  for (const XlsxSheet& sheet : sheets) {
    if (const std::string problem = SheetNameProblem(sheet.name); !problem.empty()) {
      Fail("sheet name '" + sheet.name + "' " + problem);
    }
    const auto [it, inserted] = names.try_emplace(AsciiLower(sheet.name), &sheet);
    if (!inserted) {
      Fail("sheet names '" + it->second->name + "' and '" + sheet.name +
           "' are the same to Excel, which ignores case");
    }
  }

  SharedStrings shared;
  std::vector<std::string> worksheets;
  worksheets.reserve(sheets.size());
  for (const XlsxSheet& sheet : sheets) worksheets.push_back(WorksheetXml(sheet, &shared));

  std::vector<std::pair<std::string, std::string>> workbook_targets;
  for (std::size_t i = 1; i <= sheets.size(); ++i) {
    workbook_targets.emplace_back("worksheet", "worksheets/sheet" + std::to_string(i) + ".xml");
  }
  workbook_targets.emplace_back("styles", "styles.xml");
  if (!shared.empty()) workbook_targets.emplace_back("sharedStrings", "sharedStrings.xml");

  std::vector<std::pair<std::string, std::string>> parts;
  parts.emplace_back("[Content_Types].xml", ContentTypesXml(sheets.size(), !shared.empty()));
  parts.emplace_back("_rels/.rels", RelationshipsXml({{"officeDocument", "xl/workbook.xml"}}));
  parts.emplace_back("xl/workbook.xml", WorkbookXml(sheets));
  parts.emplace_back("xl/_rels/workbook.xml.rels", RelationshipsXml(workbook_targets));
  for (std::size_t i = 0; i < worksheets.size(); ++i) {
    parts.emplace_back("xl/worksheets/sheet" + std::to_string(i + 1) + ".xml",
                       std::move(worksheets[i]));
  }
  parts.emplace_back("xl/styles.xml", StylesXml());
  if (!shared.empty()) parts.emplace_back("xl/sharedStrings.xml", shared.Xml());
  return ZipParts(parts);
}

void WriteXlsx(const std::string& path, const std::vector<XlsxSheet>& sheets) {
  std::string bytes;
  try {
    bytes = XlsxBytes(sheets);
  } catch (const std::runtime_error& error) {
    throw std::runtime_error("cannot write workbook " + path + ": " + error.what());
  }
  WriteFileAtomically(path, bytes);
}

}  // namespace ratewell
