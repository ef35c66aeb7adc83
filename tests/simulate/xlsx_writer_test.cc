// The .xlsx writer, checked by reading its workbooks back with the importer's
// reader, and by looking inside the zip archive with libzip.
#include "simulate/xlsx_writer.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>
#include <unistd.h>
#include <zip.h>

#include <algorithm>
#include <bit>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <limits>
#include <random>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#include "importers/detail/xlsx.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

using ::testing::ElementsAre;
using ::testing::HasSubstr;
using Row = std::vector<std::string>;

std::vector<Row> ReadBack(const std::string& bytes, const std::string& sheet = "",
                          std::string* used = nullptr) {
  const std::unique_ptr<detail::CellTable> table =
      detail::ReadXlsxSheet(bytes, "written.xlsx", sheet, used);
  std::vector<Row> rows;
  std::vector<std::string_view> cells;
  for (std::size_t i = 0; i < table->num_rows(); ++i) {
    EXPECT_EQ(table->line_number(i), static_cast<int>(i) + 1);
    table->GetRow(i, &cells);
    rows.emplace_back(cells.begin(), cells.end());
  }
  return rows;
}

// The zip entries of bytes: name, compression method, uncompressed text.
struct Entry {
  std::string name;
  int method;
  std::string text;
};
std::vector<Entry> Entries(const std::string& bytes) {
  zip_error_t error;
  zip_error_init(&error);
  zip_source_t* source = zip_source_buffer_create(bytes.data(), bytes.size(), 0, &error);
  zip_t* archive = zip_open_from_source(source, ZIP_RDONLY | ZIP_CHECKCONS, &error);
  zip_error_fini(&error);
  if (archive == nullptr) {
    zip_source_free(source);
    ADD_FAILURE() << "libzip cannot open the archive";
    return {};
  }
  std::vector<Entry> entries;
  for (zip_int64_t i = 0; i < zip_get_num_entries(archive, 0); ++i) {
    zip_stat_t stat;
    zip_stat_index(archive, static_cast<zip_uint64_t>(i), 0, &stat);
    std::string text(stat.size, '\0');
    zip_file_t* file = zip_fopen_index(archive, static_cast<zip_uint64_t>(i), 0);
    EXPECT_EQ(zip_fread(file, text.data(), stat.size), static_cast<zip_int64_t>(stat.size));
    zip_fclose(file);
    entries.push_back({stat.name, stat.comp_method, text});
  }
  zip_discard(archive);
  return entries;
}

// The text of one entry; an empty string and a test failure if it is missing.
std::string EntryText(const std::string& bytes, const std::string& name) {
  for (const Entry& entry : Entries(bytes)) {
    if (entry.name == name) return entry.text;
  }
  ADD_FAILURE() << "the archive has no " << name;
  return {};
}

std::size_t CountOf(const std::string& text, const std::string& what) {
  std::size_t count = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) {
    ++count;
  }
  return count;
}

std::string ErrorOf(const std::vector<XlsxSheet>& sheets) {
  try {
    XlsxBytes(sheets);
  } catch (const std::runtime_error& error) {
    return error.what();
  }
  ADD_FAILURE() << "XlsxBytes did not throw";
  return {};
}

TEST(XlsxWriter, RoundTripKeepsNumbersExactToTheBit) {
  std::vector<double> values = {0.0,
                                -0.0,
                                0.1,
                                1.0 / 3.0,
                                -2.5e-7,
                                6220.0,  // ε340(NADH) in M⁻¹cm⁻¹, a typical cell value
                                3.141592653589793,
                                1e21,
                                std::numeric_limits<double>::max(),
                                std::numeric_limits<double>::lowest(),
                                std::numeric_limits<double>::min(),
                                std::numeric_limits<double>::denorm_min(),
                                std::nextafter(1.0, 2.0)};
  // Random bit patterns cover every exponent; a fixed seed keeps the test repeatable.
  std::mt19937_64 random(20240611);
  while (values.size() < 5000) {
    const double value = std::bit_cast<double>(random());
    if (std::isfinite(value)) values.push_back(value);
  }
  XlsxSheet sheet{"Numbers", {}};
  for (std::size_t i = 0; i < values.size(); i += 10) {
    sheet.rows.emplace_back(values.begin() + i,
                            values.begin() + std::min(i + 10, values.size()));
  }
  const std::vector<Row> rows = ReadBack(XlsxBytes({sheet}));
  ASSERT_EQ(rows.size(), sheet.rows.size());
  std::size_t checked = 0;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    ASSERT_EQ(rows[i].size(), sheet.rows[i].size());
    for (std::size_t j = 0; j < rows[i].size(); ++j) {
      const std::string& text = rows[i][j];
      double back = 0.0;
      const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), back);
      ASSERT_EQ(ec, std::errc()) << text;
      ASSERT_EQ(end, text.data() + text.size()) << text;
      const double written = std::get<double>(sheet.rows[i][j]);
      EXPECT_EQ(std::bit_cast<std::uint64_t>(back), std::bit_cast<std::uint64_t>(written))
          << "row " << i + 1 << " column " << j + 1 << ": wrote " << written << ", read " << text;
      ++checked;
    }
  }
  EXPECT_EQ(checked, values.size());
}

