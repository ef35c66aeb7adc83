// Reading .xlsx worksheets from workbooks built by hand in each test, part by
// part, so every case shows exactly the XML the reader meets. The XML follows
// ECMA-376 Part 1 (SpreadsheetML) and Part 2 (Open Packaging Conventions).
#include "importers/detail/xlsx.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>
#include <zip.h>

#include <cstring>
#include <memory>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "importers/input_error.h"

namespace ratewell::detail {
namespace {

using ::testing::ElementsAre;
using ::testing::HasSubstr;
using Parts = std::vector<std::pair<std::string, std::string>>;

// A zip archive of the given parts, built in memory with libzip. stored = true
// keeps the data uncompressed, so a test can find and patch its bytes.
std::string ZipBytes(const Parts& parts, bool stored = false) {
  zip_error_t error;
  zip_error_init(&error);
  zip_source_t* buffer = zip_source_buffer_create(nullptr, 0, 0, &error);
  if (buffer == nullptr) throw std::runtime_error("zip_source_buffer_create failed");
  zip_source_keep(buffer);
  zip_t* archive = zip_open_from_source(buffer, ZIP_TRUNCATE, &error);
  if (archive == nullptr) throw std::runtime_error("zip_open_from_source failed");
  for (const auto& [name, data] : parts) {
    zip_source_t* source = zip_source_buffer(archive, data.data(), data.size(), 0);
    const zip_int64_t index = zip_file_add(archive, name.c_str(), source, ZIP_FL_ENC_UTF_8);
    if (index < 0) throw std::runtime_error("zip_file_add failed for " + name);
    zip_set_file_compression(archive, static_cast<zip_uint64_t>(index),
                             stored ? ZIP_CM_STORE : ZIP_CM_DEFLATE, 0);
  }
  if (zip_close(archive) != 0) throw std::runtime_error("zip_close failed");
  zip_source_open(buffer);
  zip_source_seek(buffer, 0, SEEK_END);
  const zip_int64_t size = zip_source_tell(buffer);
  zip_source_seek(buffer, 0, SEEK_SET);
  std::string bytes(static_cast<std::size_t>(size), '\0');
  zip_source_read(buffer, bytes.data(), static_cast<zip_uint64_t>(size));
  zip_source_close(buffer);
  zip_source_free(buffer);
  zip_error_fini(&error);
  return bytes;
}

constexpr char kMain[] = "http://schemas.openxmlformats.org/spreadsheetml/2006/main";
constexpr char kRelationshipType[] =
    "http://schemas.openxmlformats.org/officeDocument/2006/relationships/";

std::string Xml(const std::string& body) {
  return "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n" + body;
}

std::string SheetXml(const std::string& sheet_data) {
  return Xml(std::string("<worksheet xmlns=\"") + kMain + "\"><sheetData>" + sheet_data +
             "</sheetData></worksheet>");
}

std::string SharedStringsXml(const std::vector<std::string>& items) {
  std::string body = std::string("<sst xmlns=\"") + kMain + "\">";
  for (const std::string& item : items) body += "<si>" + item + "</si>";
  return Xml(body + "</sst>");
}

struct SheetSpec {
  std::string name;
  std::string target;  // as written in the workbook's relationships part
  std::string part;    // the zip entry name
  std::string xml;
};

// A workbook of the given sheets, plus optional shared strings.
std::string Workbook(const std::vector<SheetSpec>& sheets, const std::string& shared_strings = "") {
  std::string workbook = std::string("<workbook xmlns=\"") + kMain +
                         "\" xmlns:r=\"http://schemas.openxmlformats.org/officeDocument/2006/"
                         "relationships\"><sheets>";
  std::string rels =
      "<Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\">";
  Parts parts;
  for (std::size_t i = 0; i < sheets.size(); ++i) {
    const std::string id = "rId" + std::to_string(i + 7);
    workbook += "<sheet name=\"" + sheets[i].name + "\" sheetId=\"" + std::to_string(i + 1) +
                "\" r:id=\"" + id + "\"/>";
    rels += "<Relationship Id=\"" + id + "\" Type=\"" + kRelationshipType + "worksheet\" Target=\"" +
            sheets[i].target + "\"/>";
    parts.emplace_back(sheets[i].part, sheets[i].xml);
  }
  if (!shared_strings.empty()) {
    rels += std::string("<Relationship Id=\"rId99\" Type=\"") + kRelationshipType +
            "sharedStrings\" Target=\"strings/table.xml\"/>";
    parts.emplace_back("xl/strings/table.xml", shared_strings);
  }
  parts.emplace_back("xl/workbook.xml", Xml(workbook + "</sheets></workbook>"));
  parts.emplace_back("xl/_rels/workbook.xml.rels", Xml(rels + "</Relationships>"));
  parts.emplace_back(
      "_rels/.rels",
      Xml(std::string("<Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/"
                      "relationships\"><Relationship Id=\"rId1\" Type=\"") +
          kRelationshipType + "officeDocument\" Target=\"xl/workbook.xml\"/></Relationships>"));
  return ZipBytes(parts);
}

// A workbook whose one sheet, "Plate", holds sheet_data, stored deliberately
// under a part name other than sheet1.xml.
std::string OneSheetWorkbook(const std::string& sheet_data, const std::string& shared_strings = "") {
  return Workbook({{"Plate", "worksheets/plate_reads.xml", "xl/worksheets/plate_reads.xml",
                    SheetXml(sheet_data)}},
                  shared_strings);
}

std::vector<std::vector<std::string>> Rows(const CellTable& table) {
  std::vector<std::vector<std::string>> rows;
  std::vector<std::string_view> cells;
  for (std::size_t i = 0; i < table.num_rows(); ++i) {
    table.GetRow(i, &cells);
    rows.emplace_back(cells.begin(), cells.end());
  }
  return rows;
}

std::vector<std::vector<std::string>> ReadRows(const std::string& bytes, const std::string& sheet = "",
                                               std::string* used = nullptr) {
  return Rows(*ReadXlsxSheet(bytes, "plate.xlsx", sheet, used));
}

// The InputError a read throws; fails the test if none is thrown.
InputError ReadError(const std::string& bytes, const std::string& sheet = "") {
  try {
    ReadXlsxSheet(bytes, "plate.xlsx", sheet, nullptr);
  } catch (const InputError& error) {
    return error;
  }
  ADD_FAILURE() << "no InputError was thrown";
  return InputError("", 0, 0, "");
}

using Row = std::vector<std::string>;

TEST(XlsxLooksLikeZip, RecognisesTheLocalFileHeaderSignature) {
  EXPECT_TRUE(LooksLikeZip(std::string_view("PK\x03\x04rest", 8)));
  EXPECT_TRUE(LooksLikeZip(OneSheetWorkbook("")));
  EXPECT_FALSE(LooksLikeZip("PK"));
  EXPECT_FALSE(LooksLikeZip(""));
  EXPECT_FALSE(LooksLikeZip("Time,A1,A2\n0,1.2,1.3\n"));
}

TEST(ReadXlsxSheet, ReadsNumbersAndSharedStringsPlacedByReference) {
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\" t=\"s\"><v>0</v></c><c r=\"B1\" t=\"s\"><v>1</v></c></row>"
      "<row r=\"2\"><c r=\"A2\"><v>30</v></c><c r=\"B2\"><v>1.254</v></c></row>"
      "<row r=\"3\"><c r=\"A3\"><v>60</v></c><c r=\"C3\"><v>-0.5</v></c></row>",
      SharedStringsXml({"<t>Time (s)</t>", "<t>A1</t>"}));
  std::string used;
  EXPECT_THAT(ReadRows(bytes, "", &used),
              ElementsAre(Row{"Time (s)", "A1"}, Row{"30", "1.254"}, Row{"60", "", "-0.5"}));
  EXPECT_EQ(used, "Plate");
}

TEST(ReadXlsxSheet, LeadingAndMissingRowsBecomeEmptyRowsSoLineNumbersStayTrue) {
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"3\"><c r=\"C3\"><v>1</v></c></row>"
      "<row r=\"6\"><c r=\"A6\"><v>2</v></c></row>");
  const std::unique_ptr<CellTable> table = ReadXlsxSheet(bytes, "plate.xlsx", "", nullptr);
  ASSERT_EQ(table->num_rows(), 6u);
  for (std::size_t i = 0; i < 6; ++i) EXPECT_EQ(table->line_number(i), static_cast<int>(i) + 1);
  EXPECT_THAT(Rows(*table), ElementsAre(Row{}, Row{}, Row{"", "", "1"}, Row{}, Row{}, Row{"2"}));
}

