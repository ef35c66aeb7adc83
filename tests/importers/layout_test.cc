// Tests of the layout reader: list and grid forms, unit conversion, roles,
// text variants (UTF-16, semicolons, decimal commas) and malformed layouts.
//
// All layouts here are invented for the tests (see tests/data/layouts/README.md).
#include "importers/layout.h"

#include <cmath>
#include <functional>
#include <string>

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include "importers/input_error.h"

namespace ratewell {
namespace {

using ::testing::AllOf;
using ::testing::HasSubstr;

// Unit factors are exact powers of ten applied by one multiplication; the only
// error is the rounding of that product (and of a decimal input such as 0.005),
// a few ulp. 1e-12 relative is far above that and far below any meaningful
// concentration difference.
constexpr double kRelativeTolerance = 1e-12;

std::string DataPath(const std::string& name) {
  return std::string(RATEWELL_TEST_DATA_DIR) + "/layouts/" + name;
}

const WellInfo& Well(const Layout& layout, const char* name) {
  const std::optional<WellPosition> position = ParseWellName(name);
  EXPECT_TRUE(position.has_value()) << name;
  return layout.at(position->row * layout.geometry.columns + position->column);
}

void ExpectNearRelative(double expected, double actual) {
  EXPECT_NEAR(expected, actual, kRelativeTolerance * std::abs(expected)) << "expected " << expected;
}

// Reads text that must be rejected and returns the error.
InputError ReadError(const std::string& text, const std::string& name = "bad.csv",
                     std::optional<PlateGeometry> geometry = std::nullopt) {
  try {
    const Layout layout = ReadLayoutBytes(text, name, geometry);
    ADD_FAILURE() << "layout was accepted; form " << layout.form;
  } catch (const InputError& error) {
    return error;
  }
  return InputError(name, -1, -1, "no error");
}

// A 12-column grid block: label line, header line, rows A..H from cell(row, column).
std::string Grid96(const std::string& label,
                   const std::function<std::string(int, int)>& cell, int rows = 8) {
  std::string text = label;
  text += '\n';
  for (int c = 1; c <= 12; ++c) text.append(",").append(std::to_string(c));
  text += "\n";
  for (int r = 0; r < rows; ++r) {
    text += RowLabel(r);
    for (int c = 0; c < 12; ++c) text.append(",").append(cell(r, c));
    text += "\n";
  }
  return text;
}

std::string EmptyCell(int, int) { return ""; }

// Converts UTF-8 text (code points below U+10000) to UTF-16LE with a BOM.
std::string ToUtf16LeWithBom(const std::string& utf8) {
  std::string out = "\xFF\xFE";
  for (std::size_t i = 0; i < utf8.size();) {
    const auto c = static_cast<unsigned char>(utf8[i]);
    std::uint32_t cp = c;
    std::size_t n = 1;
    if (c >= 0xE0) {
      cp = ((c & 0x0F) << 12) | ((utf8[i + 1] & 0x3F) << 6) | (utf8[i + 2] & 0x3F);
      n = 3;
    } else if (c >= 0xC0) {
      cp = ((c & 0x1F) << 6) | (utf8[i + 1] & 0x3F);
      n = 2;
    }
    out.push_back(static_cast<char>(cp & 0xFF));
    out.push_back(static_cast<char>(cp >> 8));
    i += n;
  }
  return out;
}

// ---------------------------------------------------------------------------
// Names and units.

TEST(WellRoleNames, RoundTripThroughTheirStrings) {
  for (WellRole role : {WellRole::kEmpty, WellRole::kSample, WellRole::kBlank,
                        WellRole::kNoSubstrate, WellRole::kStandard}) {
    WellRole parsed = WellRole::kEmpty;
    ASSERT_TRUE(StringToWellRole(WellRoleToString(role), &parsed)) << WellRoleToString(role);
    EXPECT_EQ(parsed, role);
  }
  EXPECT_STREQ(WellRoleToString(WellRole::kNoSubstrate), "no-substrate");
}

TEST(WellRoleNames, AcceptCommonSpellingsAndRejectOthers) {
  WellRole role = WellRole::kEmpty;
  for (const char* text : {"no substrate", "No_Substrate", "NOSUBSTRATE", " no-substrate "}) {
    role = WellRole::kEmpty;
    EXPECT_TRUE(StringToWellRole(text, &role)) << text;
    EXPECT_EQ(role, WellRole::kNoSubstrate) << text;
  }
  EXPECT_TRUE(StringToWellRole("STD", &role));
  EXPECT_EQ(role, WellRole::kStandard);
  EXPECT_TRUE(StringToWellRole("Blank", &role));
  EXPECT_EQ(role, WellRole::kBlank);
  role = WellRole::kSample;
  EXPECT_FALSE(StringToWellRole("smaple", &role));
  EXPECT_FALSE(StringToWellRole("", &role));
  EXPECT_FALSE(StringToWellRole("control", &role));
  EXPECT_EQ(role, WellRole::kSample) << "a failed parse must leave the role alone";
}

// The factors are the SI prefix definitions (BIPM, The International System of
// Units, 9th edition 2019, Table 7: m = 1e-3, µ = 1e-6, n = 1e-9, p = 1e-12),
// with 1 M = 1 mol/L.
TEST(MicromolarPerUnit, FollowsTheSiPrefixes) {
  EXPECT_EQ(MicromolarPerUnit("M"), 1e6);
  EXPECT_EQ(MicromolarPerUnit("mM"), 1e3);
  EXPECT_EQ(MicromolarPerUnit("uM"), 1.0);
  EXPECT_EQ(MicromolarPerUnit("\xC2\xB5M"), 1.0);  // MICRO SIGN U+00B5
  EXPECT_EQ(MicromolarPerUnit("\xCE\xBCM"), 1.0);  // GREEK SMALL LETTER MU U+03BC
  EXPECT_EQ(MicromolarPerUnit("nM"), 1e-3);
  EXPECT_EQ(MicromolarPerUnit("pM"), 1e-6);
}

TEST(MicromolarPerUnit, RejectsWrongCaseAndOtherUnits) {
  for (const char* unit : {"mm", "MM", "um", "nm", "m", "mg", "mol", "", "µg/mL", "fM"}) {
    EXPECT_FALSE(MicromolarPerUnit(unit).has_value()) << unit;
  }
}

// ---------------------------------------------------------------------------
// List form.

TEST(LayoutList, Reads96WellFileWithEveryRole) {
  const Layout layout = ReadLayoutFile(DataPath("list_96.csv"));
  EXPECT_EQ(layout.form, "list");
  EXPECT_EQ(layout.path, DataPath("list_96.csv"));
  EXPECT_EQ(layout.geometry, (PlateGeometry{8, 12}));
  ASSERT_EQ(layout.wells.size(), 96u);
  EXPECT_EQ(layout.CountRole(WellRole::kSample), 15);
  EXPECT_EQ(layout.CountRole(WellRole::kBlank), 2);
  EXPECT_EQ(layout.CountRole(WellRole::kNoSubstrate), 1);
  EXPECT_EQ(layout.CountRole(WellRole::kStandard), 5);
  EXPECT_EQ(layout.CountRole(WellRole::kEmpty), 96 - 23);
  EXPECT_TRUE(layout.warnings.empty()) << layout.warnings.front();

  // substrate_mM: 0.05 mM = 50 µM, 2.5 mM = 2500 µM.
  ExpectNearRelative(50.0, Well(layout, "A01").substrate_uM);
  ExpectNearRelative(2500.0, Well(layout, "A12").substrate_uM);
  EXPECT_EQ(Well(layout, "A01").enzyme_nM, 5.0);
  EXPECT_EQ(Well(layout, "A01").group, "S1");
  EXPECT_EQ(Well(layout, "A01").line, 4);
  // B2 is written without zero padding; inhibitor_uM 10 stays 10.
  EXPECT_EQ(Well(layout, "B02").inhibitor_uM, 10.0);
  EXPECT_EQ(Well(layout, "B02").group, "I10");
  EXPECT_EQ(Well(layout, "B02").line, 19);
}

TEST(LayoutList, InfersSampleOrStandardWhenTheRoleIsEmpty) {
  const Layout layout = ReadLayoutFile(DataPath("list_96.csv"));
  const WellInfo& b03 = Well(layout, "B03");
  EXPECT_EQ(b03.role, WellRole::kSample);
  ExpectNearRelative(500.0, b03.substrate_uM);
  EXPECT_EQ(b03.inhibitor_uM, 0.0) << "an empty inhibitor cell means no inhibitor";
  const WellInfo& h05 = Well(layout, "H05");
  EXPECT_EQ(h05.role, WellRole::kStandard);
  EXPECT_EQ(h05.standard_uM, 300.0);
  EXPECT_TRUE(std::isnan(h05.substrate_uM));
}

TEST(LayoutList, KeepsExtraColumnsAndLeavesUnnamedWellsEmpty) {
  const Layout layout = ReadLayoutFile(DataPath("list_96.csv"));
  EXPECT_EQ(Well(layout, "C01").extra.at("note"), "no enzyme");
  EXPECT_EQ(Well(layout, "C01").role, WellRole::kBlank);
  EXPECT_EQ(Well(layout, "C01").enzyme_nM, 0.0);
  EXPECT_TRUE(Well(layout, "A01").extra.empty()) << "empty extra cells are not stored";
  EXPECT_EQ(Well(layout, "H12").role, WellRole::kEmpty);
  EXPECT_EQ(Well(layout, "H12").line, 29);
  const WellInfo& g07 = Well(layout, "G07");  // not in the file
  EXPECT_EQ(g07.role, WellRole::kEmpty);
  EXPECT_EQ(g07.line, 0);
  EXPECT_TRUE(std::isnan(g07.substrate_uM));
  EXPECT_TRUE(std::isnan(g07.standard_uM));
  EXPECT_EQ(Well(layout, "H01").standard_uM, 0.0);
  EXPECT_EQ(Well(layout, "H04").standard_uM, 200.0);
}

TEST(LayoutList, Reads384WellListAndPicksThePlateFromTheWells) {
  // Substrate in nM and enzyme in pM: 250 nM = 0.25 µM, 500 pM = 0.5 nM.
  std::string text = "Well,Role,Substrate_nM,Enzyme_pM,Inhibitor_M\n";
  for (int row = 0; row < 16; ++row) {
    text += WellName(WellPosition{row, 23}) + ",sample,250,500,0.000002\n";
  }
  const Layout layout = ReadLayoutBytes(text, "list384.csv");
  EXPECT_EQ(layout.geometry, (PlateGeometry{16, 24}));
  EXPECT_EQ(layout.CountRole(WellRole::kSample), 16);
  const WellInfo& p24 = Well(layout, "P24");
  ExpectNearRelative(0.25, p24.substrate_uM);
  ExpectNearRelative(0.5, p24.enzyme_nM);
  ExpectNearRelative(2.0, p24.inhibitor_uM);  // 2e-6 M = 2 µM
  EXPECT_EQ(p24.line, 17);
}

TEST(LayoutList, SmallestPlateHoldingTheWellsIsChosen) {
  EXPECT_EQ(ReadLayoutBytes("well\nH12\n", "a.csv").geometry, (PlateGeometry{8, 12}));
  EXPECT_EQ(ReadLayoutBytes("well\nA13\n", "a.csv").geometry, (PlateGeometry{16, 24}));
  EXPECT_EQ(ReadLayoutBytes("well\nI01\n", "a.csv").geometry, (PlateGeometry{16, 24}));
  EXPECT_EQ(ReadLayoutBytes("well\nAF48\n", "a.csv").geometry, (PlateGeometry{32, 48}));
  // A given plate wins over the smallest one.
  const Layout layout = ReadLayoutBytes("well\nA01\n", "a.csv", PlateGeometry{32, 48});
  EXPECT_EQ(layout.geometry, (PlateGeometry{32, 48}));
  EXPECT_EQ(layout.wells.size(), 1536u);
}

TEST(LayoutList, ConvertsEveryUnitToMicromolarAndEnzymeToNanomolar) {
  const Layout layout = ReadLayoutBytes(
      "well,substrate_M,inhibitor_mM,standard_pM,enzyme_uM\n"
      "A01,0.001,1,1000000,0.005\n",
      "units.csv");
  const WellInfo& a01 = Well(layout, "A01");
  ExpectNearRelative(1000.0, a01.substrate_uM);  // 1 mM = 1000 µM
  ExpectNearRelative(1000.0, a01.inhibitor_uM);  // 1 mM = 1000 µM
  ExpectNearRelative(1.0, a01.standard_uM);      // 1e6 pM = 1 µM
  ExpectNearRelative(5.0, a01.enzyme_nM);        // 0.005 µM = 5 nM
  EXPECT_EQ(a01.role, WellRole::kSample) << "a standard concentration alone makes a standard, "
                                            "but this well has a substrate";
  ASSERT_EQ(layout.warnings.size(), 1u);
  EXPECT_THAT(layout.warnings[0], HasSubstr("1 non-standard well gives a standard concentration"));
}

TEST(LayoutList, AcceptsUnitsInBracketsAndBothMicroSigns) {
  const Layout layout = ReadLayoutBytes(
      "well,substrate (mM),inhibitor [\xCE\xBCM],enzyme_\xC2\xB5M\n"
      "A01,2,3,0.01\n",
      "brackets.csv");
  const WellInfo& a01 = Well(layout, "A01");
  ExpectNearRelative(2000.0, a01.substrate_uM);
  ExpectNearRelative(3.0, a01.inhibitor_uM);
  ExpectNearRelative(10.0, a01.enzyme_nM);
}

TEST(LayoutList, GroupComesFromReplicateColumnAndWordColumnsStayExtra) {
  const Layout layout = ReadLayoutBytes(
      "replicate,well,enzyme_lot,substrate_uM\n"
      "rep-a,A01,RK1-0042,5\n",
      "extra.csv");
  const WellInfo& a01 = Well(layout, "A01");
  EXPECT_EQ(a01.group, "rep-a");
  EXPECT_EQ(a01.extra.at("enzyme_lot"), "RK1-0042");
  EXPECT_EQ(a01.substrate_uM, 5.0);
  EXPECT_EQ(a01.extra.size(), 1u);
}

TEST(LayoutList, ReadsUtf16SemicolonFileWithDecimalCommas) {
  const Layout layout = ReadLayoutFile(DataPath("list_semicolon_utf16.csv"));
  EXPECT_EQ(layout.form, "list");
  EXPECT_EQ(layout.geometry, (PlateGeometry{8, 12}));
  const WellInfo& a2 = Well(layout, "A02");
  EXPECT_EQ(a2.role, WellRole::kSample);
  ExpectNearRelative(12.5, a2.substrate_uM);
  ExpectNearRelative(0.5, a2.inhibitor_uM);
  ExpectNearRelative(5.0, a2.enzyme_nM);  // 0,005 µM
  EXPECT_EQ(a2.group, "r1");
  EXPECT_EQ(Well(layout, "B01").role, WellRole::kBlank);
  EXPECT_EQ(Well(layout, "B02").role, WellRole::kNoSubstrate);
  EXPECT_EQ(Well(layout, "C01").role, WellRole::kStandard);
  ExpectNearRelative(100.0, Well(layout, "C01").standard_uM);  // 0,1 mM
  EXPECT_EQ(Well(layout, "C01").line, 7);
}

TEST(LayoutList, ReadsTabSeparatedUtf8WithBomAndCrlf) {
  const Layout layout = ReadLayoutBytes(
      "\xEF\xBB\xBF# tab separated\r\nwell\trole\tsubstrate_mM\r\n\r\nD07\tsample\t0,75\r\n",
      "tab.tsv");
  ExpectNearRelative(750.0, Well(layout, "D07").substrate_uM);
  EXPECT_EQ(Well(layout, "D07").line, 4);
}

TEST(LayoutList, WarnsAboutSamplesWithoutSubstrate) {
  const Layout layout = ReadLayoutBytes(
      "well,role,inhibitor_uM\nA01,sample,1\nA02,sample,2\nA03,blank,0\n", "inhibitor-only.csv");
  ASSERT_EQ(layout.warnings.size(), 1u);
  EXPECT_THAT(layout.warnings[0],
              AllOf(HasSubstr("2 sample wells"), HasSubstr("no substrate"), HasSubstr("A01, A02")));
  EXPECT_EQ(layout.CountRole(WellRole::kSample), 2);
}

TEST(LayoutList, WarnsAboutSamplesWithoutEnzymeAndBlanksWithEnzyme) {
  const Layout layout = ReadLayoutBytes(
      "well,role,substrate_uM,enzyme_nM\nA01,sample,5,0\nA02,blank,5,2\n", "contradiction.csv");
  ASSERT_EQ(layout.warnings.size(), 2u);
  EXPECT_THAT(layout.warnings[0], AllOf(HasSubstr("1 sample well gives"), HasSubstr("A01")));
  EXPECT_THAT(layout.warnings[1], AllOf(HasSubstr("1 blank well gives"), HasSubstr("A02")));
}

TEST(LayoutList, MissingMarkersInConcentrationCellsMeanNotGiven) {
  const Layout layout = ReadLayoutBytes(
      "well,substrate_uM,inhibitor_uM\nA01,NA,-\n", "na.csv");
  EXPECT_TRUE(std::isnan(Well(layout, "A01").substrate_uM));
  EXPECT_EQ(Well(layout, "A01").inhibitor_uM, 0.0);
}

// ---------------------------------------------------------------------------
// Grid form.

TEST(LayoutGrids, Reads384WellGridFile) {
  const Layout layout = ReadLayoutFile(DataPath("grids_384.csv"));
  EXPECT_EQ(layout.form, "grids");
  EXPECT_EQ(layout.geometry, (PlateGeometry{16, 24}));
  ASSERT_EQ(layout.wells.size(), 384u);
  EXPECT_EQ(layout.CountRole(WellRole::kSample), 14 * 22);
  EXPECT_EQ(layout.CountRole(WellRole::kBlank), 14 * 2);
  EXPECT_EQ(layout.CountRole(WellRole::kNoSubstrate), 4);
  EXPECT_EQ(layout.CountRole(WellRole::kStandard), 6);
  EXPECT_EQ(layout.CountRole(WellRole::kEmpty), 384 - 308 - 28 - 4 - 6);
  EXPECT_TRUE(layout.warnings.empty()) << layout.warnings.front();

  // Column pair 3-4 holds 5 µM, pair 21-22 2560 µM; row pair C-D holds 250 nM inhibitor.
  const WellInfo& c04 = Well(layout, "C04");
  EXPECT_EQ(c04.role, WellRole::kSample);
  EXPECT_EQ(c04.substrate_uM, 5.0);
  ExpectNearRelative(0.25, c04.inhibitor_uM);
  EXPECT_EQ(c04.group, "S2-I2");
  EXPECT_EQ(Well(layout, "N22").substrate_uM, 2560.0);
  ExpectNearRelative(8.0, Well(layout, "N22").inhibitor_uM);  // 8000 nM
  EXPECT_EQ(Well(layout, "A01").inhibitor_uM, 0.0);
  EXPECT_EQ(Well(layout, "B23").role, WellRole::kBlank);
  EXPECT_EQ(Well(layout, "P03").standard_uM, 50.0);
  EXPECT_EQ(Well(layout, "P06").standard_uM, 200.0);
  EXPECT_EQ(Well(layout, "O04").role, WellRole::kNoSubstrate);
  EXPECT_EQ(Well(layout, "O05").role, WellRole::kEmpty);
  // The well's line is where its first grid (role) gives it: row A is line 6.
  EXPECT_EQ(Well(layout, "A01").line, 6);
  EXPECT_EQ(Well(layout, "P01").line, 21);
}

TEST(LayoutGrids, Reads96WellGridsWithDefaultRoles) {
  // Columns 1-10: substrate 0.1 .. 1.0 mM; column 11 standards; column 12 empty.
  const std::string text =
      Grid96("substrate_mM",
             [](int, int c) { return c < 10 ? std::to_string(c + 1) + "00e-3" : ""; }) +
      "\n" +
      Grid96("standard_uM", [](int r, int c) { return c == 10 ? std::to_string(25 * r) : ""; }) +
      "\n" + Grid96("group", [](int, int c) { return c < 10 ? std::string("S").append(std::to_string(c + 1)) : ""; });
  const Layout layout = ReadLayoutBytes(text, "grid96.csv");
  EXPECT_EQ(layout.form, "grids");
  EXPECT_EQ(layout.geometry, (PlateGeometry{8, 12}));
  EXPECT_EQ(layout.CountRole(WellRole::kSample), 80);
  EXPECT_EQ(layout.CountRole(WellRole::kStandard), 8);
  EXPECT_EQ(layout.CountRole(WellRole::kEmpty), 8);
  ExpectNearRelative(700.0, Well(layout, "E07").substrate_uM);  // 700e-3 mM
  EXPECT_EQ(Well(layout, "E07").group, "S7");
  EXPECT_EQ(Well(layout, "H11").standard_uM, 175.0);
  EXPECT_EQ(Well(layout, "A01").line, 3);
}

TEST(LayoutGrids, ReadsSemicolonGridsWithDecimalCommaAsUtf16) {
  std::string text = "# 96-well grid, semicolons\nrole;";
  for (int c = 1; c <= 12; ++c) text += std::to_string(c) + (c < 12 ? ";" : "\n");
  for (int r = 0; r < 8; ++r) text += RowLabel(r) + ";blank;;;;;;;;;;;\n";
  text += "\ninhibitor_\xC2\xB5M\n";
  for (int c = 1; c <= 12; ++c) text.append(";").append(std::to_string(c));
  text += "\n";
  for (int r = 0; r < 8; ++r) text += RowLabel(r) + ";;2,5;;;;;;;;;;\n";
  const Layout layout = ReadLayoutBytes(ToUtf16LeWithBom(text), "grid-utf16.csv");
  EXPECT_EQ(layout.CountRole(WellRole::kBlank), 8);
  EXPECT_EQ(layout.CountRole(WellRole::kSample), 8) << "B column: an inhibitor alone makes a sample";
  ExpectNearRelative(2.5, Well(layout, "H02").inhibitor_uM);
  ASSERT_EQ(layout.warnings.size(), 1u);
  EXPECT_THAT(layout.warnings[0], HasSubstr("8 sample wells give no substrate"));
}

// ---------------------------------------------------------------------------
// Malformed layouts: each error names file, line, column and what was expected.

TEST(LayoutErrors, UnparseableWellNameIsRejected) {
  const InputError e = ReadError("well,role\nA01,sample\nZ99,sample\n", "plate7.csv");
  EXPECT_EQ(e.file(), "plate7.csv");
  EXPECT_EQ(e.line(), 3);
  EXPECT_EQ(e.column(), 1);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("'Z99' is not a well name"), HasSubstr("A..AF"),
                                HasSubstr("1..48")));
  EXPECT_THAT(std::string(e.what()), HasSubstr("plate7.csv:3:1: "));
}

