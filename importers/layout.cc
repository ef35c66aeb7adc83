// Layout files: the list form (one row per well) and the grid form (one
// lettered block per attribute), read into a Layout.
//
// Decisions a reader of a layout should know about:
//   - Role when the layout gives none (no role column, or an empty role cell):
//     "standard" if the well has a standard concentration and no substrate,
//     else "sample". A biochemist who lists a well with a substrate level
//     means a reaction well; one who writes only a standard_uM value means an
//     NADH standard.
//   - A standard without a standard concentration is an error: a standard
//     series is useless without its concentrations.
//   - A sample without a substrate concentration is allowed with a warning (an
//     inhibitor-only design, or a single-substrate-level screen).
//   - Concentration cells that are empty, "NA", "-" etc. mean "not given". An
//     empty inhibitor cell means no inhibitor (0 µM).
//   - A column or grid label "<substrate|inhibitor|enzyme|standard>_<suffix>"
//     is a concentration when the suffix is a unit (M, mM, uM, µM, μM, nM,
//     pM). A suffix that looks like a unit but is not one (um, mg/mL, umol/L,
//     conc) is an error; any other suffix (enzyme_lot, inhibitor_name) makes an
//     ordinary extra column. "substrate (mM)" and "substrate [mM]" are read as
//     substrate_mM.
//   - Extra columns (and grids with another label) keep their non-empty cells
//     as text in WellInfo::extra, keyed by the header as written.
//   - Lines whose first non-blank character is '#' are comments. Lines that
//     are empty or hold only delimiters are blank.
//   - Columns in messages are cell positions (1-based), not characters.
#include "importers/layout.h"

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iterator>

#include "importers/detail/cells.h"
#include "importers/detail/text_table.h"
#include "importers/input_error.h"

namespace ratewell {
namespace {

using detail::EqualsIgnoreCase;
using detail::Trim;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr char kRoleList[] = "sample, blank, no-substrate, standard, empty";
constexpr char kUnitList[] = "M, mM, uM (or µM), nM, pM";
// A layout names at most 1536 wells and a few attributes each: a few hundred
// kilobytes. Anything far larger is not a layout.
constexpr std::uintmax_t kMaxLayoutBytes = 64u << 20;
// Wells named in one summarising warning before "...".
constexpr std::size_t kWellsNamedInWarning = 8;

// ---------------------------------------------------------------------------
// Rows of the file, copied out of the table.

enum class RowKind { kContent, kBlank, kComment };

struct SourceRow {
  int line = 0;
  RowKind kind = RowKind::kBlank;
  std::vector<std::string> cells;

  std::string_view cell(std::size_t i) const {
    return i < cells.size() ? std::string_view(cells[i]) : std::string_view();
  }
};

std::vector<SourceRow> ReadRows(const detail::TextTable& table) {
  std::vector<SourceRow> rows(table.num_rows());
  std::vector<std::string_view> cells;
  for (std::size_t r = 0; r < table.num_rows(); ++r) {
    SourceRow& row = rows[r];
    row.line = table.line_number(r);
    const std::string_view text = Trim(table.line(r));
    if (!text.empty() && text.front() == '#') {
      row.kind = RowKind::kComment;
      continue;
    }
    table.GetRow(r, &cells);
    row.cells.assign(cells.begin(), cells.end());
    const bool blank = std::all_of(row.cells.begin(), row.cells.end(),
                                   [](const std::string& c) { return c.empty(); });
    row.kind = blank ? RowKind::kBlank : RowKind::kContent;
  }
  return rows;
}

// Quotes a cell for a message.
std::string Quoted(std::string_view text) { return "'" + std::string(text) + "'"; }

// ---------------------------------------------------------------------------
// Column headers and grid labels.

enum class Field { kWell, kRole, kGroup, kSubstrate, kInhibitor, kEnzyme, kStandard, kExtra, kNone };

struct Attribute {
  Field field = Field::kNone;  // kNone: an empty header
  // A number in the file times scale is the value in the field's unit
  // (micromolar; nanomolar for the enzyme).
  double scale = 1.0;
  std::string unit;  // as written, for messages ("mM")
  std::string name;  // the header or label as written