TEST(ReadXlsxSheet, NumbersComeBackInShortestRoundTripForm) {
  // Excel writes up to 17 significant digits; 0.1 written in full is still 0.1.
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\"><v>0.10000000000000001</v></c><c r=\"B1\"><v>1.5E-3</v></c>"
      "<c r=\"C1\"><v>42</v></c><c r=\"D1\"><v>+7</v></c><c r=\"E1\" t=\"n\"><v> 2.50 </v></c>"
      "<c r=\"F1\"><v>1e21</v></c></row>");
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"0.1", "0.0015", "42", "7", "2.5", "1e+21"}));
}

TEST(ReadXlsxSheet, NumbersBelowTheSmallestSubnormalReadAsSignedZero) {
  // 4.9e-324 is the smallest positive double (IEEE 754 binary64).
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\"><v>1e-400</v></c><c r=\"B1\"><v>-0.00001e-320</v></c>"
      "<c r=\"C1\"><v>4.9406564584124654e-324</v></c></row>");
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"0", "-0", "5e-324"}));
}

TEST(ReadXlsxSheetErrors, NumberBeyondTheRangeOfADouble) {
  // The largest double, 1.7976931348623157e308, rounded to 16 digits rounds up
  // past it (a generator that writes 16 significant digits produces this).
  const InputError error = ReadError(
      OneSheetWorkbook("<row r=\"3\"><c r=\"B3\"><v>1.797693134862316e+308</v></c></row>"));
  EXPECT_EQ(error.line(), 3);
  EXPECT_EQ(error.column(), 2);
  EXPECT_EQ(error.reason(),
            "cell B3 holds '1.797693134862316e+308', beyond the range of a double (about 1.8e308)");
  EXPECT_THAT(ReadError(OneSheetWorkbook("<row r=\"1\"><c r=\"A1\"><v>-1e999999999999</v></c></row>"))
                  .reason(),
              HasSubstr("beyond the range of a double"));
}

