#include "report/results.h"

#include <charconv>
#include <cmath>
#include <set>
#include <sstream>
#include <utility>

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

// A parameter (fitted or derived) as results.json writes it: a number that
// could not be determined is null with the reason beside it.
nlohmann::json ParameterJson(const ParameterEstimate& p) {
  nlohmann::json j = {{"value", NumberOrNull(p.value)}, {"unit", p.unit}};
  j["se"] = p.se_determined ? NumberOrNull(p.se) : nlohmann::json(nullptr);
  if (!p.se_determined && !p.fixed) j["se_reason"] = p.se_reason;
  if (p.ci.determined) {
    j["ci95"] = {NumberOrNull(p.ci.lower), NumberOrNull(p.ci.upper)};
  } else {
    j["ci95"] = nullptr;
    j["ci_reason"] = p.fixed ? std::string("held fixed, not fitted") : p.ci.reason;
  }
  j["ci_method"] = IntervalMethodToString(p.ci.method);
  j["ci_level"] = p.ci.level;
  if (!p.ci.note.empty()) j["ci_note"] = p.ci.note;
  j["determined"] = p.ci.determined && p.se_determined;
  j["fixed"] = p.fixed;
  j["at_bound"] = p.at_bound;
  if (!p.group.empty()) j["group"] = p.group;
  return j;
}

nlohmann::json FitJson(const KineticFit& fit, double delta_aicc, double akaike_weight,
                       bool preferred) {
  nlohmann::json parameters = nlohmann::json::object();
  for (const ParameterEstimate& p : fit.parameters) parameters[p.name] = ParameterJson(p);
  nlohmann::json derived = nlohmann::json::object();
  for (const ParameterEstimate& p : fit.derived) derived[p.name] = ParameterJson(p);
  nlohmann::json warnings = nlohmann::json::array();
  for (const FitWarning& w : fit.warnings) {
    warnings.push_back({{"code", w.code}, {"message", w.message}});
  }
  nlohmann::json j = {
      {"model", KineticModelToString(fit.model)},
      {"equation", std::string(DescribeModel(fit.model).equation)},
      {"preferred", preferred},
      {"n", fit.n},
      {"num_parameters", fit.num_parameters},
      {"dof", fit.dof},
      {"ssr", NumberOrNull(fit.ssr)},
      {"residual_sd", NumberOrNull(fit.residual_sd)},
      {"aic", NumberOrNull(fit.aic)},
      {"aicc", NumberOrNull(fit.aicc)},
      {"delta_aicc", NumberOrNull(delta_aicc)},
      {"akaike_weight", NumberOrNull(akaike_weight)},
      {"converged", fit.converged},
      {"termination", FitTerminationToString(fit.summary.termination)},
      {"message", fit.summary.message},
      {"weighting", WeightingToString(fit.weighting)},
      {"loss", RobustLossToString(fit.loss)},
      {"parameters", parameters},
      {"derived", derived},
      {"warnings", warnings}};
  if (fit.runs_test.computed) {
    j["runs_test"] = {{"runs", fit.runs_test.runs},
                      {"positive", fit.runs_test.positive},
                      {"negative", fit.runs_test.negative},
                      {"expected_runs", fit.runs_test.expected_runs},
                      {"p_value", NumberOrNull(fit.runs_test.p_value)}};
  } else {
    j["runs_test"] = nullptr;
  }
  if (fit.bootstrap.run) {
    j["bootstrap"] = {{"scheme", BootstrapSchemeToString(fit.bootstrap.scheme)},
                      {"seed", fit.bootstrap.seed},
                      {"requested", fit.bootstrap.requested},
                      {"succeeded", fit.bootstrap.succeeded},
                      {"failed", fit.bootstrap.failed},
                      {"lower_level", fit.bootstrap.lower_level},
                      {"upper_level", fit.bootstrap.upper_level}};
  }
  return j;
}

nlohmann::json ComparisonJson(const NestedComparison& t) {
  nlohmann::json j = {{"simpler", KineticModelToString(t.simpler)},
                      {"larger", KineticModelToString(t.larger)},
                      {"proper_nesting", t.proper_nesting},
                      {"computed", t.computed}};
  if (t.computed) {
    j["f"] = NumberOrNull(t.f);
    j["df"] = {t.df_numerator, t.df_denominator};
    j["p_value"] = NumberOrNull(t.p_value);
    j["rejects_simpler"] = t.rejects_simpler;
  } else {
    j["reason"] = t.reason;
  }
  if (!t.note.empty()) j["note"] = t.note;
  return j;
}

}  // namespace

const char* SoftwareVersion() { return RATEWELL_VERSION; }

