#include "cli/commands.h"

#include <CLI/CLI.hpp>

#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <exception>
#include <filesystem>
#include <set>
#include <iomanip>
#include <iostream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "fitting/analysis.h"
#include "importers/file_io.h"
#include "importers/input_error.h"
#include "importers/read_plate.h"
#include "report/files.h"
#include "report/pdf_report.h"
#include "report/results.h"
#include "simulate/simulator.h"

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

// A one-line progress bar on a terminal; silent when err is not a terminal.
class ProgressBar {
 public:
  explicit ProgressBar(std::ostream& err, bool enabled) : err_(err), enabled_(enabled) {}
  ~ProgressBar() { Finish(); }
  void Update(double fraction, const std::string& what) {
    if (!enabled_) return;
    constexpr int kWidth = 30;
    const int filled = static_cast<int>(std::lround(std::clamp(fraction, 0.0, 1.0) * kWidth));
    std::string label = what.size() > 40 ? "..." + what.substr(what.size() - 37) : what;
    err_ << "\r[" << std::string(static_cast<std::size_t>(filled), '#')
         << std::string(static_cast<std::size_t>(kWidth - filled), ' ') << "] " << std::setw(3)
         << static_cast<int>(std::lround(fraction * 100)) << "% " << std::left << std::setw(40) << label
         << std::right << std::flush;
    shown_ = true;
  }
  void Finish() {
    if (shown_) err_ << "\n" << std::flush;
    shown_ = false;
  }

 private:
  std::ostream& err_;
  bool enabled_;
  bool shown_ = false;
};

bool IsTerminal(const std::ostream& err) { return &err == &std::cerr && isatty(STDERR_FILENO) == 1; }

namespace fs = std::filesystem;

// The output folder: --out, or a new folder named after the first plate in
// the current directory. Refuses a folder that holds an input file, so that
// nothing is ever written beside or over an input.
fs::path ChooseOutputFolder(const std::string& requested, const std::vector<std::string>& inputs) {
  fs::path out;
  if (!requested.empty()) {
    out = requested;
  } else {
    const std::string stem = fs::path(inputs.front()).stem().string();
    out = fs::current_path() / (stem + "-results");
    for (int k = 2; fs::exists(out); ++k) out = fs::current_path() / (stem + "-results-" + std::to_string(k));
  }
  std::error_code ec;
  const fs::path out_abs = fs::weakly_canonical(fs::absolute(out), ec);
  for (const std::string& input : inputs) {
    if (input.empty()) continue;
    const fs::path parent = fs::weakly_canonical(fs::absolute(input), ec).parent_path();
    if (!ec && parent == out_abs) {
      throw InputError(requested, 0, 0,
                       "the output folder holds the input file " + input +
                           "; expected a separate folder so that no input is overwritten or "
                           "joined by outputs");
    }
  }
  return out;
}

std::set<std::string> ParseOutputs(const std::string& list) {
  std::set<std::string> outputs;
  std::stringstream s(list);
  std::string item;
  while (std::getline(s, item, ',')) {
    if (item.empty()) continue;
    if (item != "json" && item != "csv" && item != "pdf") {
      throw InputError("--outputs", 0, 0,
                       "unknown output '" + item + "'; expected json, csv or pdf");
    }
    outputs.insert(item);
  }
  if (outputs.empty()) {
    throw InputError("--outputs", 0, 0, "no output named; expected one or more of json, csv, pdf");
  }
  return outputs;
}

// "12.3 uM/min (95 % CI 11.9 to 12.7, profile)" or the reason it is missing.
std::string DescribeEstimate(const ParameterEstimate& p) {
  std::string text = FormatNumber(p.value, 4) + " " + p.unit;
  if (p.fixed) return text + " (held fixed)";
  if (p.ci.determined) {
    text += " (" + FormatNumber(p.ci.level * 100, 3) + " % CI " + FormatNumber(p.ci.lower, 4) +
            " to " + FormatNumber(p.ci.upper, 4) + ", " + IntervalMethodToString(p.ci.method) + ")";
  } else {
    text += " (interval not determined: " + p.ci.reason + ")";
  }
  return text;
}

