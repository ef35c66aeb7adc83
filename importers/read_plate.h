// Reading plate-reader export files.
//
// ReadPlateFile() opens a file, works out how it is written and returns a
// Plate. Four table layouts are understood, as text (CSV, semicolon or tab
// separated) or inside an .xlsx workbook:
//   long  - one row per (well, time[, wavelength]) with a value column;
//   wide  - a time column (optionally temperature), then one column per well;
//   grid  - one 8x12 / 16x24 / 32x48 block per read, headed by its time (and
//           wavelength), rows lettered, columns numbered.
// Text may be UTF-8 (with or without BOM) or UTF-16 LE/BE with BOM, with CRLF
// or LF line ends, and may use a decimal comma. Lines before the table
// (instrument preamble) are skipped.
//
// Times: numbers whose unit the header gives ("Time (s)", "time [min]", "t/s"),
// or h:mm:ss(.fff) / mm:ss. A number with no unit is taken in
// ReadOptions::time_unit, or as seconds with a warning.
//
// Value cells: numbers become kValid points; empty cells (and NA, N/A, NaN)
// become kMissing; overflow markers become kSaturated (see IsOverflowMarker);
// anything else is an InputError naming file, line, column and what was expected.
//
// Errors: every problem with the file is reported by throwing InputError. The
// readers never crash on any input and never return a NaN that is not marked
// saturated or missing.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "importers/plate.h"

namespace ratewell {

// The four string functions below are defined in importers/detail/cells.cc.
enum class TableLayout { kAuto, kLong, kWide, kGrid };
// "auto", "long", "wide", "grid" (both ways); StringToTableLayout returns false
// for an unknown word.
const char* TableLayoutToString(TableLayout layout);
bool StringToTableLayout(std::string_view text, TableLayout* layout);

enum class TimeUnit { kAuto, kSeconds, kMinutes, kHours };
const char* TimeUnitToString(TimeUnit unit);  // "auto", "s", "min", "h"
// Accepts s, sec, secs, second(s), min, mins, minute(s), m, h, hr, hour(s); any case.
bool StringToTimeUnit(std::string_view text, TimeUnit* unit);

struct ReadOptions {
  // Which table layout to read; kAuto detects it from the first rows.
  TableLayout layout = TableLayout::kAuto;
  // Unit of bare time numbers whose header names no unit. kAuto: seconds, with
  // a warning in the report.
  TimeUnit time_unit = TimeUnit::kAuto;
  // Worksheet of an .xlsx workbook; empty: the first sheet.
  std::string sheet;
  // Extra overflow markers (compared case-insensitively, after trimming), on
  // top of the built-in list.
  std::vector<std::string> overflow_markers;
  // Wavelength given to the single channel of a file that names none.
  double assumed_wavelength_nm = 340.0;
};

// Reads the file at path. Throws InputError (file, line, column, reason) if the
// file cannot be opened or read.
Plate ReadPlateFile(const std::string& path, const ReadOptions& options = {});

// Same, from bytes already in memory; name is used in messages and the
// report. Used by tests and fuzzers.
Plate ReadPlateBytes(std::string_view bytes, const std::string& name,
                     const ReadOptions& options = {});

}  // namespace ratewell