TEST(LayoutErrors, EmptyWellCellIsRejected) {
  const InputError e = ReadError("role,well\nsample,\n");
  EXPECT_EQ(e.line(), 2);
  EXPECT_EQ(e.column(), 2);
  EXPECT_THAT(e.reason(), HasSubstr("expected a well name"));
}

TEST(LayoutErrors, WellOutsideTheGivenPlateIsRejected) {
  const InputError e = ReadError("well,role\nA01,sample\nI01,sample\n", "small.csv",
                                 PlateGeometry{8, 12});
  EXPECT_EQ(e.line(), 3);
  EXPECT_EQ(e.column(), 1);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("I01"), HasSubstr("outside the 96-well plate"),
                                HasSubstr("A01..H12")));
}

TEST(LayoutErrors, RepeatedWellNamesBothLines) {
  const InputError e = ReadError("well,role\n# comment\nB03,sample\nC01,blank\nb3,blank\n");
  EXPECT_EQ(e.line(), 5);
  EXPECT_EQ(e.column(), 1);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("B03 is given twice"), HasSubstr("first on line 3")));
}

TEST(LayoutErrors, UnknownRoleListsTheAllowedRoles) {
  const InputError e = ReadError("well,substrate_uM,role\nA01,5,smaple\n");
  EXPECT_EQ(e.line(), 2);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("unknown role 'smaple'"),
                                HasSubstr("sample, blank, no-substrate, standard, empty")));
}