nlohmann::json FitsJson(const Analysis& analysis) {
  nlohmann::json fits = nlohmann::json::array();
  const ModelChoice& choice = analysis.kinetics.choice;
  const KineticFit* preferred = choice.Preferred();
  for (std::size_t i = 0; i < choice.fits.size(); ++i) {
    const double delta = i < choice.delta_aicc.size() ? choice.delta_aicc[i] : NAN;
    const double weight = i < choice.akaike_weights.size() ? choice.akaike_weights[i] : NAN;
    fits.push_back(FitJson(choice.fits[i], delta, weight, &choice.fits[i] == preferred));
  }
  return fits;
}

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

  std::set<std::pair<int, int>> used;
  for (const KineticAnalysis::Source& s : analysis.kinetics.sources) used.insert({s.plate, s.well});
  nlohmann::json wells = nlohmann::json::array();
  for (int plate_index = 0; plate_index < static_cast<int>(analysis.plate_rates.size()); ++plate_index) {
    const PlateRates& plate = analysis.plate_rates[static_cast<std::size_t>(plate_index)];
    for (int well_index = 0; well_index < static_cast<int>(plate.wells.size()); ++well_index) {
      const WellRate& w = plate.wells[static_cast<std::size_t>(well_index)];
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
          {"kinetic_use", used.count({plate_index, well_index}) > 0},
          {"flags", w.flags},
          {"excluded", w.excluded},
          {"reason", w.excluded ? nlohmann::json(w.exclusion_reason) : nlohmann::json(nullptr)}};
      if (!w.estimate.ok) well["message"] = w.estimate.message;
      wells.push_back(std::move(well));
    }
  }
  j["wells"] = wells;
  const KineticAnalysis& k = analysis.kinetics;
  j["fits"] = FitsJson(analysis);
  const KineticFit* preferred = k.choice.Preferred();
  j["preferred_model"] = preferred ? nlohmann::json(KineticModelToString(preferred->model))
                                   : nlohmann::json(nullptr);
  nlohmann::json tests = nlohmann::json::array();
  for (const NestedComparison& t : k.choice.tests) tests.push_back(ComparisonJson(t));
  j["model_choice"] = {{"requested", k.requested_model},
                       {"attempted", k.attempted},
                       {"family", k.attempted ? nlohmann::json(ModelFamilyToString(k.choice.family))
                                              : nlohmann::json(nullptr)},
                       {"points", static_cast<int>(k.data.points.size())},
                       {"reason", k.attempted ? k.choice.reason : k.reason},
                       {"tests", tests}};
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

namespace ratewell {

std::string ParametersCsv(const Analysis& analysis) {
  std::ostringstream csv;
  csv << "model,preferred,parameter,kind,group,value,unit,se,ci_lower,ci_upper,ci_level,ci_method,"
         "determined,reason,at_bound,n,dof,ssr,aicc,delta_aicc,akaike_weight,converged\n";
  const ModelChoice& choice = analysis.kinetics.choice;
  const KineticFit* preferred = choice.Preferred();
  for (std::size_t i = 0; i < choice.fits.size(); ++i) {
    const KineticFit& fit = choice.fits[i];
    const double delta = i < choice.delta_aicc.size() ? choice.delta_aicc[i] : NAN;
    const double weight = i < choice.akaike_weights.size() ? choice.akaike_weights[i] : NAN;
    const auto row = [&](const ParameterEstimate& p, const char* kind) {
      std::string reason;
      if (p.fixed) {
        reason = "held fixed, not fitted";
      } else if (!p.se_determined) {
        reason = p.se_reason;
      } else if (!p.ci.determined) {
        reason = p.ci.reason;
      } else {
        reason = p.ci.note;
      }
      const bool determined = p.se_determined && p.ci.determined;
      csv << KineticModelToString(fit.model) << ',' << (&fit == preferred ? "true" : "false") << ','
          << CsvText(p.name) << ',' << (p.fixed ? "fixed" : kind) << ',' << CsvText(p.group) << ','
          << CsvNumber(p.value) << ',' << CsvText(p.unit) << ','
          << (p.se_determined ? CsvNumber(p.se) : "NA") << ','
          << (p.ci.determined ? CsvNumber(p.ci.lower) : "NA") << ','
          << (p.ci.determined ? CsvNumber(p.ci.upper) : "NA") << ',' << CsvNumber(p.ci.level)
          << ',' << IntervalMethodToString(p.ci.method) << ',' << (determined ? "true" : "false")
          << ',' << (reason.empty() ? "NA" : CsvText(reason)) << ','
          << (p.at_bound ? "true" : "false") << ',' << fit.n << ',' << fit.dof << ','
          << CsvNumber(fit.ssr) << ',' << CsvNumber(fit.aicc) << ',' << CsvNumber(delta) << ','
          << CsvNumber(weight) << ',' << (fit.converged ? "true" : "false") << '\n';
    };
    for (const ParameterEstimate& p : fit.parameters) row(p, "fitted");
    for (const ParameterEstimate& p : fit.derived) row(p, "derived");
  }
  return csv.str();
}

}  // namespace ratewell