TEST(XlsxWriter, RoundTripKeepsStringsWithXmlSpecialCharactersAndNonAscii) {
  const std::vector<std::string> strings = {
      "a & b < c > d \"quoted\" 'single'",
      "NADH 150 µM at 25 °C",
      "ε340 = 6220 M⁻¹cm⁻¹",
      "</t></si><si><t>not markup",
      "_x0041_ stays as written",
      "carriage\rreturn, line\nfeed, tab\tand bell\a",
      "test tube \xF0\x9F\xA7\xAA",
      "]]> and <![CDATA[",
  };
  XlsxSheet sheet{"Strings", {}};
  for (const std::string& text : strings) sheet.rows.push_back({text});
  const std::vector<Row> rows = ReadBack(XlsxBytes({sheet}));
  ASSERT_EQ(rows.size(), strings.size());
  for (std::size_t i = 0; i < strings.size(); ++i) EXPECT_THAT(rows[i], ElementsAre(strings[i]));
}

TEST(XlsxWriter, SparseRowsKeepTheirRowAndColumnNumbers) {
  XlsxSheet sheet{"Sparse", {}};
  sheet.rows = {{},
                {XlsxCell{}, XlsxCell{}, 1.5},
                {},
                {std::string("x"), XlsxCell{}, XlsxCell{}, std::string("y"), XlsxCell{}},
                {std::string(""), 2.0}};
  const std::string bytes = XlsxBytes({sheet});
  EXPECT_THAT(ReadBack(bytes), ElementsAre(Row{}, Row{"", "", "1.5"}, Row{},
                                           Row{"x", "", "", "y"}, Row{"", "2"}));
  // Empty rows and cells are left out; the dimension spans the used cells.
  const std::string sheet_xml = EntryText(bytes, "xl/worksheets/sheet1.xml");
  EXPECT_EQ(CountOf(sheet_xml, "<row "), 3u);
  EXPECT_EQ(CountOf(sheet_xml, "<c "), 4u);
  EXPECT_THAT(sheet_xml, HasSubstr("<dimension ref=\"A2:D5\"/>"));
}

TEST(XlsxWriter, SeveralSheetsAreChosenByNameAndTheFirstIsTheDefault) {
  const std::string bytes = XlsxBytes({{"Kinetics", {{1.0}}},
                                       {"Layout & notes", {{2.0}}},
                                       {"Ωmega µ", {{3.0}}}});
  std::string used;
  EXPECT_THAT(ReadBack(bytes, "", &used), ElementsAre(Row{"1"}));
  EXPECT_EQ(used, "Kinetics");
  EXPECT_THAT(ReadBack(bytes, "Layout & notes", &used), ElementsAre(Row{"2"}));
  EXPECT_EQ(used, "Layout & notes");
  EXPECT_THAT(ReadBack(bytes, "Ωmega µ", &used), ElementsAre(Row{"3"}));
}

TEST(XlsxWriter, AskingForAnUnknownSheetListsTheSheets) {
  const std::string bytes = XlsxBytes({{"Kinetics", {{1.0}}}, {"Layout", {}}});
  try {
    detail::ReadXlsxSheet(bytes, "written.xlsx", "Plate", nullptr);
    FAIL() << "no InputError";
  } catch (const InputError& error) {
    EXPECT_STREQ(error.what(),
                 "written.xlsx: the workbook has no sheet named 'Plate'; its sheets are "
                 "'Kinetics', 'Layout'");
  }
}