TEST(ReadXlsxSheet, DatesAndTimesStayAsSerialNumbers) {
  // 45292.5 is 2024-01-01 12:00 in the 1900 date system (openpyxl 3.0.9 from
  // Debian writes this value for that date-time, checked by hand); the style
  // (s="1", a date format in a real workbook) is not looked at.
  const std::string bytes =
      OneSheetWorkbook("<row r=\"1\"><c r=\"A1\" s=\"1\"><v>45292.5</v></c>"
                       "<c r=\"B1\" s=\"2\"><v>0.000694444444444444</v></c></row>");
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"45292.5", "0.000694444444444444"}));
}

TEST(ReadXlsxSheet, ReadsInlineStrings) {
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\" t=\"inlineStr\"><is><t>Read 1 &amp; 2</t></is></c>"
      "<c r=\"B1\" t=\"inlineStr\"><is><r><t>NADH </t></r><r><rPr><b/></rPr><t>µM</t></r></is></c>"
      "</row>");
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"Read 1 & 2", "NADH µM"}));
}

TEST(ReadXlsxSheet, CellsAndRowsWithoutReferencesFollowOneAnother) {
  const std::string bytes = OneSheetWorkbook(
      "<row><c><v>1</v></c><c><v>2</v></c><c r=\"E1\"><v>5</v></c><c><v>6</v></c></row>"
      "<row><c><v>7</v></c></row>"
      "<row r=\"4\"><c><v>8</v></c></row>");
  const std::unique_ptr<CellTable> table = ReadXlsxSheet(bytes, "plate.xlsx", "", nullptr);
  EXPECT_THAT(Rows(*table),
              ElementsAre(Row{"1", "2", "", "", "5", "6"}, Row{"7"}, Row{}, Row{"8"}));
  EXPECT_EQ(table->line_number(3), 4);
}

