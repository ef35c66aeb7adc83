// Internal: one worksheet of an Office Open XML workbook (.xlsx) as a CellTable.
//
// A workbook is a zip archive of XML parts (ECMA-376 Part 1, SpreadsheetML;
// Part 2, Open Packaging Conventions). The path to a sheet's cells:
//
//   _rels/.rels                 officeDocument relationship -> xl/workbook.xml
//   xl/workbook.xml             <sheets><sheet name=".." r:id="rId3"/>, in workbook order
//   xl/_rels/workbook.xml.rels  rId3 -> Target="worksheets/sheet2.xml" (relative to
//                               xl/, or absolute from the package root with a '/')
//   xl/worksheets/sheet2.xml    <sheetData><row r="7"><c r="B7" t=".."><v>..</v></c>
//   xl/sharedStrings.xml        <sst><si>..</si>: the strings t="s" cells index
//
// What is interpreted and what is not:
//  - Cell styles are not read. Dates and times are stored as serial day numbers
//    (days since 1899-12-30 in the default 1900 date system, the time of day as
//    the fraction) and come through as those numbers even when the cell's style
//    shows them as a date or time. Plate readers take the time unit from a header
//    cell; the caller decides what a number means.
//  - A formula cell gives its cached value (<v>); a formula that was never
//    calculated (no <v>) is an empty cell. t="d" (ISO 8601 date) cells come
//    through as their text.
//  - Strings decode the _xHHHH_ escapes of ST_Xstring (Excel writes _x000D_ for a
//    carriage return). Rich-text runs are joined; phonetic runs (<rPh>) are left out.
//  - Elements are matched by local name, so prefixed forms (<x:c>) and the Strict
//    OOXML namespaces read as well. Part names are matched ignoring ASCII case, as
//    OPC part names are case-insensitive.
//  - Cells and rows must come in ascending order (Excel refuses files where they
//    do not); a cell's reference must lie in its row.
//
// Guards against absurd input (all raise InputError, none allocate first):
// parts larger than kMaxPartBytes uncompressed, rows beyond Excel's 1,048,576,
// columns beyond Excel's 16,384 (XFD), and more than kMaxCellSlots cells
// counting the empty cells that fill gaps. pugixml does not expand entities
// declared in a DTD, so entity-expansion bombs are inert.
#include "importers/detail/xlsx.h"

#include <zip.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <optional>
#include <pugixml.hpp>
#include <string>
#include <utility>
#include <vector>

#include "importers/input_error.h"