TEST(XlsxWriter, WritesTheMinimalSetOfPartsAllDeflated) {
  const std::string bytes = XlsxBytes({{"One", {{std::string("Time (s)"), 0.0}}}, {"Two", {}}});
  EXPECT_TRUE(detail::LooksLikeZip(bytes));
  std::vector<std::string> names;
  for (const Entry& entry : Entries(bytes)) {
    names.push_back(entry.name);
    EXPECT_EQ(entry.method, ZIP_CM_DEFLATE) << entry.name;
    EXPECT_EQ(entry.text.rfind("<?xml version=\"1.0\" encoding=\"UTF-8\"", 0), 0u) << entry.name;
  }
  EXPECT_THAT(names, ElementsAre("[Content_Types].xml", "_rels/.rels", "xl/workbook.xml",
                                 "xl/_rels/workbook.xml.rels", "xl/worksheets/sheet1.xml",
                                 "xl/worksheets/sheet2.xml", "xl/styles.xml",
                                 "xl/sharedStrings.xml"));
  // Without strings there is no shared-string part.
  std::vector<std::string> numbers_only;
  for (const Entry& entry : Entries(XlsxBytes({{"One", {{1.0}}}}))) numbers_only.push_back(entry.name);
  EXPECT_THAT(numbers_only, ::testing::Not(::testing::Contains("xl/sharedStrings.xml")));
}

TEST(XlsxWriter, RepeatedStringsAreStoredOnce) {
  XlsxSheet sheet{"Layout", {}};
  for (int i = 0; i < 8; ++i) sheet.rows.push_back({std::string("blank"), std::string("sample")});
  const std::string strings_xml = EntryText(XlsxBytes({sheet}), "xl/sharedStrings.xml");
  EXPECT_EQ(CountOf(strings_xml, "<si>"), 2u);
  EXPECT_THAT(strings_xml, HasSubstr("count=\"16\" uniqueCount=\"2\""));
}

TEST(XlsxWriter, TheSameSheetsGiveTheSameBytes) {
  const std::vector<XlsxSheet> sheets = {{"Kinetics", {{std::string("t"), 0.5}, {1.0, 2.0}}}};
  const std::string first = XlsxBytes(sheets);
  EXPECT_EQ(first, XlsxBytes(sheets));
}

TEST(XlsxWriterErrors, NamesTheProblem) {
  EXPECT_EQ(ErrorOf({}), "a workbook needs at least one sheet");
  EXPECT_THAT(ErrorOf({{"", {}}}), HasSubstr("sheet name '' is empty"));
  EXPECT_THAT(ErrorOf({{"Rates/fits", {}}}), HasSubstr("holds one of : \\ / ? * [ ]"));
  EXPECT_THAT(ErrorOf({{"Plate [1]", {}}}), HasSubstr("holds one of"));
  EXPECT_THAT(ErrorOf({{std::string(32, 'p'), {}}}), HasSubstr("has 32 characters; Excel allows at most 31"));
  EXPECT_THAT(ErrorOf({{"'quoted'", {}}}), HasSubstr("apostrophe"));
  EXPECT_THAT(ErrorOf({{"history", {}}}), HasSubstr("is reserved by Excel"));
  EXPECT_THAT(ErrorOf({{"Plate", {}}, {"PLATE", {}}}),
              HasSubstr("sheet names 'Plate' and 'PLATE' are the same to Excel"));
  EXPECT_EQ(ErrorOf({{"Plate", {{1.0, std::nan("")}}}}),
            "sheet 'Plate' cell B1: NaN cannot be stored in a sheet cell");
  EXPECT_EQ(ErrorOf({{"Plate", {{}, {}, {std::numeric_limits<double>::infinity()}}}}),
            "sheet 'Plate' cell A3: an infinite number cannot be stored in a sheet cell");
  EXPECT_EQ(ErrorOf({{"Plate", {{std::string("ok"), std::string("bad \xC3\x28 byte")}}}}),
            "sheet 'Plate' cell B1: the string is not valid UTF-8");
}