TEST(ReadXlsxSheet, FindsTheSheetThroughRelationshipsWhateverItsPartIsCalled) {
  const std::string first = SheetXml("<row r=\"1\"><c r=\"A1\"><v>1</v></c></row>");
  const std::string second = SheetXml("<row r=\"1\"><c r=\"A1\"><v>2</v></c></row>");
  const std::string third = SheetXml("<row r=\"1\"><c r=\"A1\"><v>3</v></c></row>");
  // Relative to xl/, absolute from the package root, and relative with "..".
  const std::string bytes =
      Workbook({{"Kinetics", "sheets/first.xml", "xl/sheets/first.xml", first},
                {"Layout", "/xl/other/second.xml", "xl/other/second.xml", second},
                {"Notes", "../extra/third.xml", "extra/third.xml", third}});
  std::string used;
  EXPECT_THAT(ReadRows(bytes, "", &used), ElementsAre(Row{"1"}));
  EXPECT_EQ(used, "Kinetics");
  EXPECT_THAT(ReadRows(bytes, "Layout", &used), ElementsAre(Row{"2"}));
  EXPECT_EQ(used, "Layout");
  EXPECT_THAT(ReadRows(bytes, "Notes", &used), ElementsAre(Row{"3"}));
}

TEST(ReadXlsxSheet, SheetNamesMatchIgnoringCaseWhenNoExactMatch) {
  const std::string bytes = Workbook(
      {{"Plate 1", "a.xml", "xl/a.xml", SheetXml("<row r=\"1\"><c r=\"A1\"><v>1</v></c></row>")},
       {"PLATE 1b", "b.xml", "xl/b.xml", SheetXml("<row r=\"1\"><c r=\"A1\"><v>2</v></c></row>")}});
  std::string used;
  EXPECT_THAT(ReadRows(bytes, "plate 1B", &used), ElementsAre(Row{"2"}));
  EXPECT_EQ(used, "PLATE 1b");
}

TEST(ReadXlsxSheet, BooleansAndErrorCellsComeThroughAsText) {
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\" t=\"b\"><v>1</v></c><c r=\"B1\" t=\"b\"><v>0</v></c>"
      "<c r=\"C1\" t=\"e\"><v>#N/A</v></c><c r=\"D1\" t=\"e\"><f>1/0</f><v>#DIV/0!</v></c></row>");
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"TRUE", "FALSE", "#N/A", "#DIV/0!"}));
}

TEST(ReadXlsxSheet, FormulaCellsGiveTheirCachedValue) {
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\"><f>B1*2</f><v>2.5</v></c><c r=\"B1\"><v>1.25</v></c>"
      "<c r=\"C1\" t=\"str\"><f>\"A\"&amp;\"1\"</f><v>A1</v></c>"
      "<c r=\"D1\"><f>B1+1</f></c></row>");  // D1 was never calculated: empty
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"2.5", "1.25", "A1"}));
}

TEST(ReadXlsxSheet, RichTextSharedStringsAreJoinedWithoutPhoneticRuns) {
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\" t=\"s\"><v>0</v></c><c r=\"B1\" t=\"s\"><v>1</v></c></row>",
      SharedStringsXml({"<r><t>Temp </t></r><r><rPr><i/></rPr><t>25 °C</t></r>",
                        "<t>Well</t><rPh sb=\"0\" eb=\"1\"><t>ignored</t></rPh>"}));
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"Temp 25 °C", "Well"}));
}

TEST(ReadXlsxSheet, DecodesEscapedCharactersInStrings) {
  // ECMA-376 Part 1, 22.9.2.19 (ST_Xstring): _xHHHH_ is a UTF-16 code unit and
  // _x005F_ a literal underscore; U+1F9EA (test tube) is a surrogate pair.
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"1\"><c r=\"A1\" t=\"s\"><v>0</v></c><c r=\"B1\" t=\"s\"><v>1</v></c>"
      "<c r=\"C1\" t=\"s\"><v>2</v></c></row>",
      SharedStringsXml({"<t>line_x000D_end</t>", "<t>_x005F_x0041_</t>",
                        "<t>_xD83E__xDDEA_</t>"}));
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"line\rend", "_x0041_", "\xF0\x9F\xA7\xAA"}));
}

TEST(ReadXlsxSheet, ReadsPrefixedElementNames) {
  // Some generators bind the main namespace to a prefix instead of the default.
  const std::string sheet = Xml(std::string("<x:worksheet xmlns:x=\"") + kMain +
                                "\"><x:sheetData><x:row r=\"1\"><x:c r=\"B1\"><x:v>3</x:v></x:c>"
                                "</x:row></x:sheetData></x:worksheet>");
  const std::string bytes = Workbook({{"Plate", "worksheets/p.xml", "xl/worksheets/p.xml", sheet}});
  EXPECT_THAT(ReadRows(bytes), ElementsAre(Row{"", "3"}));
}