TEST(LayoutErrors, UnknownUnitListsTheAllowedUnits) {
  const InputError e = ReadError("well,role,substrate_mg\nA01,sample,5\n");
  EXPECT_EQ(e.line(), 1);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("unknown concentration unit 'mg'"),
                                HasSubstr("M, mM, uM (or \xC2\xB5M), nM, pM"),
                                HasSubstr("substrate_uM")));
  // Case matters: "um" is not "uM".
  EXPECT_THAT(ReadError("well,inhibitor_um\nA01,5\n").reason(),
              HasSubstr("unknown concentration unit 'um'"));
}

TEST(LayoutErrors, ConcentrationColumnWithoutUnitIsRejected) {
  const InputError e = ReadError("well,role,Substrate\nA01,sample,5\n");
  EXPECT_EQ(e.line(), 1);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("'Substrate' gives no concentration unit"),
                                HasSubstr("substrate_uM")));
  EXPECT_THAT(ReadError("well,enzyme_conc\nA01,5\n").reason(), HasSubstr("enzyme_uM"));
}

TEST(LayoutErrors, NegativeConcentrationIsRejected) {
  const InputError e = ReadError("well,substrate_mM\nA01,0.5\nA02,-0.5\n");
  EXPECT_EQ(e.line(), 3);
  EXPECT_EQ(e.column(), 2);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("negative concentration '-0.5'"),
                                HasSubstr("expected a value >= 0")));
}