TEST(XlsxWriterErrors, RefusesSheetsBeyondExcelsLimits) {
  XlsxSheet wide{"Wide", {std::vector<XlsxCell>(16385, 1.0)}};
  EXPECT_THAT(ErrorOf({wide}), HasSubstr("Excel allows at most 16,384 columns"));
  wide.rows[0].pop_back();  // 16,384 columns (A to XFD) is allowed
  EXPECT_EQ(ReadBack(XlsxBytes({wide}))[0].size(), 16384u);
  XlsxSheet tall{"Tall", std::vector<std::vector<XlsxCell>>(1048577)};
  EXPECT_THAT(ErrorOf({tall}), HasSubstr("has 1048577 rows; Excel allows at most 1,048,576"));
}

class WriteXlsxTest : public ::testing::Test {
 protected:
  void SetUp() override {
    folder_ = std::filesystem::temp_directory_path() /
              ("ratewell_xlsx_writer_" + std::to_string(::getpid()) + "_" +
               ::testing::UnitTest::GetInstance()->current_test_info()->name());
    std::filesystem::remove_all(folder_);
    std::filesystem::create_directories(folder_);
  }
  void TearDown() override { std::filesystem::remove_all(folder_); }

  std::vector<std::string> FolderContents() const {
    std::vector<std::string> names;
    for (const auto& entry : std::filesystem::directory_iterator(folder_)) {
      names.push_back(entry.path().filename().string());
    }
    std::sort(names.begin(), names.end());
    return names;
  }

  static std::string Slurp(const std::filesystem::path& path) {
    std::ifstream in(path, std::ios::binary);
    std::stringstream buffer;
    buffer << in.rdbuf();
    return buffer.str();
  }

  std::filesystem::path folder_;
};

TEST_F(WriteXlsxTest, WritesTheFileAndLeavesNoTemporaryFile) {
  const std::vector<XlsxSheet> sheets = {{"Kinetics", {{std::string("Time (s)"), 0.25}}}};
  const std::filesystem::path path = folder_ / "plate.xlsx";
  WriteXlsx(path.string(), sheets);
  EXPECT_EQ(Slurp(path), XlsxBytes(sheets));
  EXPECT_THAT(FolderContents(), ElementsAre("plate.xlsx"));
}

TEST_F(WriteXlsxTest, ReplacesAnExistingFile) {
  const std::filesystem::path path = folder_ / "plate.xlsx";
  std::ofstream(path) << "old contents";
  WriteXlsx(path.string(), {{"New", {{7.0}}}});
  EXPECT_THAT(ReadBack(Slurp(path)), ElementsAre(Row{"7"}));
  EXPECT_THAT(FolderContents(), ElementsAre("plate.xlsx"));
}

TEST_F(WriteXlsxTest, FailureNamesThePathAndTheReason) {
  const std::string missing = (folder_ / "no such folder" / "plate.xlsx").string();
  try {
    WriteXlsx(missing, {{"Kinetics", {{1.0}}}});
    FAIL() << "no exception";
  } catch (const std::runtime_error& error) {
    EXPECT_THAT(error.what(), HasSubstr(missing + ": cannot create a temporary file"));
    EXPECT_THAT(error.what(), HasSubstr("No such file or directory"));
  }
}

TEST_F(WriteXlsxTest, FailedRenameRemovesTheTemporaryFile) {
  // A folder where the file should go: the rename fails after the write.
  const std::filesystem::path path = folder_ / "plate.xlsx";
  std::filesystem::create_directories(path / "inside");
  try {
    WriteXlsx(path.string(), {{"Kinetics", {{1.0}}}});
    FAIL() << "no exception";
  } catch (const std::runtime_error& error) {
    EXPECT_THAT(error.what(), HasSubstr("cannot rename into place"));
  }
  EXPECT_THAT(FolderContents(), ElementsAre("plate.xlsx"));
  EXPECT_TRUE(std::filesystem::is_directory(path));
}

TEST_F(WriteXlsxTest, BadSheetsNameThePathToo) {
  const std::string path = (folder_ / "plate.xlsx").string();
  try {
    WriteXlsx(path, {});
    FAIL() << "no exception";
  } catch (const std::runtime_error& error) {
    EXPECT_EQ(std::string(error.what()),
              "cannot write workbook " + path + ": a workbook needs at least one sheet");
  }
  EXPECT_TRUE(FolderContents().empty());
}

}  // namespace
}  // namespace ratewell
