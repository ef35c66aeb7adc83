#include "cli/commands.h"

#include <CLI/CLI.hpp>

#include <cmath>
#include <exception>
#include <iomanip>
#include <iostream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "importers/input_error.h"
#include "importers/read_plate.h"

namespace ratewell::cli {
namespace {

struct ReadFlags {
  std::string table = "auto";
  std::string time_unit = "auto";
  std::string sheet;
  std::vector<std::string> overflow_markers;
};

// Adds the options that control how plate files are read.
void AddReadFlags(CLI::App* command, ReadFlags* flags) {
  command->add_option("--table", flags->table,
                      "Table layout of the plate file: auto, long, wide or grid")
      ->check(CLI::IsMember({"auto", "long", "wide", "grid"}));
  command->add_option("--time-unit", flags->time_unit,
                      "Unit of time numbers whose header names none: auto (seconds, with a "
                      "warning), s, min or h")
      ->check(CLI::IsMember({"auto", "s", "min", "h"}));
  command->add_option("--sheet", flags->sheet, "Worksheet of an .xlsx workbook (default: first)");
  command->add_option("--overflow-marker", flags->overflow_markers,
                      "Extra word the instrument writes for an over-range reading (repeatable)");
}

ReadOptions ToReadOptions(const ReadFlags& flags) {
  ReadOptions options;
  StringToTableLayout(flags.table, &options.layout);
  StringToTimeUnit(flags.time_unit, &options.time_unit);
  options.sheet = flags.sheet;
  options.overflow_markers = flags.overflow_markers;
  return options;
}

nlohmann::json PairOrNull(const std::optional<std::pair<double, double>>& range) {
  if (!range) return nullptr;
  return nlohmann::json::array({range->first, range->second});
}

// The `inspect --json` object of DESIGN §4.
nlohmann::json InspectJson(const Plate& plate) {
  const ImportReport& r = plate.report;
  nlohmann::json j;
  j["path"] = r.path;
  j["format"] = r.format;
  j["encoding"] = r.encoding;
  j["delimiter"] = r.delimiter.empty() ? nlohmann::json(nullptr) : nlohmann::json(r.delimiter);
  if (!r.sheet.empty()) j["sheet"] = r.sheet;
  j["decimal_comma"] = r.decimal_comma;
  j["time_unit"] = r.time_unit;
  j["plate"] = {{"rows", plate.geometry.rows},
                {"columns", plate.geometry.columns},
                {"wells", plate.geometry.num_wells()}};
  j["wells_with_data"] = plate.WellsWithData();
  j["reads"] = plate.Reads();
  j["time_span_min"] = PairOrNull(plate.TimeSpanMin());
  j["wavelengths_nm"] = plate.wavelengths_nm;
  j["temperature_C"] = PairOrNull(plate.TemperatureRangeC());
  j["saturated_points"] = plate.CountPoints(PointStatus::kSaturated);
  j["missing_points"] = plate.CountPoints(PointStatus::kMissing);
  j["warnings"] = r.warnings;
  return j;
}

std::string FormatNumber(double value, int precision = 4) {
  std::ostringstream s;
  s << std::setprecision(precision) << value;
  return s.str();
}

void PrintInspect(const Plate& plate, std::ostream& out) {
  const ImportReport& r = plate.report;
  out << r.path << "\n";
  out << "  format            " << r.format << "\n";
  out << "  encoding          " << r.encoding;
  if (!r.delimiter.empty()) out << ", " << r.delimiter << " separated";
  if (r.decimal_comma) out << ", decimal comma";
  out << "\n";
  if (!r.sheet.empty()) out << "  sheet             " << r.sheet << "\n";
  out << "  plate             " << plate.geometry.num_wells() << " wells (" << plate.geometry.rows
      << " x " << plate.geometry.columns << ")\n";
  out << "  wells with data   " << plate.WellsWithData() << "\n";
  out << "  reads             " << plate.Reads() << "\n";
  if (const auto span = plate.TimeSpanMin()) {
    out << "  time span         " << FormatNumber(span->first) << " to " << FormatNumber(span->second)
        << " min (times read as " << r.time_unit << ")\n";
  }
  out << "  wavelengths       ";
  for (std::size_t i = 0; i < plate.wavelengths_nm.size(); ++i) {
    out << (i ? ", " : "") << FormatNumber(plate.wavelengths_nm[i], 6) << " nm";
  }
  out << "\n";
  if (const auto t = plate.TemperatureRangeC()) {
    out << "  temperature       " << FormatNumber(t->first, 3) << " to " << FormatNumber(t->second, 3)
        << " °C\n";
  } else {
    out << "  temperature       not recorded\n";
  }
  out << "  saturated points  " << plate.CountPoints(PointStatus::kSaturated) << "\n";
  out << "  missing points    " << plate.CountPoints(PointStatus::kMissing) << "\n";
  if (r.warnings.empty()) {
    out << "  warnings          none\n";
  } else {
    out << "  warnings\n";
    for (const std::string& w : r.warnings) out << "    - " << w << "\n";
  }
}

}  // namespace

int Run(int argc, const char* const* argv, std::ostream& out, std::ostream& err) {
  CLI::App app{
      "ratewell: initial rates, kinetic constants and lot verdicts from NADH-linked "
      "plate-reader assays"};
  app.require_subcommand(1);
  app.set_version_flag("--version", std::string("ratewell ") + RATEWELL_VERSION);

  // inspect
  CLI::App* inspect = app.add_subcommand("inspect", "Show what ratewell reads in a plate file");
  std::string inspect_path;
  bool inspect_json = false;
  ReadFlags inspect_flags;
  inspect->add_option("PLATE_FILE", inspect_path, "Plate-reader export (.csv, .txt, .tsv, .xlsx)")
      ->required();
  inspect->add_flag("--json", inspect_json, "Print one JSON object instead of text");
  AddReadFlags(inspect, &inspect_flags);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    // Help and version are successful exits; anything else is a usage error.
    const int code = app.exit(e, out, err);
    return code == 0 ? kExitOk : kExitBadInput;
  }

  try {
    if (inspect->parsed()) {
      const Plate plate = ReadPlateFile(inspect_path, ToReadOptions(inspect_flags));
      if (inspect_json) {
        out << InspectJson(plate).dump(2) << "\n";
      } else {
        PrintInspect(plate, out);
      }
      return kExitOk;
    }
  } catch (const InputError& e) {
    err << "ratewell: " << e.what() << "\n";
    return kExitBadInput;
  } catch (const std::exception& e) {
    err << "ratewell: " << e.what() << "\n";
    return kExitBadInput;
  }
  return kExitOk;
}

int Main(int argc, char** argv) { return Run(argc, argv, std::cout, std::cerr); }

}  // namespace ratewell::cli