TEST(LayoutErrors, NonNumericConcentrationIsRejected) {
  const InputError e = ReadError("well,role,inhibitor_nM\nA01,sample,lots\n");
  EXPECT_EQ(e.line(), 2);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("expected a concentration in nM"),
                                HasSubstr("found 'lots'")));
  // A decimal comma in a comma-separated file can only be a quoted cell.
  EXPECT_THAT(ReadError("well,substrate_uM\nA01,\"0,5\"\n").reason(),
              HasSubstr("decimal comma"));
}

TEST(LayoutErrors, RepeatedColumnIsRejected) {
  const InputError e = ReadError("well,substrate_uM,substrate_mM\nA01,1,2\n");
  EXPECT_EQ(e.line(), 1);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), HasSubstr("repeats column 2 ('substrate_uM')"));
}

TEST(LayoutErrors, ValueBeyondTheHeaderIsRejected) {
  const InputError e = ReadError("well,role\nA01,sample,7\n");
  EXPECT_EQ(e.line(), 2);
  EXPECT_EQ(e.column(), 3);
  EXPECT_THAT(e.reason(), HasSubstr("header on line 1 names 2 columns"));
}

TEST(LayoutErrors, StandardWithoutConcentrationIsRejected) {
  const InputError e = ReadError("well,role,standard_uM\nH01,standard,10\nH02,standard,\n");
  EXPECT_EQ(e.line(), 3);
  EXPECT_EQ(e.column(), 2);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("H02 is a standard"),
                                HasSubstr("no standard concentration"), HasSubstr("standard_uM")));
}