TEST(ReadXlsxSheet, KeepsStringsThatAreOnlySpaces) {
  // Were the spaces dropped, B1 would be an empty cell and the row one cell long.
  const std::string bytes =
      OneSheetWorkbook("<row r=\"1\"><c r=\"A1\"><v>1</v></c><c r=\"B1\" t=\"s\"><v>0</v></c></row>",
                       SharedStringsXml({"<t xml:space=\"preserve\">  </t>"}));
  const std::unique_ptr<CellTable> table = ReadXlsxSheet(bytes, "plate.xlsx", "", nullptr);
  std::vector<std::string_view> cells;
  table->GetRow(0, &cells);
  EXPECT_EQ(cells.size(), 2u);
}

TEST(ReadXlsxSheet, EmptySheetGivesNoRows) {
  EXPECT_TRUE(ReadRows(OneSheetWorkbook("")).empty());
}

// ---------------------------------------------------------------------------
// Bad input: each case names what is wrong.

TEST(ReadXlsxSheetErrors, EmptyInput) {
  const InputError error = ReadError("");
  EXPECT_EQ(error.file(), "plate.xlsx");
  EXPECT_EQ(error.line(), 0);
  EXPECT_THAT(error.reason(), HasSubstr("the file is empty"));
}

TEST(ReadXlsxSheetErrors, NotAZip) {
  EXPECT_THAT(ReadError("Time,A1\n0,1.2\n").reason(),
              HasSubstr("not an .xlsx workbook: expected a zip archive"));
}

TEST(ReadXlsxSheetErrors, LegacyOrEncryptedWorkbookIsNamed) {
  const std::string ole2("\xD0\xCF\x11\xE0\xA1\xB1\x1A\xE1" "rest of the file", 24);
  EXPECT_THAT(ReadError(ole2).reason(), HasSubstr("legacy .xls workbook or a password-protected"));
}

TEST(ReadXlsxSheetErrors, TruncatedZip) {
  const std::string bytes = OneSheetWorkbook("<row r=\"1\"><c r=\"A1\"><v>1</v></c></row>");
  const InputError error = ReadError(bytes.substr(0, bytes.size() / 2));
  EXPECT_THAT(error.reason(), HasSubstr("corrupt or truncated zip archive"));
  EXPECT_THAT(error.what(), HasSubstr("plate.xlsx: corrupt or truncated"));
}

TEST(ReadXlsxSheetErrors, CorruptCompressedDataIsCaughtByTheChecksum) {
  // Stored (uncompressed) parts, so the sheet's text can be found and changed:
  // the CRC-32 in the zip headers no longer matches.
  const std::string sheet = SheetXml("<row r=\"1\"><c r=\"A1\"><v>1.25</v></c></row>");
  Parts parts = {{"xl/workbook.xml",
                  Xml(std::string("<workbook xmlns=\"") + kMain +
                      "\" xmlns:r=\"r\"><sheets><sheet name=\"S\" r:id=\"rId1\"/></sheets></workbook>")},
                 {"xl/_rels/workbook.xml.rels",
                  Xml("<Relationships><Relationship Id=\"rId1\" Target=\"worksheets/sheet1.xml\"/>"
                      "</Relationships>")},
                 {"xl/worksheets/sheet1.xml", sheet}};
  std::string bytes = ZipBytes(parts, /*stored=*/true);
  const std::size_t at = bytes.find("1.25");
  ASSERT_NE(at, std::string::npos);
  bytes[at] = '7';
  EXPECT_THAT(ReadError(bytes).reason(),
              HasSubstr("corrupt zip archive: cannot unpack part xl/worksheets/sheet1.xml"));
}

TEST(ReadXlsxSheetErrors, ZipWithoutWorkbook) {
  const std::string bytes = ZipBytes({{"word/document.xml", Xml("<document/>")}});
  const InputError error = ReadError(bytes);
  EXPECT_THAT(error.reason(), HasSubstr("the zip archive has no xl/workbook.xml"));
  EXPECT_THAT(error.reason(), HasSubstr("word/document.xml"));
}

TEST(ReadXlsxSheetErrors, OpenDocumentSpreadsheetIsNamed) {
  const std::string bytes =
      ZipBytes({{"mimetype", "application/vnd.oasis.opendocument.spreadsheet"},
                {"content.xml", Xml("<office:document-content/>")}});
  EXPECT_THAT(ReadError(bytes).reason(), HasSubstr("this is an OpenDocument file"));
}

