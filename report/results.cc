#include "report/results.h"

#include <charconv>
#include <cmath>
#include <sstream>

#include "report/files.h"

namespace ratewell {
namespace {

nlohmann::json NumberOrNull(double value) {
  if (!std::isfinite(value)) return nullptr;
  return value;
}

nlohmann::json NumberOrNull(const std::optional<double>& value) {
  if (!value) return nullptr;
  return NumberOrNull(*value);
}

nlohmann::json InputEntry(const std::string& path, const std::string& kind, const std::string& format) {
  return {{"path", path}, {"kind", kind}, {"sha256", Sha256OfFile(path)}, {"format", format}};
}

nlohmann::json RateJson(const WellRate& w) {
  const RateEstimate& e = w.estimate;
  if (!w.HasRate()) return nullptr;
  nlohmann::json rate = {
      {"value", w.rate_uM_per_min},
      {"unit", "uM/min"},
      {"se", NumberOrNull(w.se_uM_per_min)},
      {"ci95", {NumberOrNull(w.ci95_lo_uM_per_min), NumberOrNull(w.ci95_hi_uM_per_min)}},
      {"window_min", {e.window_start_min, e.window_end_min}},
      {"points", e.points},
      {"method", RateMethodToString(e.method_used)},
      {"window_end", WindowEndToString(e.window_end)},
      {"r_squared", NumberOrNull(e.r_squared)},
      {"uncorrected_uM_per_min", e.rate_uM_per_min},
      {"background_uM_per_min", w.background_uM_per_min},
      {"lag_tau_min", NumberOrNull(e.lag_tau_min)},
      {"substrate_consumed_fraction", NumberOrNull(e.substrate_consumed_fraction)}};
  return rate;
}

}  // namespace

const char* SoftwareVersion() { return RATEWELL_VERSION; }

nlohmann::json ResultsJson(const Analysis& analysis) {
  nlohmann::json j;
  j["schema"] = kResultsSchemaVersion;
  j["software"] = {{"name", "ratewell"}, {"version", SoftwareVersion()}};

  nlohmann::json inputs = nlohmann::json::array();
  for (const Plate& plate : analysis.plates) {
    inputs.push_back(InputEntry(plate.report.path, "plate", plate.report.format));
  }
  inputs.push_back(InputEntry(analysis.request.layout_path, "layout", "layout/" + analysis.layout.form));
  if (!analysis.request.assay_path.empty()) {
    inputs.push_back(InputEntry(analysis.request.assay_path, "assay", "json"));
  }
  j["inputs"] = inputs;

  nlohmann::json settings = AssaySettingsToJson(analysis.settings);
  const ReadOptions& read = analysis.request.read_options;
  settings["reading"] = {{"table", TableLayoutToString(read.layout)},
                         {"time_unit", TimeUnitToString(read.time_unit)},
                         {"sheet", read.sheet},
                         {"extra_overflow_markers", read.overflow_markers}};
  j["settings"] = settings;

  nlohmann::json wells = nlohmann::json::array();
  for (const PlateRates& plate : analysis.plate_rates) {
    for (const WellRate& w : plate.wells) {
      nlohmann::json well = {
          {"plate", plate.plate},
          {"well", w.name},
          {"role", WellRoleToString(w.role)},
          {"group", w.group},
          {"substrate_uM", NumberOrNull(w.substrate_uM)},
          {"inhibitor_uM", NumberOrNull(w.inhibitor_uM)},
          {"enzyme_nM", NumberOrNull(w.enzyme_nM)},
          {"pathlength_cm", NumberOrNull(w.pathlength_cm)},
          {"rate", RateJson(w)},
          {"slope_A_per_min", w.estimate.ok ? NumberOrNull(w.estimate.slope_A_per_min) : nullptr},
          {"turnover_per_s", NumberOrNull(w.turnover_per_s)},
          {"specific_activity_U_per_mg", NumberOrNull(w.specific_activity_U_per_mg)},
          {"kinetic_use", w.role == WellRole::kSample && w.HasRate() && !w.excluded},
          {"flags", w.flags},
          {"excluded", w.excluded},
          {"reason", w.excluded ? nlohmann::json(w.exclusion_reason) : nlohmann::json(nullptr)}};
      if (!w.estimate.ok) well["message"] = w.estimate.message;
      wells.push_back(std::move(well));
    }
  }
  j["wells"] = wells;
  j["fits"] = nlohmann::json::array();
  j["preferred_model"] = nullptr;
  j["warnings"] = analysis.warnings;
  return j;
}

namespace {

std::string CsvNumber(double value) {
  if (!std::isfinite(value)) return "NA";
  char buffer[32];
  const auto [end, ec] = std::to_chars(buffer, buffer + sizeof buffer, value);
  return ec == std::errc() ? std::string(buffer, end) : "NA";
}

std::string CsvNumber(const std::optional<double>& value) {
  return value ? CsvNumber(*value) : std::string("NA");
}

std::string CsvText(const std::string& text) {
  if (text.find_first_of(",\"\n\r") == std::string::npos) return text;
  std::string quoted = "\"";
  for (char c : text) {
    if (c == '"') quoted += '"';
    quoted += c;
  }
  return quoted + "\"";
}

}  // namespace

std::string RatesCsv(const Analysis& analysis) {
  std::ostringstream csv;
  csv << "plate,well,role,group,substrate_uM,inhibitor_uM,enzyme_nM,pathlength_cm,"
         "rate_uM_per_min,rate_se_uM_per_min,rate_ci95_lo_uM_per_min,rate_ci95_hi_uM_per_min,"
         "uncorrected_rate_uM_per_min,background_uM_per_min,slope_A_per_min,r_squared,points,"
         "window_start_min,window_end_min,window_end,method,lag_tau_min,turnover_per_s,"
         "specific_activity_U_per_mg,flags,excluded,reason\n";
  for (const PlateRates& plate : analysis.plate_rates) {
    for (const WellRate& w : plate.wells) {
      const RateEstimate& e = w.estimate;
      const bool has = w.HasRate();
      std::string flags;
      for (const std::string& f : w.flags) flags += (flags.empty() ? "" : ";") + f;
      csv << CsvText(plate.plate) << ',' << w.name << ',' << WellRoleToString(w.role) << ','
          << CsvText(w.group) << ',' << CsvNumber(w.substrate_uM) << ',' << CsvNumber(w.inhibitor_uM)
          << ',' << CsvNumber(w.enzyme_nM) << ',' << CsvNumber(w.pathlength_cm) << ','
          << CsvNumber(w.rate_uM_per_min) << ',' << CsvNumber(w.se_uM_per_min) << ','
          << CsvNumber(w.ci95_lo_uM_per_min) << ',' << CsvNumber(w.ci95_hi_uM_per_min) << ','
          << (has ? CsvNumber(e.rate_uM_per_min) : "NA") << ','
          << (has ? CsvNumber(w.background_uM_per_min) : "NA") << ','
          << (e.ok ? CsvNumber(e.slope_A_per_min) : "NA") << ','
          << (e.ok ? CsvNumber(e.r_squared) : "NA") << ',' << (e.ok ? std::to_string(e.points) : "NA")
          << ',' << (e.ok ? CsvNumber(e.window_start_min) : "NA") << ','
          << (e.ok ? CsvNumber(e.window_end_min) : "NA") << ','
          << (e.ok ? WindowEndToString(e.window_end) : "NA") << ','
          << (e.ok ? RateMethodToString(e.method_used) : "NA") << ',' << CsvNumber(e.lag_tau_min)
          << ',' << CsvNumber(w.turnover_per_s) << ',' << CsvNumber(w.specific_activity_U_per_mg)
          << ',' << CsvText(flags) << ',' << (w.excluded ? "true" : "false") << ','
          << (w.excluded ? CsvText(w.exclusion_reason) : "NA") << '\n';
    }
  }
  return csv.str();
}

}  // namespace ratewell