TEST(LayoutErrors, EmptyFileIsRejected) {
  const InputError e = ReadError("", "empty.csv");
  EXPECT_EQ(e.file(), "empty.csv");
  EXPECT_EQ(e.line(), 0);
  EXPECT_THAT(e.reason(), HasSubstr("empty"));
}

TEST(LayoutErrors, CommentsOnlyAreRejected) {
  const InputError e = ReadError("# nothing here yet\n\n,,,\n");
  EXPECT_EQ(e.line(), 0);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("only comments"), HasSubstr("header row")));
}

TEST(LayoutErrors, HeaderOnlyIsRejected) {
  const InputError e = ReadError("# template\nwell,role,substrate_uM\n\n");
  EXPECT_EQ(e.line(), 2);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("header row but no wells"),
                                HasSubstr("one row per well")));
}

TEST(LayoutErrors, HeaderWithoutWellColumnIsRejected) {
  const InputError e = ReadError("position,role,substrate_uM\nA01,sample,5\n");
  EXPECT_EQ(e.line(), 1);
  EXPECT_THAT(e.reason(), HasSubstr("a 'well' column"));
}

TEST(LayoutErrors, TitleLineBeforeTheHeaderIsRejectedWithAHint) {
  const InputError e = ReadError("Layout for run 7\nwell,role\nA01,sample\n");
  EXPECT_EQ(e.line(), 1);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("line 2"), HasSubstr("'#'")));
}