TEST(ReadXlsxSheetErrors, MissingSheetPart) {
  std::string bytes = Workbook({{"Plate", "worksheets/gone.xml", "xl/worksheets/other.xml",
                                 SheetXml("")}});
  EXPECT_THAT(ReadError(bytes).reason(),
              HasSubstr("sheet 'Plate' is stored in part xl/worksheets/gone.xml, which the zip "
                        "archive does not hold"));
}

TEST(ReadXlsxSheetErrors, CorruptXmlInTheSheetNamesThePart) {
  const std::string bytes = Workbook(
      {{"Plate", "worksheets/sheet1.xml", "xl/worksheets/sheet1.xml",
        Xml(std::string("<worksheet xmlns=\"") + kMain +
            "\"><sheetData>\n<row r=\"1\"><c r=\"A1\"><v>1</v></row></sheetData></worksheet>")}});
  const InputError error = ReadError(bytes);
  EXPECT_THAT(error.reason(), HasSubstr("malformed XML in part xl/worksheets/sheet1.xml (line 3"));
  EXPECT_THAT(error.reason(), HasSubstr("Start-end tags mismatch"));  // pugixml's description
}

TEST(ReadXlsxSheetErrors, SharedStringIndexOutOfRange) {
  const std::string bytes = OneSheetWorkbook(
      "<row r=\"4\"><c r=\"B4\" t=\"s\"><v>2</v></c></row>",
      SharedStringsXml({"<t>a</t>", "<t>b</t>"}));
  const InputError error = ReadError(bytes);
  EXPECT_EQ(error.line(), 4);
  EXPECT_EQ(error.column(), 2);
  EXPECT_EQ(error.reason(),
            "cell B4 refers to shared string 2, but the workbook has 2 shared strings (index out "
            "of range)");
  EXPECT_STREQ(error.what(),
               "plate.xlsx:4:2: cell B4 refers to shared string 2, but the workbook has 2 shared "
               "strings (index out of range)");
}

TEST(ReadXlsxSheetErrors, UnknownSheetListsTheSheetsThatExist) {
  const std::string bytes =
      Workbook({{"Kinetics", "a.xml", "xl/a.xml", SheetXml("")},
                {"Layout", "b.xml", "xl/b.xml", SheetXml("")}});
  EXPECT_EQ(ReadError(bytes, "Plate 2").reason(),
            "the workbook has no sheet named 'Plate 2'; its sheets are 'Kinetics', 'Layout'");
}

TEST(ReadXlsxSheetErrors, TextInANumberCell) {
  const InputError error =
      ReadError(OneSheetWorkbook("<row r=\"2\"><c r=\"C2\"><v>1.2.3</v></c></row>"));
  EXPECT_EQ(error.line(), 2);
  EXPECT_EQ(error.column(), 3);
  EXPECT_THAT(error.reason(), HasSubstr("cell C2 holds '1.2.3' where a number was expected"));
}

TEST(ReadXlsxSheetErrors, NonFiniteNumber) {
  for (const char* text : {"nan", "inf", "-INF", "+-1", "1e", "0x10", "1,5"}) {
    EXPECT_THAT(ReadError(OneSheetWorkbook(std::string("<row r=\"1\"><c r=\"A1\"><v>") + text +
                                           "</v></c></row>"))
                    .reason(),
                HasSubstr("where a number was expected"))
        << text;
  }
}

TEST(ReadXlsxSheetErrors, RowBeyondExcelsLimit) {
  const InputError error =
      ReadError(OneSheetWorkbook("<row r=\"1048577\"><c r=\"A1048577\"><v>1</v></c></row>"));
  EXPECT_EQ(error.line(), 1048577);
  EXPECT_THAT(error.reason(), HasSubstr("beyond Excel's limit of 1,048,576 rows"));
}

TEST(ReadXlsxSheetErrors, ColumnBeyondExcelsLimit) {
  // XFD is column 16,384, the last; XFE is one more.
  EXPECT_THAT(ReadRows(OneSheetWorkbook("<row r=\"1\"><c r=\"XFD1\"><v>1</v></c></row>"))[0].size(),
              16384u);
  const InputError error = ReadError(OneSheetWorkbook("<row r=\"1\"><c r=\"XFE1\"><v>1</v></c></row>"));
  EXPECT_EQ(error.column(), 16385);
  EXPECT_THAT(error.reason(), HasSubstr("column XFE is beyond Excel's limit of 16,384 columns"));
}