  bool is_concentration() const {
    return field == Field::kSubstrate || field == Field::kInhibitor || field == Field::kEnzyme ||
           field == Field::kStandard;
  }
};

struct ConcentrationWord {
  std::string_view word;
  Field field;
  double field_units_per_uM;  // 1 for µM fields, 1000 for the enzyme (nM)
};
constexpr ConcentrationWord kConcentrationWords[] = {
    {"substrate", Field::kSubstrate, 1.0},
    {"inhibitor", Field::kInhibitor, 1.0},
    {"enzyme", Field::kEnzyme, 1000.0},
    {"standard", Field::kStandard, 1.0},
};

const char* FieldWord(Field field) {
  switch (field) {
    case Field::kWell: return "well";
    case Field::kRole: return "role";
    case Field::kGroup: return "group";
    case Field::kSubstrate: return "substrate";
    case Field::kInhibitor: return "inhibitor";
    case Field::kEnzyme: return "enzyme";
    case Field::kStandard: return "standard";
    case Field::kExtra:
    case Field::kNone: break;
  }
  return "";
}

// True if a suffix after "substrate_" was meant as a unit that we do not know
// ("um", "mg/mL", "umol/L", "%"), rather than a word such as "lot" or "name".
bool LooksLikeUnit(std::string_view suffix) {
  const std::string lower = detail::ToLower(suffix);
  if (lower.find("mol") != std::string::npos || lower.find('/') != std::string::npos ||
      lower.find('%') != std::string::npos) {
    return true;
  }
  // Short words ending like a molar or mass unit: um, nm, mm, fM, ug, mg (µ
  // takes two bytes, so "µm" is 3 bytes long).
  const char last = lower.empty() ? '\0' : lower.back();
  return lower.size() <= 3 && (last == 'm' || last == 'g');
}

// Classifies a list header or a grid label. what: "column" or "grid label",
// for messages.
Attribute ClassifyAttribute(std::string_view name, const std::string& file, int line, int column,
                            const char* what) {
  Attribute attribute;
  attribute.name = std::string(name);
  if (name.empty()) return attribute;
  if (EqualsIgnoreCase(name, "well")) {
    attribute.field = Field::kWell;
    return attribute;
  }
  if (EqualsIgnoreCase(name, "role")) {
    attribute.field = Field::kRole;
    return attribute;
  }
  if (EqualsIgnoreCase(name, "group") || EqualsIgnoreCase(name, "replicate")) {
    attribute.field = Field::kGroup;
    return attribute;
  }
  for (const ConcentrationWord& word : kConcentrationWords) {
    if (name.size() < word.word.size() ||
        !EqualsIgnoreCase(name.substr(0, word.word.size()), word.word)) {
      continue;
    }
    std::string_view rest = name.substr(word.word.size());
    const std::string example = std::string(word.word) + "_uM or " + std::string(word.word) + "_mM";
    const auto no_unit = [&]() {
      return InputError(file, line, column,
                        std::string(what) + " " + Quoted(name) +
                            " gives no concentration unit; expected the unit in its name, e.g. " +
                            example + " (units: " + kUnitList + ")");
    };
    if (rest.empty()) throw no_unit();
    const char separator = rest.front();
    if (separator != '_' && separator != ' ' && separator != '(' && separator != '[') {
      break;  // "substrates", "enzymelot": an ordinary extra column
    }
    std::string_view unit = Trim(separator == '_' || separator == ' ' ? rest.substr(1) : rest);
    if (unit.size() >= 2 && ((unit.front() == '(' && unit.back() == ')') ||
                             (unit.front() == '[' && unit.back() == ']'))) {
      unit = Trim(unit.substr(1, unit.size() - 2));
    }
    if (unit.empty()) throw no_unit();
    if (const std::optional<double> uM = MicromolarPerUnit(unit)) {
      attribute.field = word.field;
      attribute.scale = *uM * word.field_units_per_uM;
      attribute.unit = std::string(unit);
      return attribute;
    }
    const std::string lower = detail::ToLower(unit);
    if (lower == "c" || lower == "conc" || lower == "concentration") throw no_unit();
    if (LooksLikeUnit(unit)) {
      throw InputError(file, line, column,
                       "unknown concentration unit " + Quoted(unit) + " in " + what + " " +
                           Quoted(name) + "; expected one of " + kUnitList + ", e.g. " + example);
    }
    break;
  }
  attribute.field = Field::kExtra;
  return attribute;
}

// ---------------------------------------------------------------------------
// Well entries as the layout gives them, before they are placed on a plate.

struct Entry {
  WellPosition position;
  int line = 0;    // where the well was first given
  int column = 0;  // cell of the well name (list) or of its first value (grids)
  WellInfo info;
  std::optional<WellRole> role;
  int role_line = 0;  // where the role was given; the well's line if it was not
  int role_column = 0;
};

// Parses a concentration cell into entry. Empty and "NA"-like cells leave the
// field unset (inhibitor: 0).
void SetConcentration(const Attribute& attribute, std::string_view text, bool decimal_comma,
                      const std::string& file, int line, int column, Entry* entry) {
  if (detail::IsMissingMarker(text)) return;
  const std::optional<double> number = detail::ParseNumber(text, decimal_comma);
  if (!number) {
    std::string reason = "expected a concentration in " + attribute.unit + " (a number >= 0) in " +
                         Quoted(attribute.name) + ", found " + Quoted(text);
    if (!decimal_comma && text.find(',') != std::string_view::npos) {
      reason += " (a decimal comma is read only when the file uses ';' or tab as delimiter and "
                "writes no number with a decimal point)";
    }
    throw InputError(file, line, column, reason);
  }
  if (*number < 0.0) {
    throw InputError(file, line, column,
                     "negative concentration " + Quoted(text) + " in " + Quoted(attribute.name) +
                         "; expected a value >= 0");
  }
  const double value = *number * attribute.scale + 0.0;  // + 0.0 turns -0 into 0
  switch (attribute.field) {
    case Field::kSubstrate: entry->info.substrate_uM = value; break;
    case Field::kInhibitor: entry->info.inhibitor_uM = value; break;
    case Field::kEnzyme: entry->info.enzyme_nM = value; break;
    case Field::kStandard: entry->info.standard_uM = value; break;
    default: break;
  }
}

void SetRole(std::string_view text, const std::string& file, int line, int column, Entry* entry) {
  if (text.empty()) return;
  WellRole role;
  if (!StringToWellRole(text, &role)) {
    throw InputError(file, line, column,
                     "unknown role " + Quoted(text) + "; expected one of " + kRoleList +
                         " (an empty cell means sample by default)");
  }
  entry->role = role;
  entry->role_line = line;
  entry->role_column = column;
}

// Sets one attribute of a well from a cell.
void SetAttribute(const Attribute& attribute, std::string_view text, bool decimal_comma,
                  const std::string& file, int line, int column, Entry* entry) {
  switch (attribute.field) {
    case Field::kRole: SetRole(text, file, line, column, entry); break;
    case Field::kGroup: entry->info.group = std::string(text); break;
    case Field::kExtra:
      if (!text.empty()) entry->info.extra[attribute.name] = std::string(text);
      break;
    case Field::kSubstrate:
    case Field::kInhibitor:
    case Field::kEnzyme:
    case Field::kStandard:
      SetConcentration(attribute, text, decimal_comma, file, line, column, entry);
      break;
    case Field::kWell:
    case Field::kNone: break;
  }
}

std::string PlateDescription(const PlateGeometry& geometry) {
  std::string text = std::to_string(geometry.num_wells()) + "-well plate (" +
                     std::to_string(geometry.rows) + " x " + std::to_string(geometry.columns);
  if (geometry.rows > 0 && geometry.columns > 0) {
    text += ": A01.." + WellName(WellPosition{geometry.rows - 1, geometry.columns - 1});
  }
  return text + ")";
}

// "A01, A02, B05, ..." for a warning.
std::string WellList(const std::vector<std::string>& names) {
  std::string text;
  for (std::size_t i = 0; i < names.size() && i < kWellsNamedInWarning; ++i) {
    if (i > 0) text += ", ";
    text += names[i];
  }
  if (names.size() > kWellsNamedInWarning) text += ", ...";
  return text;
}

// "3 sample wells give" / "1 sample well gives".
std::string WellsGive(std::size_t n, const char* what) {
  return std::to_string(n) + " " + what + (n == 1 ? " well gives" : " wells give");
}

// Places the entries on the plate, infers missing roles, checks what needs the
// whole layout and collects warnings.
void FinishLayout(std::vector<Entry> entries, const std::string& file, Layout* layout) {
  const PlateGeometry& geometry = layout->geometry;
  layout->wells.assign(static_cast<std::size_t>(geometry.num_wells()), WellInfo{});
  std::vector<std::string> no_substrate, no_enzyme, empty_with_values, blank_with_enzyme,
      stray_standard;
  for (Entry& entry : entries) {
    const std::string well = WellName(entry.position);
    if (entry.position.row >= geometry.rows || entry.position.column >= geometry.columns) {
      throw InputError(file, entry.line, entry.column,
                       "well " + well + " is outside the " + PlateDescription(geometry) +
                           "; expected a well on that plate");
    }
    WellInfo& info = entry.info;
    info.line = entry.line;
    if (entry.role) {
      info.role = *entry.role;
    } else {
      const bool standard_only = !std::isnan(info.standard_uM) && std::isnan(info.substrate_uM);
      info.role = standard_only ? WellRole::kStandard : WellRole::kSample;
      entry.role_line = entry.line;
      entry.role_column = entry.column;
    }
    switch (info.role) {
      case WellRole::kStandard:
        if (std::isnan(info.standard_uM)) {
          throw InputError(file, entry.role_line, entry.role_column,
                           "well " + well +
                               " is a standard but has no standard concentration; expected an "
                               "NADH concentration in a standard_uM (or standard_mM, ...) "
                               "column or grid");
        }
        break;
      case WellRole::kSample:
        if (std::isnan(info.substrate_uM)) no_substrate.push_back(well);
        if (info.enzyme_nM == 0.0) no_enzyme.push_back(well);
        break;
      case WellRole::kBlank:
        if (info.enzyme_nM > 0.0) blank_with_enzyme.push_back(well);
        break;
      case WellRole::kEmpty:
        if (!std::isnan(info.substrate_uM) || info.inhibitor_uM != 0.0 ||
            !std::isnan(info.enzyme_nM) || !std::isnan(info.standard_uM)) {
          empty_with_values.push_back(well);
        }
        break;
      case WellRole::kNoSubstrate: break;
    }
    if (info.role != WellRole::kStandard && info.role != WellRole::kEmpty &&
        !std::isnan(info.standard_uM)) {
      stray_standard.push_back(well);
    }
    const std::size_t index =
        static_cast<std::size_t>(entry.position.row) * geometry.columns + entry.position.column;
    layout->wells[index] = std::move(info);
  }
  if (!no_substrate.empty()) {
    layout->warnings.push_back(
        WellsGive(no_substrate.size(), "sample") + " no substrate concentration (" +
        WellList(no_substrate) +
        "): their rates can be measured but not placed on a substrate axis");
  }
  if (!no_enzyme.empty()) {
    layout->warnings.push_back(WellsGive(no_enzyme.size(), "sample") +
                               " an enzyme concentration of 0 (" + WellList(no_enzyme) +
                               "); a well without enzyme is usually a blank");
  }
  if (!blank_with_enzyme.empty()) {
    layout->warnings.push_back(WellsGive(blank_with_enzyme.size(), "blank") +
                               " an enzyme concentration above 0 (" +
                               WellList(blank_with_enzyme) + "); a blank has no enzyme");
  }
  if (!empty_with_values.empty()) {
    layout->warnings.push_back(WellsGive(empty_with_values.size(), "empty") +
                               " concentrations (" + WellList(empty_with_values) +
                               "); a well whose role is empty is not analysed");
  }
  if (!stray_standard.empty()) {
    layout->warnings.push_back(WellsGive(stray_standard.size(), "non-standard") +
                               " a standard concentration (" + WellList(stray_standard) +
                               "); only standard wells use it");
  }
}

std::vector<std::string_view> ConcentrationCells(const std::vector<SourceRow>& rows,
                                                 std::size_t first_row, std::size_t end_row,
                                                 const std::vector<std::size_t>& cell_indices) {
  std::vector<std::string_view> cells;
  for (std::size_t r = first_row; r < end_row; ++r) {
    if (rows[r].kind != RowKind::kContent) continue;
    for (std::size_t c : cell_indices) {
      if (c < rows[r].cells.size() && !rows[r].cells[c].empty()) cells.push_back(rows[r].cells[c]);
    }
  }
  return cells;
}

// ---------------------------------------------------------------------------
// List form.

void ReadListForm(const std::vector<SourceRow>& rows, std::size_t header_row, char delimiter,
                  const std::string& file, const std::optional<PlateGeometry>& geometry,
                  Layout* layout) {
  const SourceRow& header = rows[header_row];
  std::vector<Attribute> columns;
  std::size_t well_column = 0;
  std::vector<std::size_t> concentration_columns;
  for (std::size_t c = 0; c < header.cells.size(); ++c) {
    const int column = static_cast<int>(c) + 1;
    Attribute attribute = ClassifyAttribute(header.cells[c], file, header.line, column, "column");
    // Two columns for one attribute: which one would be meant?
    for (std::size_t k = 0; k < columns.size(); ++k) {
      const Attribute& other = columns[k];
      const bool same_field = attribute.field != Field::kExtra && attribute.field != Field::kNone &&
                              attribute.field == other.field;
      const bool same_extra = attribute.field == Field::kExtra && other.field == Field::kExtra &&
                              EqualsIgnoreCase(attribute.name, other.name);
      if (same_field || same_extra) {
        throw InputError(file, header.line, column,
                         "column " + Quoted(attribute.name) + " repeats column " +
                             std::to_string(k + 1) + " (" + Quoted(other.name) +
                             "); expected one column per attribute");
      }
    }
    if (attribute.field == Field::kWell) well_column = c;
    if (attribute.is_concentration()) concentration_columns.push_back(c);
    columns.push_back(std::move(attribute));
  }
  // Header rows without any well rows are a common mistake (an export of the
  // template, not the filled-in layout).
  const bool has_wells = std::any_of(rows.begin() + static_cast<std::ptrdiff_t>(header_row) + 1,
                                     rows.end(),
                                     [](const SourceRow& r) { return r.kind == RowKind::kContent; });
  if (!has_wells) {
    throw InputError(file, header.line, 0,
                     "the layout has a header row but no wells; expected one row per well below "
                     "the header, e.g. B03,sample,50");
  }
  const bool decimal_comma = detail::DetectDecimalComma(
      ConcentrationCells(rows, header_row + 1, rows.size(), concentration_columns), delimiter);

  std::vector<Entry> entries;
  // First line naming each well, keyed by position on the largest plate.
  std::vector<int> first_line(32 * 48, 0);
  int max_row = 0;
  int max_column = 0;
  for (std::size_t r = header_row + 1; r < rows.size(); ++r) {
    const SourceRow& row = rows[r];
    if (row.kind != RowKind::kContent) continue;
    for (std::size_t c = columns.size(); c < row.cells.size(); ++c) {
      if (!row.cells[c].empty()) {
        throw InputError(file, row.line, static_cast<int>(c) + 1,
                         "a value (" + Quoted(row.cells[c]) + ") beyond the last column; the "
                         "header on line " + std::to_string(header.line) + " names " +
                         std::to_string(columns.size()) + " columns");
      }
    }
    const int well_cell = static_cast<int>(well_column) + 1;
    const std::string_view well_text = row.cell(well_column);
    if (well_text.empty()) {
      throw InputError(file, row.line, well_cell,
                       "expected a well name (e.g. B03) in column 'well', found an empty cell");
    }
    const std::optional<WellPosition> position = ParseWellName(well_text);
    if (!position) {
      throw InputError(file, row.line, well_cell,
                       Quoted(well_text) +
                           " is not a well name; expected a row letter A..AF and a column "
                           "number 1..48, e.g. B03 or B3");
    }
    const std::size_t key = static_cast<std::size_t>(position->row) * 48 + position->column;
    if (first_line[key] != 0) {
      throw InputError(file, row.line, well_cell,
                       "well " + WellName(*position) + " is given twice: first on line " +
                           std::to_string(first_line[key]) + "; expected each well once");
    }
    first_line[key] = row.line;
    max_row = std::max(max_row, position->row);
    max_column = std::max(max_column, position->column);

    Entry entry;
    entry.position = *position;
    entry.line = row.line;
    entry.column = well_cell;
    for (std::size_t c = 0; c < columns.size() && c < row.cells.size(); ++c) {
      const std::string_view text = row.cells[c];
      if (columns[c].field == Field::kNone && !text.empty()) {
        throw InputError(file, row.line, static_cast<int>(c) + 1,
                         "a value (" + Quoted(text) + ") in a column with no header; expected a "
                         "column name on line " + std::to_string(header.line));
      }
      SetAttribute(columns[c], text, decimal_comma, file, row.line, static_cast<int>(c) + 1,
                   &entry);
    }
    entries.push_back(std::move(entry));
  }

  layout->form = "list";
  if (geometry) {
    layout->geometry = *geometry;
  } else {
    // ParseWellName allows no more than AF48, which a 1536-well plate holds.
    layout->geometry = PlateGeometry::SmallestHolding(max_row, max_column).value();
  }
  FinishLayout(std::move(entries), file, layout);
}

// ---------------------------------------------------------------------------
// Grid form.

struct GridBlock {
  Attribute attribute;
  int label_line = 0;
  int header_line = 0;
  PlateGeometry size;
  std::vector<std::size_t> data_rows;  // indices into the rows, plate rows A.. in order
};

// Number of columns a numbered header row announces (cells 1.. hold 1, 2, ...),
// 0 if cell 1 is not "1". Throws if the numbering starts but goes wrong.
int NumberedColumns(const SourceRow& row, const std::string& file) {
  if (row.cell(1) != "1") return 0;
  int n = 0;
  for (std::size_t c = 1; c < row.cells.size(); ++c) {
    const std::string_view text = row.cells[c];
    if (text.empty()) {
      // Trailing empty cells are fine; a gap followed by more numbers is not.
      for (std::size_t k = c + 1; k < row.cells.size(); ++k) {
        if (!row.cells[k].empty()) {
          throw InputError(file, row.line, static_cast<int>(c) + 1,
                           "expected column number " + std::to_string(n + 1) +
                               " in the grid header, found an empty cell");
        }
      }
      break;
    }
    if (text != std::to_string(n + 1)) {
      throw InputError(file, row.line, static_cast<int>(c) + 1,
                       "expected column number " + std::to_string(n + 1) +
                           " in the grid header, found " + Quoted(text) +
                           " (columns are numbered 1, 2, 3, ... in order)");
    }
    ++n;
  }
  return n;
}

// Index of the next content row at or after r, skipping blank and comment
// rows; rows.size() if none.
std::size_t NextContentRow(const std::vector<SourceRow>& rows, std::size_t r) {
  while (r < rows.size() && rows[r].kind != RowKind::kContent) ++r;
  return r;
}

// Reads the label and header of the block starting at label_row: its
// attribute and size. Returns the index of the header row.
std::size_t ReadGridHeader(const std::vector<SourceRow>& rows, std::size_t label_row,
                           const std::string& file, GridBlock* block) {
  const SourceRow& label = rows[label_row];
  const std::string_view name = label.cell(0);
  if (name.empty()) {
    throw InputError(file, label.line, 1,
                     "expected a grid label in column 1 (e.g. substrate_uM, role or group) "
                     "above this grid; found an empty cell");
  }
  if (detail::ParseNumber(name, false) || ParseRowLabel(name)) {
    throw InputError(file, label.line, 1,
                     "expected a grid label (e.g. substrate_uM, role or group), found " +
                         Quoted(name) +
                         " (a row outside a grid: is a blank line missing, or a row too many?)");
  }
  block->attribute = ClassifyAttribute(name, file, label.line, 1, "grid label");
  if (block->attribute.field == Field::kWell) {
    throw InputError(file, label.line, 1,
                     "'well' is not a grid attribute; a grid's rows and columns give the wells. "
                     "Expected a label such as substrate_uM, role or group");
  }
  block->label_line = label.line;

  // The column numbers either follow the label on its own line, or come on the
  // next line after an empty (or any non-number) corner cell.
  std::size_t header_row = label_row;
  int columns = NumberedColumns(label, file);
  if (columns == 0) {
    for (std::size_t c = 1; c < label.cells.size(); ++c) {
      if (!label.cells[c].empty()) {
        throw InputError(file, label.line, static_cast<int>(c) + 1,
                         "expected the grid label " + Quoted(name) +
                             " alone on its line (or followed by the column numbers 1, 2, ...), "
                             "found " + Quoted(label.cells[c]));
      }
    }
    header_row = NextContentRow(rows, label_row + 1);
    if (header_row == rows.size()) {
      throw InputError(file, label.line, 1,
                       "the file ends after grid label " + Quoted(name) +
                           "; expected a header row of column numbers 1..12 (or 1..24, 1..48)");
    }
    const SourceRow& header = rows[header_row];
    if (detail::ParseNumber(header.cell(0), false)) {
      throw InputError(file, header.line, 1,
                       "expected an empty corner cell before the column numbers of grid " +
                           Quoted(name) + ", found " + Quoted(header.cell(0)));
    }
    columns = NumberedColumns(header, file);
    const bool list_header = std::any_of(header.cells.begin(), header.cells.end(),
                                         [](const std::string& c) { return EqualsIgnoreCase(c, "well"); });
    if (columns == 0 && list_header) {
      throw InputError(file, label.line, 1,
                       "a line before the list header (line " + std::to_string(header.line) +
                           ") that is not part of the layout; expected the header first, or "
                           "mark this line as a comment by starting it with '#'");
    }
    if (columns == 0) {
      throw InputError(file, header.line, 2,
                       "expected the header row of grid " + Quoted(name) +
                           ": column numbers 1, 2, ... from column 2 on, found " +
                           Quoted(header.cell(1)));
    }
  }
  const SourceRow& header = rows[header_row];
  block->header_line = header.line;
  int plate_rows = 0;
  switch (columns) {
    case 12: plate_rows = 8; break;
    case 24: plate_rows = 16; break;
    case 48: plate_rows = 32; break;
    default:
      throw InputError(file, header.line, 0,
                       "grid " + Quoted(name) + " numbers " + std::to_string(columns) +
                           " columns; expected 12, 24 or 48 (a 96-, 384- or 1536-well plate)");
  }
  block->size = PlateGeometry{plate_rows, columns};
  return header_row;
}

// Reads the lettered rows of a block whose header is at header_row; returns
// the index of the first row after the block.
std::size_t ReadGridRows(const std::vector<SourceRow>& rows, std::size_t header_row,
                         const std::string& file, GridBlock* block) {
  const std::string& name = block->attribute.name;
  const int plate_rows = block->size.rows;
  const int columns = block->size.columns;
  const std::string row_range = "A.." + RowLabel(plate_rows - 1);

  // The plate rows follow at once; comment lines may sit between them.
  std::size_t r = header_row + 1;
  for (int plate_row = 0; plate_row < plate_rows; ++plate_row) {
    while (r < rows.size() && rows[r].kind == RowKind::kComment) ++r;
    const std::string expected = RowLabel(plate_row);
    if (r == rows.size() || rows[r].kind == RowKind::kBlank) {
      const int line = r == rows.size() ? rows.back().line + 1 : rows[r].line;
      throw InputError(file, line, 1,
                       "grid " + Quoted(name) + " (line " + std::to_string(block->label_line) + ") has " +
                           std::to_string(plate_row) + " rows; expected row " + expected +
                           " here: a " + std::to_string(columns) + "-column grid has " +
                           std::to_string(plate_rows) + " rows, " + row_range);
    }
    const SourceRow& row = rows[r];
    const std::string_view row_label = row.cell(0);
    const std::optional<int> found = ParseRowLabel(row_label);
    if (!found || *found != plate_row) {
      throw InputError(file, row.line, 1,
                       "expected row label " + expected + " in grid " + Quoted(name) + ", found " +
                           Quoted(row_label) + " (rows run " + row_range + " in order)");
    }
    const std::size_t values = row.cells.size() - 1;
    if (values < static_cast<std::size_t>(columns)) {
      throw InputError(file, row.line, static_cast<int>(row.cells.size()) + 1,
                       "row " + expected + " of grid " + Quoted(name) + " has " +
                           std::to_string(values) + " cells after its label; expected " +
                           std::to_string(columns) + " (one per column; leave a cell empty "
                           "rather than leaving it out)");
    }
    for (std::size_t c = static_cast<std::size_t>(columns) + 1; c < row.cells.size(); ++c) {
      if (!row.cells[c].empty()) {
        throw InputError(file, row.line, static_cast<int>(c) + 1,
                         "row " + expected + " of grid " + Quoted(name) + " has a value (" +
                             Quoted(row.cells[c]) + ") beyond column " + std::to_string(columns) +
                             "; expected " + std::to_string(columns) + " values");
      }
    }
    block->data_rows.push_back(r);
    ++r;
  }
  // A lettered row straight after the last one is a row too many.
  while (r < rows.size() && rows[r].kind == RowKind::kComment) ++r;
  if (r < rows.size() && rows[r].kind == RowKind::kContent && ParseRowLabel(rows[r].cell(0))) {
    throw InputError(file, rows[r].line, 1,
                     "grid " + Quoted(name) + " (line " + std::to_string(block->label_line) +
                         ") has a row too many (" + Quoted(rows[r].cell(0)) + "); a " +
                         std::to_string(columns) + "-column grid has " +
                         std::to_string(plate_rows) + " rows, " + row_range);
  }
  return r;
}

void ReadGridForm(const std::vector<SourceRow>& rows, std::size_t first_row, char delimiter,
                  const std::string& file, const std::optional<PlateGeometry>& geometry,
                  Layout* layout) {
  std::vector<GridBlock> blocks;
  for (std::size_t r = NextContentRow(rows, first_row); r < rows.size();
       r = NextContentRow(rows, r)) {
    GridBlock block;
    const std::size_t header_row = ReadGridHeader(rows, r, file, &block);
    const std::string& name = block.attribute.name;
    if (!blocks.empty() && block.size != blocks.front().size) {
      throw InputError(file, block.header_line, 0,
                       "grid " + Quoted(name) + " is " + std::to_string(block.size.rows) + " x " +
                           std::to_string(block.size.columns) + " but grid " +
                           Quoted(blocks.front().attribute.name) + " (line " +
                           std::to_string(blocks.front().label_line) + ") is " +
                           std::to_string(blocks.front().size.rows) + " x " +
                           std::to_string(blocks.front().size.columns) +
                           "; expected all grids of a layout to have the same size");
    }
    if (blocks.empty() && geometry && block.size != *geometry) {
      throw InputError(file, block.header_line, 0,
                       "grid " + Quoted(name) + " is " + std::to_string(block.size.rows) + " x " +
                           std::to_string(block.size.columns) + "; expected the " +
                           PlateDescription(*geometry) + " this layout is read for");
    }
    for (const GridBlock& other : blocks) {
      const Field field = block.attribute.field;
      if ((field != Field::kExtra && field == other.attribute.field) ||
          (field == Field::kExtra && other.attribute.field == Field::kExtra &&
           EqualsIgnoreCase(name, other.attribute.name))) {
        throw InputError(file, block.label_line, 1,
                         "a second " +
                             (field == Field::kExtra ? Quoted(name)
                                                     : std::string(FieldWord(field))) +
                             " grid (" + Quoted(name) + "); the first is " +
                             Quoted(other.attribute.name) + " on line " +
                             std::to_string(other.label_line) + ". Expected one grid per attribute");
      }
    }
    r = ReadGridRows(rows, header_row, file, &block);
    blocks.push_back(std::move(block));
  }

  std::vector<std::string_view> samples;
  for (const GridBlock& block : blocks) {
    if (!block.attribute.is_concentration()) continue;
    for (std::size_t r : block.data_rows) {
      for (std::size_t c = 1; c < rows[r].cells.size(); ++c) {
        if (!rows[r].cells[c].empty()) samples.push_back(rows[r].cells[c]);
      }
    }
  }
  const bool decimal_comma = detail::DetectDecimalComma(samples, delimiter);

  const PlateGeometry size = blocks.front().size;
  std::vector<std::optional<Entry>> wells(static_cast<std::size_t>(size.num_wells()));
  for (const GridBlock& block : blocks) {
    for (int plate_row = 0; plate_row < size.rows; ++plate_row) {
      const SourceRow& row = rows[block.data_rows[static_cast<std::size_t>(plate_row)]];
      for (int column = 0; column < size.columns; ++column) {
        const std::string_view text = row.cell(static_cast<std::size_t>(column) + 1);
        if (text.empty()) continue;
        if (block.attribute.is_concentration() && detail::IsMissingMarker(text)) continue;
        std::optional<Entry>& entry = wells[static_cast<std::size_t>(plate_row * size.columns + column)];
        if (!entry) {
          entry.emplace();
          entry->position = WellPosition{plate_row, column};
          entry->line = row.line;
          entry->column = column + 2;
        }
        SetAttribute(block.attribute, text, decimal_comma, file, row.line, column + 2, &*entry);
      }
    }
  }
  std::vector<Entry> entries;
  for (std::optional<Entry>& entry : wells) {
    if (entry) entries.push_back(std::move(*entry));
  }
  if (entries.empty()) {
    throw InputError(file, blocks.front().label_line, 0,
                     "every cell of every grid is empty; expected at least one well with a role, "
                     "concentration or group");
  }
  layout->form = "grids";
  layout->geometry = size;
  FinishLayout(std::move(entries), file, layout);
}

}  // namespace

// ---------------------------------------------------------------------------
// Public functions.

const char* WellRoleToString(WellRole role) {
  switch (role) {
    case WellRole::kSample: return "sample";
    case WellRole::kBlank: return "blank";
    case WellRole::kNoSubstrate: return "no-substrate";
    case WellRole::kStandard: return "standard";
    case WellRole::kEmpty: break;
  }
  return "empty";
}

bool StringToWellRole(std::string_view text, WellRole* role) {
  const std::string word = detail::ToLower(Trim(text));
  if (word == "empty") {
    *role = WellRole::kEmpty;
  } else if (word == "sample") {
    *role = WellRole::kSample;
  } else if (word == "blank") {
    *role = WellRole::kBlank;
  } else if (word == "no-substrate" || word == "no substrate" || word == "no_substrate" ||
             word == "nosubstrate") {
    *role = WellRole::kNoSubstrate;
  } else if (word == "standard" || word == "std") {
    *role = WellRole::kStandard;
  } else {
    return false;
  }
  return true;
}

std::optional<double> MicromolarPerUnit(std::string_view unit) {
  // SI prefixes: m = 1e-3, µ = 1e-6, n = 1e-9, p = 1e-12; 1 M = 1 mol/L.
  if (unit == "M") return 1e6;
  if (unit == "mM") return 1e3;
  // "uM", and µ written as MICRO SIGN (U+00B5) or GREEK SMALL LETTER MU (U+03BC).
  if (unit == "uM" || unit == "\xC2\xB5M" || unit == "\xCE\xBCM") return 1.0;
  if (unit == "nM") return 1e-3;
  if (unit == "pM") return 1e-6;
  return std::nullopt;
}

int Layout::CountRole(WellRole role) const {
  return static_cast<int>(std::count_if(wells.begin(), wells.end(),
                                        [role](const WellInfo& w) { return w.role == role; }));
}

Layout ReadLayoutBytes(std::string_view bytes, const std::string& name,
                       std::optional<PlateGeometry> geometry) {
  if (geometry && (geometry->rows < 1 || geometry->columns < 1 || geometry->rows > 32 ||
                   geometry->columns > 48)) {
    throw InputError(name, 0, 0,
                     "the layout was asked for a " + std::to_string(geometry->rows) + " x " +
                         std::to_string(geometry->columns) +
                         " plate; expected at most 32 rows and 48 columns");
  }
  if (bytes.size() >= 4 && bytes.substr(0, 4) == std::string_view("PK\x03\x04", 4)) {
    throw InputError(name, 0, 0,
                     "this is a workbook (zip archive); a layout is read as text: save the sheet "
                     "as CSV (comma, semicolon or tab separated)");
  }
  detail::DecodedText decoded = detail::DecodeText(bytes, name);
  const char delimiter = detail::DetectDelimiter(decoded.text);
  const detail::TextTable table(std::move(decoded.text), delimiter);
  const std::vector<SourceRow> rows = ReadRows(table);

  Layout layout;
  layout.path = name;
  const std::size_t first = NextContentRow(rows, 0);
  if (first == rows.size()) {
    throw InputError(name, 0, 0,
                     "the layout holds only comments and blank lines; expected a header row "
                     "(e.g. well,role,substrate_uM) or a grid label (e.g. substrate_uM)");
  }
  const SourceRow& top = rows[first];
  const bool list = std::any_of(top.cells.begin(), top.cells.end(),
                                [](const std::string& c) { return EqualsIgnoreCase(c, "well"); });
  if (list) {
    ReadListForm(rows, first, delimiter, name, geometry, &layout);
    return layout;
  }
  // Not a list header: a grid label (alone or followed by column numbers), or
  // a header row that forgot its well column.
  const std::size_t filled = static_cast<std::size_t>(std::count_if(
      top.cells.begin(), top.cells.end(), [](const std::string& c) { return !c.empty(); }));
  if (filled > 1 && !top.cells[0].empty() && NumberedColumns(top, name) == 0) {
    throw InputError(name, top.line, 0,
                     "expected either a list header with a 'well' column (e.g. "
                     "well,role,substrate_uM) or a grid label alone on its line (e.g. "
                     "substrate_uM); found neither");
  }
  ReadGridForm(rows, first, delimiter, name, geometry, &layout);
  return layout;
}

Layout ReadLayoutFile(const std::string& path, std::optional<PlateGeometry> geometry) {
  std::error_code error;
  if (std::filesystem::is_directory(path, error)) {
    throw InputError(path, 0, 0, "this is a folder; expected a layout file (CSV)");
  }
  const std::uintmax_t size = std::filesystem::file_size(path, error);
  if (!error && size > kMaxLayoutBytes) {
    throw InputError(path, 0, 0,
                     "the file has " + std::to_string(size) +
                         " bytes; a layout (at most 1536 wells) is far smaller. Expected a "
                         "layout file, not a data export");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError(path, 0, 0,
                     std::string("cannot open the layout file: ") + std::strerror(errno));
  }
  std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  if (in.bad()) throw InputError(path, 0, 0, "cannot read the layout file");
  return ReadLayoutBytes(bytes, path, geometry);
}

}  // namespace ratewell