TEST(LayoutErrors, GridWithMissingRowIsRejected) {
  std::string text = Grid96("role", [](int, int) { return "sample"; }, 7);
  text += '\n';
  const InputError e = ReadError(text, "short.csv");
  EXPECT_EQ(e.line(), 10);  // the blank line where row H should be
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("grid 'role' (line 1) has 7 rows"),
                                HasSubstr("expected row H"), HasSubstr("A..H")));
  // Missing at the end of the file too.
  const InputError at_end = ReadError(Grid96("role", EmptyCell, 3));
  EXPECT_EQ(at_end.line(), 6);
  EXPECT_THAT(at_end.reason(), HasSubstr("has 3 rows; expected row D"));
}

TEST(LayoutErrors, GridWithExtraRowIsRejected) {
  const std::string text = Grid96("role", [](int, int) { return "sample"; }) + "I,,,,,,,,,,,,\n";
  const InputError e = ReadError(text);
  EXPECT_EQ(e.line(), 11);
  EXPECT_EQ(e.column(), 1);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("a row too many ('I')"), HasSubstr("8 rows, A..H")));
}

TEST(LayoutErrors, GridRowsOutOfOrderAreRejected) {
  std::string text = Grid96("role", EmptyCell);
  const std::size_t c = text.find("\nC,");
  text[c + 1] = 'D';
  const InputError e = ReadError(text);
  EXPECT_EQ(e.line(), 5);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("expected row label C"), HasSubstr("found 'D'")));
}