// The kinetic result in a few lines; true when it needs a person (no usable
// fit, or a parameter of the preferred model without an interval).
bool PrintKinetics(const Analysis& analysis, std::ostream& out) {
  const KineticAnalysis& k = analysis.kinetics;
  if (!k.attempted) {
    out << "no kinetic fit: " << k.reason << "\n";
    return analysis.UsableSampleWells() > 0;
  }
  const KineticFit* fit = k.choice.Preferred();
  if (fit == nullptr) {
    out << "kinetic fit failed: " << k.choice.reason << "\n";
    return true;
  }
  out << "kinetic fit (" << k.data.points.size() << " wells): " << k.choice.reason << "\n";
  bool undetermined = false;
  for (const ParameterEstimate& p : fit->parameters) {
    out << "  " << p.name << " = " << DescribeEstimate(p) << "\n";
    if (!p.fixed && !p.ci.determined) undetermined = true;
  }
  for (const ParameterEstimate& p : fit->derived) out << "  " << p.name << " = " << DescribeEstimate(p) << "\n";
  return undetermined;
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

  // simulate
  CLI::App* simulate = app.add_subcommand(
      "simulate", "Write synthetic coupled-assay plates with known truth from a scenario file");
  std::string scenario_path;
  std::string simulate_out;
  simulate->add_option("--scenario", scenario_path, "Scenario file (JSON)")->required();
  simulate->add_option("--out", simulate_out, "Output folder (created if missing)")->required();

  // analyze
  CLI::App* analyze = app.add_subcommand(
      "analyze", "Initial rates, kinetic fits with intervals and reports from plate files");
  AnalysisRequest request;
  ReadFlags analyze_flags;
  std::string out_dir;
  std::string outputs_list = "json,csv,pdf";
  analyze->add_option("PLATE_FILE", request.plate_paths, "Plate-reader exports of one experiment")
      ->required();
  analyze->add_option("--layout", request.layout_path, "Layout CSV: what is in each well")->required();
  analyze->add_option("--assay", request.assay_path, "ASSAY.json settings (default: built-in defaults)");
  analyze->add_option("--out", out_dir,
                      "Output folder (default: a new folder named after the first plate, in the "
                      "current directory)");
  analyze->add_option("--outputs", outputs_list,
                      "Which outputs to write: json (results.json), csv (rates.csv and "
                      "parameters.csv), pdf (report.pdf); comma separated (default: all)");
  std::string interval_name;
  analyze->add_option("--model", request.model,
                      "Kinetic model: auto (default: chosen within the family the layout allows) "
                      "or one of michaelis-menten, substrate-inhibition, hill, competitive, "
                      "uncompetitive, noncompetitive, mixed, morrison, four-parameter-logistic, "
                      "four-parameter-logistic-log10");
  analyze->add_option("--ci", interval_name,
                      "Confidence intervals: asymptotic, profile (default) or bootstrap");
  AddReadFlags(analyze, &analyze_flags);

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
    if (simulate->parsed()) {
      ProgressBar bar(err, IsTerminal(err));
      const SimulationOutput result = RunScenarioFile(
          scenario_path, simulate_out, [&](double f) { bar.Update(f, "simulating " + scenario_path); });
      bar.Finish();
      out << "ratewell simulate: " << result.run << ": " << result.wells_used << " wells, "
          << result.reads << " reads, " << result.channels << " wavelength(s)";
      if (result.saturated_points > 0) out << ", " << result.saturated_points << " saturated points";
      out << "\n";
      for (const std::string& f : result.files_written) out << "  wrote " << f << "\n";
      return kExitOk;
    }
    if (analyze->parsed()) {
      request.read_options = ToReadOptions(analyze_flags);
      if (!interval_name.empty()) {
        IntervalMethod method;
        if (!StringToIntervalMethod(interval_name, &method)) {
          throw InputError("--ci", 0, 0,
                           "unknown interval method '" + interval_name +
                               "'; expected asymptotic, profile or bootstrap");
        }
        request.interval_method = method;
      }
      KineticModel named;
      if (!request.model.empty() && request.model != "auto" &&
          !StringToKineticModel(request.model, &named)) {
        std::string ids = "auto";
        for (KineticModel m : AllKineticModels()) ids += std::string(", ") + KineticModelToString(m);
        throw InputError("--model", 0, 0,
                         "unknown model '" + request.model + "'; expected one of " + ids);
      }
      const std::set<std::string> outputs = ParseOutputs(outputs_list);
      std::vector<std::string> inputs = request.plate_paths;
      inputs.push_back(request.layout_path);
      if (!request.assay_path.empty()) inputs.push_back(request.assay_path);
      const fs::path folder = ChooseOutputFolder(out_dir, inputs);
      ProgressBar bar(err, IsTerminal(err));
      const Analysis analysis =
          RunAnalysis(request, [&](double f, const std::string& what) { bar.Update(f, what); });
      bar.Finish();
      fs::create_directories(folder);
      const nlohmann::json results = ResultsJson(analysis);
      if (outputs.count("json")) {
        WriteFileAtomically((folder / "results.json").string(), results.dump(2) + "\n");
      }
      if (outputs.count("csv")) {
        WriteFileAtomically((folder / "rates.csv").string(), RatesCsv(analysis));
        WriteFileAtomically((folder / "parameters.csv").string(), ParametersCsv(analysis));
      }
      if (outputs.count("pdf")) {
        bar.Update(1.0, "writing report.pdf");
        EnsureGuiApplication();
        WritePdfReport(analysis, results, (folder / "report.pdf").string());
        bar.Finish();
      }
      const int usable = analysis.UsableSampleWells();
      const int failed = analysis.FailedSampleWells();
      out << "ratewell analyze: " << analysis.plates.size() << " plate(s), " << usable
          << " sample wells with a rate";
      if (failed > 0) out << ", " << failed << " without";
      out << "\n";
      int listed = 0;
      for (const PlateRates& plate : analysis.plate_rates) {
        for (const WellRate& w : plate.wells) {
          if (w.role != WellRole::kSample || w.HasRate()) continue;
          if (++listed > 8) break;
          out << "  no rate: " << w.name << " (" << plate.plate << "): " << w.estimate.message << "\n";
        }
      }
      const bool fit_needs_review = PrintKinetics(analysis, out);
      for (const std::string& w : analysis.warnings) out << "  warning: " << w << "\n";
      out << "results in " << folder.string();
      if (outputs.count("pdf")) out << " (report: " << (folder / "report.pdf").string() << ")";
      out << "\n";
      out << "Results support, and do not replace, the lab's approved procedures and a qualified "
             "reviewer.\n";
      return failed > 0 || usable == 0 || fit_needs_review ? kExitNeedsReview : kExitOk;
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
