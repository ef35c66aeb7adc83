// Layout: what is in each well of a plate.
//
// A layout file is a CSV (comma, semicolon or tab separated; UTF-8 or UTF-16
// with BOM) in one of two forms:
//   list  - a header row naming columns, then one row per well:
//             well,role,substrate_uM,inhibitor_uM,enzyme_nM,standard_uM,group
//           Only `well` is required. Other columns are kept as text in
//           WellInfo::extra.
//   grids - labelled blocks, one per attribute: a line naming the attribute
//           (e.g. "substrate_mM" or "role"), then a header row of column
//           numbers 1..12 (or 24, 48) and one lettered row per plate row.
// Concentration columns carry their unit in the name (substrate_mM,
// inhibitor_nM, enzyme_uM, standard_uM; units M, mM, uM or µM, nM, pM) and are
// converted to the field's unit. Roles: sample, blank (no enzyme),
// no-substrate, standard (NADH series; standard_uM gives its concentration),
// empty. Wells the layout does not name are empty. A listed well without a
// role is a standard if it has a standard concentration and no substrate,
// else a sample. Only non-empty extra cells are kept.
//
// A layout that names a well outside the plate, repeats a well, or uses an
// unknown role, unit or column is rejected with an InputError naming file, line
// and column.
#pragma once

#include <limits>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "importers/plate.h"

namespace ratewell {

enum class WellRole { kEmpty, kSample, kBlank, kNoSubstrate, kStandard };
// "empty", "sample", "blank", "no-substrate", "standard"
const char* WellRoleToString(WellRole role);
// Also accepts the obvious spellings: case-insensitive, "no substrate",
// "no_substrate", "nosubstrate", "std".
bool StringToWellRole(std::string_view text, WellRole* role);

struct WellInfo {
  WellRole role = WellRole::kEmpty;
  // Concentrations in micromolar; NaN when the layout does not give one.
  // A sample or blank with no inhibitor column has inhibitor_uM = 0.
  double substrate_uM = std::numeric_limits<double>::quiet_NaN();
  double inhibitor_uM = 0.0;
  double enzyme_nM = std::numeric_limits<double>::quiet_NaN();
  double standard_uM = std::numeric_limits<double>::quiet_NaN();  // NADH in a standard well
  std::string group;                          // replicate group label, "" if none
  std::map<std::string, std::string> extra;   // other columns, by header
  int line = 0;                               // layout line that defined the well, 0 if none
};

struct Layout {
  std::string path;
  std::string form;  // "list" or "grids"
  PlateGeometry geometry;
  std::vector<WellInfo> wells;  // indexed by well index (row * columns + column)
  std::vector<std::string> warnings;

  const WellInfo& at(int well) const { return wells[static_cast<std::size_t>(well)]; }
  int CountRole(WellRole role) const;
};

// Reads a layout. geometry: the plate the layout is for; when nullopt the
// smallest standard plate holding every named well is used (a grid form fixes
// its own size).
Layout ReadLayoutFile(const std::string& path,
                      std::optional<PlateGeometry> geometry = std::nullopt);
Layout ReadLayoutBytes(std::string_view bytes, const std::string& name,
                       std::optional<PlateGeometry> geometry = std::nullopt);

// Micromolar per one of unit: "M" -> 1e6, "mM" -> 1e3, "uM"/"µM" -> 1,
// "nM" -> 1e-3, "pM" -> 1e-6; nullopt for anything else. Case matters for M/m.
std::optional<double> MicromolarPerUnit(std::string_view unit);

}  // namespace ratewell