TEST(LayoutErrors, GridRowWithTooFewOrTooManyCellsIsRejected) {
  std::string text = Grid96("substrate_uM", [](int, int) { return "5"; });
  const std::size_t b = text.find("\nB,");
  text.erase(text.find(",5\n", b), 2);  // row B loses its last cell
  const InputError few = ReadError(text);
  EXPECT_EQ(few.line(), 4);
  EXPECT_THAT(few.reason(), AllOf(HasSubstr("row B of grid 'substrate_uM' has 11 cells"),
                                  HasSubstr("expected 12")));

  std::string more = Grid96("substrate_uM", [](int, int) { return "5"; });
  more.insert(more.find("\nD,") + 1 + std::string("D,5,5,5,5,5,5,5,5,5,5,5,5").size(), ",7");
  const InputError many = ReadError(more);
  EXPECT_EQ(many.line(), 6);
  EXPECT_EQ(many.column(), 14);
  EXPECT_THAT(many.reason(), AllOf(HasSubstr("beyond column 12"), HasSubstr("'7'")));
}

TEST(LayoutErrors, GridHeaderWithUnusualColumnCountIsRejected) {
  const InputError e = ReadError("role\n,1,2,3,4,5,6,7,8,9,10\nA,sample\n");
  EXPECT_EQ(e.line(), 2);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("numbers 10 columns"), HasSubstr("12, 24 or 48")));
  const InputError skipped = ReadError("role\n,1,2,4\n");
  EXPECT_EQ(skipped.line(), 2);
  EXPECT_EQ(skipped.column(), 4);
  EXPECT_THAT(skipped.reason(), AllOf(HasSubstr("expected column number 3"), HasSubstr("'4'")));
}