TEST(ReadXlsxSheetErrors, CellsOutOfOrderOrOutsideTheirRow) {
  EXPECT_THAT(
      ReadError(OneSheetWorkbook("<row r=\"1\"><c r=\"B1\"><v>1</v></c><c r=\"A1\"><v>2</v></c></row>"))
          .reason(),
      HasSubstr("cell A1 comes after B1"));
  EXPECT_THAT(ReadError(OneSheetWorkbook("<row r=\"2\"><c r=\"A3\"><v>1</v></c></row>")).reason(),
              HasSubstr("cell A3 lies inside row 2"));
  EXPECT_THAT(ReadError(OneSheetWorkbook("<row r=\"2\"/><row r=\"1\"/>")).reason(),
              HasSubstr("row 1 comes after row 2"));
  EXPECT_THAT(ReadError(OneSheetWorkbook("<row r=\"1\"><c r=\"1A\"><v>1</v></c></row>")).reason(),
              HasSubstr("cell reference '1A' is not a reference like B7"));
}

TEST(ReadXlsxSheetErrors, UnknownCellTypeAndBadBoolean) {
  EXPECT_THAT(ReadError(OneSheetWorkbook("<row r=\"1\"><c r=\"A1\" t=\"q\"><v>1</v></c></row>")).reason(),
              HasSubstr("has unknown type t='q'"));
  EXPECT_THAT(ReadError(OneSheetWorkbook("<row r=\"1\"><c r=\"A1\" t=\"b\"><v>2</v></c></row>")).reason(),
              HasSubstr("where a boolean (0 or 1) was expected"));
}

TEST(ReadXlsxSheetErrors, PartThatWouldUnpackBeyondTheLimitIsRefusedBeforeReading) {
  // A zip bomb's headers promise a huge part. Patch a stored part's size
  // fields (local header offset 22, central directory offset 24; APPNOTE.TXT
  // 4.3.7 and 4.3.12) to claim 300 MB; the reader must refuse from the header.
  std::string bytes = ZipBytes(
      {{"xl/workbook.xml", Xml(std::string("<workbook xmlns=\"") + kMain + "\"/>")}}, /*stored=*/true);
  const std::uint32_t claimed = 300u << 20;
  const auto patch = [&](std::size_t at) {
    for (int i = 0; i < 4; ++i) bytes[at + i] = static_cast<char>((claimed >> (8 * i)) & 0xFF);
  };
  const std::size_t local = bytes.find(std::string("PK\x03\x04", 4));
  const std::size_t central = bytes.find(std::string("PK\x01\x02", 4));
  ASSERT_NE(local, std::string::npos);
  ASSERT_NE(central, std::string::npos);
  patch(local + 22);
  patch(central + 24);
  EXPECT_THAT(ReadError(bytes).reason(),
              HasSubstr("part xl/workbook.xml would unpack to 314572800 bytes, more than the 256 MB"));
}

TEST(ReadXlsxSheetErrors, ChartSheetCannotBeRead) {
  std::string workbook = std::string("<workbook xmlns=\"") + kMain +
                         "\" xmlns:r=\"http://schemas.openxmlformats.org/officeDocument/2006/"
                         "relationships\"><sheets><sheet name=\"Chart1\" sheetId=\"1\" r:id=\"rId1\"/>"
                         "</sheets></workbook>";
  const std::string rels = std::string("<Relationships><Relationship Id=\"rId1\" Type=\"") +
                           kRelationshipType +
                           "chartsheet\" Target=\"chartsheets/sheet1.xml\"/></Relationships>";
  const std::string bytes = ZipBytes({{"xl/workbook.xml", Xml(workbook)},
                                      {"xl/_rels/workbook.xml.rels", Xml(rels)},
                                      {"xl/chartsheets/sheet1.xml", Xml("<chartsheet/>")}});
  EXPECT_THAT(ReadError(bytes).reason(), HasSubstr("no worksheet with cells"));
  EXPECT_THAT(ReadError(bytes, "Chart1").reason(), HasSubstr("is a chart or other sheet"));
}

}  // namespace
}  // namespace ratewell::detail