namespace ratewell::detail {
namespace {

// Largest uncompressed part read. A 1536-well plate with 1000 reads is about
// 1.5 million cells, some 40 MB of sheet XML, so 256 MB leaves ample room.
constexpr std::uint64_t kMaxPartBytes = std::uint64_t{256} << 20;
// Excel's own sheet limits (Excel specifications and limits, Excel 2007 on).
constexpr int kMaxRows = 1048576;
constexpr int kMaxColumns = 16384;
// Most cells held, counting empty cells that fill gaps (each costs an empty
// std::string, 32 bytes): 8.4 million cells, about 270 MB before any text.
constexpr std::size_t kMaxCellSlots = std::size_t{1} << 23;

[[noreturn]] void Fail(const std::string& file, const std::string& reason) {
  throw InputError(file, 0, 0, reason);
}

std::string Quoted(std::string_view text) {
  std::string quoted;
  quoted.reserve(text.size() + 2);
  quoted.append(1, '\'').append(text).append(1, '\'');
  return quoted;
}

// "A" for 1, "Z" for 26, "AA" for 27, ... (column letters of a cell reference).
std::string ColumnName(int column) {
  std::string name;
  for (; column > 0; column = (column - 1) / 26) {
    name.insert(name.begin(), static_cast<char>('A' + (column - 1) % 26));
  }
  return name;
}

std::string CellName(int row, int column) { return ColumnName(column) + std::to_string(row); }

std::string_view TrimXmlSpace(std::string_view text) {
  const auto is_space = [](char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; };
  while (!text.empty() && is_space(text.front())) text.remove_prefix(1);
  while (!text.empty() && is_space(text.back())) text.remove_suffix(1);
  return text;
}

bool EqualsIgnoreAsciiCase(std::string_view a, std::string_view b) {
  if (a.size() != b.size()) return false;
  for (std::size_t i = 0; i < a.size(); ++i) {
    const auto lower = [](char c) { return (c >= 'A' && c <= 'Z') ? static_cast<char>(c + 32) : c; };
    if (lower(a[i]) != lower(b[i])) return false;
  }
  return true;
}

bool EndsWith(std::string_view text, std::string_view suffix) {
  return text.size() >= suffix.size() && text.substr(text.size() - suffix.size()) == suffix;
}

// A positive decimal integer of at most 9 digits, or nullopt.
std::optional<int> ParsePositiveInt(std::string_view text) {
  text = TrimXmlSpace(text);
  if (text.empty() || text.size() > 9) return std::nullopt;
  int value = 0;
  const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || end != text.data() + text.size() || value <= 0) return std::nullopt;
  return value;
}

// Splits "B7" into column 2 and row 7. Columns are 1 to 3 letters (any case),
// rows 1 to 9 digits; the caller checks them against Excel's limits.
bool ParseCellReference(std::string_view ref, int* column, int* row) {
  std::size_t letters = 0;
  int value = 0;
  while (letters < ref.size() && letters < 4) {
    char c = ref[letters];
    if (c >= 'a' && c <= 'z') c = static_cast<char>(c - 32);
    if (c < 'A' || c > 'Z') break;
    value = value * 26 + (c - 'A' + 1);
    ++letters;
  }
  if (letters == 0 || letters > 3) return false;
  const std::optional<int> row_number = ParsePositiveInt(ref.substr(letters));
  if (!row_number || ref.substr(letters).front() < '0' || ref.substr(letters).front() > '9') {
    return false;
  }
  *column = value;
  *row = *row_number;
  return true;
}

void AppendUtf8(std::uint32_t code_point, std::string* out) {
  if (code_point < 0x80) {
    out->push_back(static_cast<char>(code_point));
  } else if (code_point < 0x800) {
    out->push_back(static_cast<char>(0xC0 | (code_point >> 6)));
    out->push_back(static_cast<char>(0x80 | (code_point & 0x3F)));
  } else if (code_point < 0x10000) {
    out->push_back(static_cast<char>(0xE0 | (code_point >> 12)));
    out->push_back(static_cast<char>(0x80 | ((code_point >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (code_point & 0x3F)));
  } else {
    out->push_back(static_cast<char>(0xF0 | (code_point >> 18)));
    out->push_back(static_cast<char>(0x80 | ((code_point >> 12) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | ((code_point >> 6) & 0x3F)));
    out->push_back(static_cast<char>(0x80 | (code_point & 0x3F)));
  }
}

// The UTF-16 code unit of an escape "_xHHHH_" starting at text[at], or nullopt.
std::optional<std::uint32_t> EscapeAt(std::string_view text, std::size_t at) {
  if (at + 7 > text.size() || text[at] != '_' || text[at + 1] != 'x' || text[at + 6] != '_') {
    return std::nullopt;
  }
  std::uint32_t unit = 0;
  const auto [end, ec] = std::from_chars(text.data() + at + 2, text.data() + at + 6, unit, 16);
  if (ec != std::errc() || end != text.data() + at + 6) return std::nullopt;
  return unit;
}

// Decodes the _xHHHH_ escapes of ST_Xstring (ECMA-376 Part 1, 22.9.2.19):
// "_x000D_" is a carriage return, "_x005F_" a literal underscore. A surrogate
// pair is two escapes; a lone surrogate is left as written.
std::string DecodeXstring(std::string_view text) {
  if (text.find("_x") == std::string_view::npos) return std::string(text);
  std::string out;
  out.reserve(text.size());
  for (std::size_t i = 0; i < text.size();) {
    const std::optional<std::uint32_t> unit = EscapeAt(text, i);
    if (!unit) {
      out.push_back(text[i++]);
      continue;
    }
    if (*unit >= 0xD800 && *unit <= 0xDBFF) {
      const std::optional<std::uint32_t> low = EscapeAt(text, i + 7);
      if (low && *low >= 0xDC00 && *low <= 0xDFFF) {
        AppendUtf8(0x10000 + ((*unit - 0xD800) << 10) + (*low - 0xDC00), &out);
        i += 14;
        continue;
      }
    }
    if (*unit >= 0xD800 && *unit <= 0xDFFF) {
      out.append(text.substr(i, 7));
    } else {
      AppendUtf8(*unit, &out);
    }
    i += 7;
  }
  return out;
}

// ---------------------------------------------------------------------------
// XML helpers: elements by local name, so "x:c" matches "c".

std::string_view LocalName(const char* name) {
  const std::string_view full(name);
  const std::size_t colon = full.rfind(':');
  return colon == std::string_view::npos ? full : full.substr(colon + 1);
}

pugi::xml_node Child(pugi::xml_node parent, std::string_view local_name) {
  for (pugi::xml_node child = parent.first_child(); child; child = child.next_sibling()) {
    if (child.type() == pugi::node_element && LocalName(child.name()) == local_name) return child;
  }
  return {};
}

// Text content of an element: its text and CDATA children joined.
std::string Text(pugi::xml_node node) {
  std::string text;
  for (pugi::xml_node child = node.first_child(); child; child = child.next_sibling()) {
    if (child.type() == pugi::node_pcdata || child.type() == pugi::node_cdata) {
      text += child.value();
    }
  }
  return text;
}

// The relationship id of an element (r:id, whatever the prefix is called).
std::string RelationshipId(pugi::xml_node node) {
  if (pugi::xml_attribute attribute = node.attribute("r:id")) return attribute.value();
  for (pugi::xml_attribute attribute : node.attributes()) {
    const std::string_view name(attribute.name());
    if (name.find(':') != std::string_view::npos && LocalName(attribute.name()) == "id") {
      return attribute.value();
    }
  }
  return {};
}

// The text of a string item (<si> or <is>): a plain <t>, or rich-text runs
// <r><t>..</t></r> joined; phonetic runs (<rPh>) are skipped.
std::string StringItemText(pugi::xml_node item) {
  std::string text;
  for (pugi::xml_node child = item.first_child(); child; child = child.next_sibling()) {
    if (child.type() != pugi::node_element) continue;
    const std::string_view name = LocalName(child.name());
    if (name == "t") {
      text += Text(child);
    } else if (name == "r") {
      text += Text(Child(child, "t"));
    }
  }
  return DecodeXstring(text);
}

// ---------------------------------------------------------------------------
// The zip archive, read from memory.

class ZipReader {
 public:
  ZipReader(std::string_view bytes, const std::string& file) : file_(file) {
    zip_error_t error;
    zip_error_init(&error);
    zip_source_t* source = zip_source_buffer_create(bytes.data(), bytes.size(), 0, &error);
    if (source != nullptr) {
      archive_ = zip_open_from_source(source, ZIP_RDONLY, &error);
      if (archive_ == nullptr) zip_source_free(source);
    }
    if (archive_ == nullptr) {
      const std::string reason = zip_error_strerror(&error);
      zip_error_fini(&error);
      Fail(file_, "corrupt or truncated zip archive (" + reason +
                      "); an .xlsx workbook must be a complete zip archive");
    }
    zip_error_fini(&error);
  }
  ~ZipReader() { zip_discard(archive_); }
  ZipReader(const ZipReader&) = delete;
  ZipReader& operator=(const ZipReader&) = delete;

  bool Has(const std::string& part) const { return Locate(part) >= 0; }

  // The first few part names, for messages about archives that are not workbooks.
  std::string SomePartNames() const {
    const zip_int64_t count = zip_get_num_entries(archive_, 0);
    std::string names;
    for (zip_int64_t i = 0; i < count && i < 5; ++i) {
      const char* name = zip_get_name(archive_, static_cast<zip_uint64_t>(i), 0);
      if (name == nullptr) continue;
      names += (names.empty() ? "" : ", ") + std::string(name);
    }
    if (count > 5) names += ", ...";
    return names.empty() ? std::string("nothing") : names;
  }

  // The uncompressed bytes of a part, or nullopt if the archive lacks it.
  std::optional<std::string> Read(const std::string& part) const {
    const zip_int64_t index = Locate(part);
    if (index < 0) return std::nullopt;
    zip_stat_t stat;
    zip_stat_init(&stat);
    if (zip_stat_index(archive_, static_cast<zip_uint64_t>(index), 0, &stat) != 0 ||
        (stat.valid & ZIP_STAT_SIZE) == 0) {
      Fail(file_, "cannot read part " + part + " of the zip archive: " + zip_strerror(archive_));
    }
    if (stat.size > kMaxPartBytes) {
      Fail(file_, "part " + part + " would unpack to " + std::to_string(stat.size) +
                      " bytes, more than the " + std::to_string(kMaxPartBytes >> 20) +
                      " MB this reader accepts (a damaged file or a zip bomb)");
    }
    zip_file_t* entry = zip_fopen_index(archive_, static_cast<zip_uint64_t>(index), 0);
    if (entry == nullptr) {
      Fail(file_, "cannot open part " + part + " of the zip archive: " + zip_strerror(archive_));
    }
    std::string data(static_cast<std::size_t>(stat.size), '\0');
    std::string problem;
    const zip_int64_t got = zip_fread(entry, data.data(), stat.size);
    if (got < 0) {
      problem = zip_file_strerror(entry);
    } else if (static_cast<zip_uint64_t>(got) != stat.size) {
      problem = "it holds " + std::to_string(got) + " bytes, not the " +
                std::to_string(stat.size) + " its header gives";
    } else {
      // Reading past the end lets libzip compare the CRC-32 and confirms the
      // part is no longer than its header says.
      char extra = 0;
      const zip_int64_t more = zip_fread(entry, &extra, 1);
      if (more < 0) {
        problem = zip_file_strerror(entry);
      } else if (more > 0) {
        problem = "it is longer than the " + std::to_string(stat.size) + " bytes its header gives";
      }
    }
    zip_fclose(entry);
    if (!problem.empty()) Fail(file_, "corrupt zip archive: cannot unpack part " + part + ": " + problem);
    return data;
  }

 private:
  zip_int64_t Locate(const std::string& part) const {
    return zip_name_locate(archive_, part.c_str(), ZIP_FL_NOCASE);
  }

  std::string file_;
  zip_t* archive_ = nullptr;
};

// Parses a part into doc, or throws naming the part and where in it the XML breaks.
void ParseXmlPart(const ZipReader& zip, const std::string& part, const std::string& file,
                  pugi::xml_document* doc) {
  std::optional<std::string> text = zip.Read(part);
  if (!text) Fail(file, "the workbook has no part " + part);
  // parse_ws_pcdata keeps strings that are all spaces (<t xml:space="preserve"> </t>).
  const pugi::xml_parse_result result =
      doc->load_buffer(text->data(), text->size(), pugi::parse_default | pugi::parse_ws_pcdata);
  if (!result) {
    const std::size_t offset =
        std::min(static_cast<std::size_t>(std::max<std::ptrdiff_t>(result.offset, 0)), text->size());
    int line = 1;
    std::size_t line_start = 0;
    for (std::size_t i = 0; i < offset; ++i) {
      if ((*text)[i] == '\n') {
        ++line;
        line_start = i + 1;
      }
    }
    Fail(file, "malformed XML in part " + part + " (line " + std::to_string(line) + ", column " +
                   std::to_string(offset - line_start + 1) + " of the part): " +
                   result.description());
  }
}

pugi::xml_node RootElement(const pugi::xml_document& doc, std::string_view local_name,
                           const std::string& part, const std::string& file) {
  const pugi::xml_node root = doc.document_element();
  if (!root || LocalName(root.name()) != local_name) {
    Fail(file, "part " + part + " should hold a <" + std::string(local_name) + "> element but holds <" +
                   std::string(root ? root.name() : "") + ">");
  }
  return root;
}

// ---------------------------------------------------------------------------
// Relationships (OPC): which part an r:id names.

struct Relationship {
  std::string id;
  std::string type;    // a URI; its last segment says what the target is
  std::string target;  // resolved part name, without a leading '/'
};

std::string FolderOf(const std::string& part) {
  const std::size_t slash = part.rfind('/');
  return slash == std::string::npos ? std::string() : part.substr(0, slash + 1);
}

// "xl/workbook.xml" -> "xl/_rels/workbook.xml.rels".
std::string RelationshipsPartOf(const std::string& part) {
  const std::size_t slash = part.rfind('/');
  const std::string name = slash == std::string::npos ? part : part.substr(slash + 1);
  return FolderOf(part) + "_rels/" + name + ".rels";
}

std::string PercentDecode(std::string_view text) {
  std::string out;
  for (std::size_t i = 0; i < text.size(); ++i) {
    unsigned value = 0;
    if (text[i] == '%' && i + 2 < text.size() &&
        std::from_chars(text.data() + i + 1, text.data() + i + 3, value, 16).ptr == text.data() + i + 3) {
      out.push_back(static_cast<char>(value));
      i += 2;
    } else {
      out.push_back(text[i]);
    }
  }
  return out;
}

// A relationship target as a part name: relative to the source part's folder,
// or from the package root when it starts with '/'; "." and ".." resolved.
std::string ResolveTarget(const std::string& source_part, const std::string& target) {
  const std::string decoded = PercentDecode(target);
  const std::string joined =
      (!decoded.empty() && decoded.front() == '/') ? decoded.substr(1) : FolderOf(source_part) + decoded;
  std::vector<std::string> segments;
  std::size_t start = 0;
  while (start <= joined.size()) {
    std::size_t slash = joined.find('/', start);
    if (slash == std::string::npos) slash = joined.size();
    const std::string segment = joined.substr(start, slash - start);
    if (segment == "..") {
      if (!segments.empty()) segments.pop_back();
    } else if (!segment.empty() && segment != ".") {
      segments.push_back(segment);
    }
    start = slash + 1;
  }
  std::string resolved;
  for (const std::string& segment : segments) resolved += (resolved.empty() ? "" : "/") + segment;
  return resolved;
}

// The relationships of a part; empty if it has no relationships part.
std::vector<Relationship> ReadRelationships(const ZipReader& zip, const std::string& source_part,
                                            const std::string& file) {
  const std::string rels_part = RelationshipsPartOf(source_part);
  std::vector<Relationship> relationships;
  if (!zip.Has(rels_part)) return relationships;
  pugi::xml_document doc;
  ParseXmlPart(zip, rels_part, file, &doc);
  const pugi::xml_node root = RootElement(doc, "Relationships", rels_part, file);
  for (pugi::xml_node node = root.first_child(); node; node = node.next_sibling()) {
    if (node.type() != pugi::node_element || LocalName(node.name()) != "Relationship") continue;
    if (EqualsIgnoreAsciiCase(node.attribute("TargetMode").value(), "External")) continue;
    relationships.push_back({node.attribute("Id").value(), node.attribute("Type").value(),
                             ResolveTarget(source_part, node.attribute("Target").value())});
  }
  return relationships;
}

// The relationship type URIs differ between Transitional and Strict OOXML but
// end in the same word.
bool HasType(const Relationship& relationship, std::string_view last_segment) {
  const std::string_view type = relationship.type;
  return type.size() > last_segment.size() && EndsWith(type, last_segment) &&
         type[type.size() - last_segment.size() - 1] == '/';
}

// ---------------------------------------------------------------------------
// The workbook and its sheets.

struct SheetEntry {
  std::string name;
  std::string relationship_id;
};

std::string WorkbookPart(const ZipReader& zip, const std::string& file) {
  for (const Relationship& relationship : ReadRelationships(zip, "", file)) {
    if (HasType(relationship, "officeDocument") && zip.Has(relationship.target)) {
      return relationship.target;
    }
  }
  const std::string conventional = "xl/workbook.xml";
  if (zip.Has(conventional)) return conventional;
  if (std::optional<std::string> mimetype = zip.Has("mimetype") ? zip.Read("mimetype") : std::nullopt;
      mimetype && mimetype->rfind("application/vnd.oasis.opendocument", 0) == 0) {
    Fail(file, "this is an OpenDocument file (" + *mimetype +
                   "), not an .xlsx workbook; save it in Excel (.xlsx) format");
  }
  Fail(file, "the zip archive has no xl/workbook.xml, so it is not an .xlsx workbook (it holds " +
                 zip.SomePartNames() + ")");
}

std::vector<std::string> ReadSharedStrings(const ZipReader& zip, const std::string& workbook_part,
                                           const std::vector<Relationship>& relationships,
                                           const std::string& file) {
  std::string part;
  for (const Relationship& relationship : relationships) {
    if (HasType(relationship, "sharedStrings")) part = relationship.target;
  }
  if (part.empty() || !zip.Has(part)) part = FolderOf(workbook_part) + "sharedStrings.xml";
  std::vector<std::string> strings;
  if (!zip.Has(part)) return strings;
  pugi::xml_document doc;
  ParseXmlPart(zip, part, file, &doc);
  const pugi::xml_node root = RootElement(doc, "sst", part, file);
  for (pugi::xml_node item = root.first_child(); item; item = item.next_sibling()) {
    if (item.type() == pugi::node_element && LocalName(item.name()) == "si") {
      strings.push_back(StringItemText(item));
    }
  }
  return strings;
}

// The power of ten of a decimal number's leading digit: 2 for "123.4",
// -3 for "0.00123", 0 for "1.5e0"; syntax already checked by from_chars.
long long DecimalMagnitude(std::string_view number) {
  const std::size_t e = number.find_first_of("eE");
  const std::string_view mantissa = number.substr(0, e);
  long long exponent = 0;
  if (e != std::string_view::npos) {
    std::string_view exponent_text = number.substr(e + 1);
    if (!exponent_text.empty() && exponent_text.front() == '+') exponent_text.remove_prefix(1);
    const auto [end, ec] = std::from_chars(exponent_text.data(),
                                           exponent_text.data() + exponent_text.size(), exponent);
    if (ec == std::errc::result_out_of_range) {
      exponent = exponent_text.front() == '-' ? -(1LL << 40) : (1LL << 40);
    }
  }
  const std::size_t point = std::min(mantissa.find('.'), mantissa.size());
  const std::size_t first = mantissa.find_first_of("123456789");
  if (first == std::string_view::npos) return -(1LL << 41);  // zero
  const long long magnitude = first < point ? static_cast<long long>(point - first) - 1
                                            : -static_cast<long long>(first - point);
  return magnitude + exponent;
}

// A number cell's value. Text beyond a double's range sets *too_large; a
// magnitude below the smallest subnormal (4.9e-324) reads as a signed zero,
// as it would when typed into a spreadsheet.
std::optional<double> ParseCellNumber(std::string_view text, bool* too_large) {
  if (!text.empty() && text.front() == '+') {
    text.remove_prefix(1);
    if (!text.empty() && (text.front() == '+' || text.front() == '-')) return std::nullopt;
  }
  double number = 0.0;
  const char* last = text.data() + text.size();
  const auto [end, ec] = std::from_chars(text.data(), last, number, std::chars_format::general);
  if (end != last || text.empty()) return std::nullopt;
  if (ec == std::errc::result_out_of_range) {
    if (DecimalMagnitude(text) >= 0) {
      *too_large = true;
      return std::nullopt;
    }
    return text.front() == '-' ? -0.0 : 0.0;
  }
  if (ec != std::errc() || !std::isfinite(number)) return std::nullopt;
  return number;
}

// The text a cell shows, or nullopt for a cell with no value.
std::optional<std::string> CellText(pugi::xml_node cell, const std::vector<std::string>& shared,
                                    const std::string& file, int row, int column) {
  const std::string_view type = cell.attribute("t").value();
  const auto fail = [&](const std::string& reason) {
    throw InputError(file, row, column, "cell " + CellName(row, column) + " " + reason);
  };
  const pugi::xml_node value_node = Child(cell, "v");
  if (type == "inlineStr") {
    if (const pugi::xml_node inline_string = Child(cell, "is")) {
      std::string text = StringItemText(inline_string);
      if (text.empty()) return std::nullopt;
      return text;
    }
  }
  if (!value_node) return std::nullopt;
  const std::string raw = Text(value_node);
  const std::string_view trimmed = TrimXmlSpace(raw);
  if (trimmed.empty()) return std::nullopt;

  if (type.empty() || type == "n") {
    bool too_large = false;
    const std::optional<double> number = ParseCellNumber(trimmed, &too_large);
    if (too_large) {
      fail("holds " + Quoted(trimmed) + ", beyond the range of a double (about 1.8e308)");
    }
    if (!number) fail("holds " + Quoted(trimmed) + " where a number was expected");
    char buffer[32];
    const auto written = std::to_chars(buffer, buffer + sizeof(buffer), *number);
    return std::string(buffer, written.ptr);
  }
  if (type == "s") {
    std::uint64_t index = 0;
    const auto [end, ec] = std::from_chars(trimmed.data(), trimmed.data() + trimmed.size(), index);
    if (ec == std::errc::result_out_of_range) {
      index = UINT64_MAX;
    } else if (ec != std::errc() || end != trimmed.data() + trimmed.size()) {
      fail("holds " + Quoted(trimmed) + " where a shared-string index was expected");
    }
    if (index >= shared.size()) {
      fail("refers to shared string " + std::string(trimmed) + ", but the workbook has " +
           std::to_string(shared.size()) + " shared strings (index out of range)");
    }
    if (shared[index].empty()) return std::nullopt;
    return shared[index];
  }
  if (type == "str" || type == "inlineStr") return DecodeXstring(raw);
  if (type == "b") {
    if (trimmed == "1" || trimmed == "true") return std::string("TRUE");
    if (trimmed == "0" || trimmed == "false") return std::string("FALSE");
    fail("holds " + Quoted(trimmed) + " where a boolean (0 or 1) was expected");
  }
  if (type == "e" || type == "d") return std::string(trimmed);
  fail("has unknown type t=" + Quoted(type) + " (expected n, s, str, inlineStr, b, e or d)");
  return std::nullopt;
}

std::unique_ptr<CellTable> ReadCells(const pugi::xml_node worksheet,
                                     const std::vector<std::string>& shared, const std::string& file) {
  std::vector<std::vector<std::string>> rows;  // rows[i] is sheet row i + 1
  std::size_t cell_slots = 0;
  int previous_row = 0;
  const pugi::xml_node sheet_data = Child(worksheet, "sheetData");
  for (pugi::xml_node row_node = sheet_data.first_child(); row_node;
       row_node = row_node.next_sibling()) {
    if (row_node.type() != pugi::node_element || LocalName(row_node.name()) != "row") continue;
    int row = previous_row + 1;
    if (const pugi::xml_attribute r = row_node.attribute("r")) {
      const std::optional<int> parsed = ParsePositiveInt(r.value());
      if (!parsed) {
        throw InputError(file, previous_row + 1, 0,
                         "row element has r=" + Quoted(r.value()) + "; expected a row number");
      }
      row = *parsed;
    }
    if (row > kMaxRows) {
      throw InputError(file, row, 0,
                       "row " + std::to_string(row) + " is beyond Excel's limit of 1,048,576 rows");
    }
    if (row <= previous_row) {
      throw InputError(file, row, 0,
                       "row " + std::to_string(row) + " comes after row " +
                           std::to_string(previous_row) + "; rows must be in ascending order");
    }
    previous_row = row;
    if (rows.size() < static_cast<std::size_t>(row)) rows.resize(static_cast<std::size_t>(row));
    std::vector<std::string>& cells = rows[static_cast<std::size_t>(row) - 1];

    int previous_column = 0;
    for (pugi::xml_node cell = row_node.first_child(); cell; cell = cell.next_sibling()) {
      if (cell.type() != pugi::node_element || LocalName(cell.name()) != "c") continue;
      int column = previous_column + 1;
      if (const pugi::xml_attribute r = cell.attribute("r")) {
        int ref_row = 0;
        if (!ParseCellReference(r.value(), &column, &ref_row)) {
          throw InputError(file, row, previous_column + 1,
                           "cell reference " + Quoted(r.value()) + " is not a reference like B7");
        }
        if (ref_row != row) {
          throw InputError(file, row, column,
                           "cell " + std::string(r.value()) + " lies inside row " +
                               std::to_string(row) + "; the workbook is damaged");
        }
      }
      if (column > kMaxColumns) {
        throw InputError(file, row, column,
                         "column " + ColumnName(column) +
                             " is beyond Excel's limit of 16,384 columns (A to XFD)");
      }
      if (column <= previous_column) {
        throw InputError(file, row, column,
                         "cell " + CellName(row, column) + " comes after " +
                             CellName(row, previous_column) + "; cells must be in column order");
      }
      previous_column = column;
      std::optional<std::string> text = CellText(cell, shared, file, row, column);
      if (!text) continue;
      if (cells.size() < static_cast<std::size_t>(column)) {
        cell_slots += static_cast<std::size_t>(column) - cells.size();
        if (cell_slots > kMaxCellSlots) {
          throw InputError(file, row, column,
                           "the sheet has more than " + std::to_string(kMaxCellSlots) +
                               " cells (counting empty ones between them); too large to read");
        }
        cells.resize(static_cast<std::size_t>(column));
      }
      cells[static_cast<std::size_t>(column) - 1] = std::move(*text);
    }
  }
  auto table = std::make_unique<CellTable>();
  for (std::size_t i = 0; i < rows.size(); ++i) {
    table->AddRow(std::move(rows[i]), static_cast<int>(i) + 1);
  }
  return table;
}

constexpr std::string_view kOle2Signature("\xD0\xCF\x11\xE0\xA1\xB1\x1A\xE1", 8);

}  // namespace

bool LooksLikeZip(std::string_view bytes) {
  return bytes.size() >= 4 && bytes.substr(0, 4) == std::string_view("PK\x03\x04", 4);
}

std::unique_ptr<CellTable> ReadXlsxSheet(std::string_view bytes, const std::string& file,
                                         const std::string& sheet, std::string* sheet_name_used) {
  if (bytes.empty()) Fail(file, "the file is empty; expected an .xlsx workbook");
  if (bytes.substr(0, kOle2Signature.size()) == kOle2Signature) {
    Fail(file, "this is an OLE2 compound file (a legacy .xls workbook or a password-protected "
               "workbook), not an .xlsx workbook; save it as .xlsx without a password");
  }
  if (!LooksLikeZip(bytes)) {
    Fail(file, "not an .xlsx workbook: expected a zip archive, which starts with the bytes "
               "PK\\x03\\x04");
  }
  const ZipReader zip(bytes, file);
  const std::string workbook_part = WorkbookPart(zip, file);
  const std::vector<Relationship> relationships = ReadRelationships(zip, workbook_part, file);

  std::vector<SheetEntry> sheets;
  {
    pugi::xml_document doc;
    ParseXmlPart(zip, workbook_part, file, &doc);
    const pugi::xml_node root = RootElement(doc, "workbook", workbook_part, file);
    const pugi::xml_node sheets_node = Child(root, "sheets");
    for (pugi::xml_node node = sheets_node.first_child(); node; node = node.next_sibling()) {
      if (node.type() == pugi::node_element && LocalName(node.name()) == "sheet") {
        sheets.push_back({node.attribute("name").value(), RelationshipId(node)});
      }
    }
  }
  if (sheets.empty()) Fail(file, "the workbook lists no sheets in " + workbook_part);

  const auto find_relationship = [&](const SheetEntry& entry) -> const Relationship* {
    for (const Relationship& relationship : relationships) {
      if (relationship.id == entry.relationship_id) return &relationship;
    }
    return nullptr;
  };
  // A relationship of no stated type is taken for a worksheet.
  const auto is_worksheet = [&](const SheetEntry& entry) {
    const Relationship* relationship = find_relationship(entry);
    return relationship == nullptr || relationship->type.empty() || HasType(*relationship, "worksheet");
  };
  std::string sheet_list;
  for (const SheetEntry& entry : sheets) {
    sheet_list += (sheet_list.empty() ? "" : ", ") + Quoted(entry.name);
  }

  const SheetEntry* chosen = nullptr;
  if (sheet.empty()) {
    for (const SheetEntry& entry : sheets) {
      if (is_worksheet(entry)) {
        chosen = &entry;
        break;
      }
    }
    if (chosen == nullptr) {
      Fail(file, "the workbook has no worksheet with cells, only chart or other sheets: " + sheet_list);
    }
  } else {
    for (const SheetEntry& entry : sheets) {
      if (entry.name == sheet) chosen = &entry;
    }
    for (const SheetEntry& entry : sheets) {
      if (chosen == nullptr && EqualsIgnoreAsciiCase(entry.name, sheet)) chosen = &entry;
    }
    if (chosen == nullptr) {
      Fail(file, "the workbook has no sheet named " + Quoted(sheet) + "; its sheets are " + sheet_list);
    }
    if (!is_worksheet(*chosen)) {
      Fail(file, "sheet " + Quoted(chosen->name) + " is a chart or other sheet, not a worksheet with cells");
    }
  }
  const Relationship* relationship = find_relationship(*chosen);
  if (relationship == nullptr) {
    Fail(file, "sheet " + Quoted(chosen->name) + " names relationship " +
                   Quoted(chosen->relationship_id) + ", which " +
                   RelationshipsPartOf(workbook_part) + " does not hold");
  }
  if (!zip.Has(relationship->target)) {
    Fail(file, "sheet " + Quoted(chosen->name) + " is stored in part " + relationship->target +
                   ", which the zip archive does not hold");
  }

  const std::vector<std::string> shared = ReadSharedStrings(zip, workbook_part, relationships, file);
  pugi::xml_document doc;
  ParseXmlPart(zip, relationship->target, file, &doc);
  const pugi::xml_node worksheet = RootElement(doc, "worksheet", relationship->target, file);
  std::unique_ptr<CellTable> table = ReadCells(worksheet, shared, file);
  if (sheet_name_used != nullptr) *sheet_name_used = chosen->name;
  return table;
}

}  // namespace ratewell::detail