TEST(LayoutErrors, GridsOfDifferentSizesAreRejected) {
  std::string text = Grid96("role", [](int, int) { return "sample"; }) + "\nsubstrate_uM\n";
  for (int c = 1; c <= 24; ++c) text.append(",").append(std::to_string(c));
  text += "\n";
  const InputError e = ReadError(text);
  EXPECT_EQ(e.line(), 13);  // the header that numbers 24 columns
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("'substrate_uM' is 16 x 24"),
                                HasSubstr("'role' (line 1) is 8 x 12"),
                                HasSubstr("the same size")));
}

TEST(LayoutErrors, GridOfAnotherPlateThanTheGivenOneIsRejected) {
  const InputError e = ReadError(Grid96("role", [](int, int) { return "sample"; }), "g.csv",
                                 PlateGeometry{16, 24});
  EXPECT_EQ(e.line(), 2);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("8 x 12"), HasSubstr("384-well plate")));
}

TEST(LayoutErrors, SecondGridForOneAttributeIsRejected) {
  const std::string text = Grid96("substrate_uM", EmptyCell) + "\n" +
                           Grid96("substrate_mM", [](int, int) { return "1"; });
  const InputError e = ReadError(text);
  EXPECT_EQ(e.line(), 12);
  EXPECT_EQ(e.column(), 1);
  EXPECT_THAT(e.reason(), AllOf(HasSubstr("a second substrate grid"), HasSubstr("on line 1")));
}

TEST(LayoutErrors, BadCellInsideAGridNamesItsColumn) {
  const std::string text = Grid96("role", [](int r, int c) {
    return r == 2 && c == 4 ? std::string("sampel") : std::string("sample");
  });
  const InputError e = ReadError(text);
  EXPECT_EQ(e.line(), 5);    // row C
  EXPECT_EQ(e.column(), 6);  // column 5 sits after the row label
  EXPECT_THAT(e.reason(), HasSubstr("unknown role 'sampel'"));
}

TEST(LayoutErrors, AllEmptyGridsAreRejected) {
  const InputError e = ReadError(Grid96("role", EmptyCell));
  EXPECT_EQ(e.line(), 1);
  EXPECT_THAT(e.reason(), HasSubstr("every cell of every grid is empty"));
}

TEST(LayoutErrors, MissingFileIsReportedWithItsPath) {
  const std::string path = DataPath("no-such-layout.csv");
  try {
    ReadLayoutFile(path);
    ADD_FAILURE() << "a missing file was accepted";
  } catch (const InputError& e) {
    EXPECT_EQ(e.file(), path);
    EXPECT_EQ(e.line(), 0);
    EXPECT_THAT(e.reason(), HasSubstr("cannot open the layout file"));
  }
}

TEST(LayoutErrors, WorkbookIsRejectedWithAHint) {
  const InputError e = ReadError(std::string("PK\x03\x04\x14\x00\x06\x00", 8), "layout.xlsx");
  EXPECT_EQ(e.file(), "layout.xlsx");
  EXPECT_THAT(e.reason(), HasSubstr("save the sheet as CSV"));
}

}  // namespace
}  // namespace ratewell
