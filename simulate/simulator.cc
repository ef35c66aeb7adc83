#include "simulate/simulator.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <limits>
#include <system_error>

#include "fitting/units.h"
#include "importers/input_error.h"
#include "simulate/detail/coupled_assay.h"
#include "simulate/detail/gaussian.h"
#include "simulate/detail/plate_plan.h"
#include "simulate/plate_writer.h"

namespace ratewell {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Pathlength deviates are clipped here so that no well gets a negative or
// absurd pathlength, whatever the spread.
constexpr double kPathlengthDeviateClip = 3.0;
// Share of the progress bar taken by the simulation; the rest is writing.
constexpr double kSimulationShareOfProgress = 0.8;
constexpr char kSheetName[] = "Plate";

double Quantize(double value, int decimals) {
  const double scale = std::pow(10.0, decimals);
  const double q = std::round(value * scale) / scale;
  return q == 0.0 ? 0.0 : q;
}

std::string Short(double value) {
  char buffer[32];
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, value);
  return std::string(buffer, result.ptr);
}

// Free text for a one-cell preamble or comment line: control characters become spaces.
std::string OneLine(std::string text) {
  for (char& c : text) {
    if (static_cast<unsigned char>(c) < 0x20 || c == 0x7F) c = ' ';
  }
  return text;
}

// Read times in minutes from mixing.
std::vector<double> ReadTimesMin(const Scenario::Reads& reads) {
  std::vector<double> times;
  times.reserve(static_cast<std::size_t>(reads.count));
  for (int k = 0; k < reads.count; ++k) {
    times.push_back((reads.start_delay_s + k * reads.interval_s) / kSecondsPerMinute);
  }
  return times;
}

std::vector<double> Channels(const Scenario& s) {
  std::vector<double> nm = {s.detection.wavelength_nm};
  if (s.pathlength.water_peak) {
    nm.push_back(s.pathlength.water_sample_nm);
    nm.push_back(s.pathlength.water_reference_nm);
  }
  nm.insert(nm.end(), s.extra_wavelengths_nm.begin(), s.extra_wavelengths_nm.end());
  std::sort(nm.begin(), nm.end());
  return nm;
}

nlohmann::ordered_json OptionalNumber(const std::optional<double>& value) {
  return value ? nlohmann::ordered_json(*value) : nlohmann::ordered_json(nullptr);
}

nlohmann::ordered_json Parameter(double value, const char* unit) {
  return {{"value", value}, {"unit", unit}};
}

}  // namespace

SimulatedPlate SimulatePlate(const Scenario& s, const std::function<void(double)>& progress) {
  int wells_needed = 0;
  const std::optional<std::vector<detail::PlannedWell>> plan = detail::PlanPlate(s, &wells_needed);
  if (!plan) {
    throw InputError(s.source, 0, 0,
                     "design: the design needs " + std::to_string(wells_needed) +
                         " wells, more than the plate has");
  }
  const PlateGeometry& geometry = s.geometry;
  const int num_wells = geometry.num_wells();
  const std::vector<double> times = ReadTimesMin(s.reads);
  const std::vector<double> channels = Channels(s);
  const double epsilon = s.detection.epsilon_per_M_cm;
  const double nominal_cm = s.pathlength.NominalCm();
  const std::optional<double> enzyme_nM = s.enzyme.Nanomolar();

  SimulatedPlate out;
  out.assay = s.ToAssaySettings();
  out.blank_drift_uM_per_min =
      s.blank_drift_A_per_min / (epsilon * nominal_cm / kMicromolarPerMolar);

  detail::GaussianStream random(s.seed);

  // Pathlengths.
  std::vector<double> pathlength_cm(static_cast<std::size_t>(num_wells), nominal_cm);
  if (s.pathlength.spread_percent > 0.0) {
    for (int w = 0; w < num_wells; ++w) {
      const double z = std::clamp(random.Next(), -kPathlengthDeviateClip, kPathlengthDeviateClip);
      pathlength_cm[w] = nominal_cm * (1.0 + s.pathlength.spread_percent / 100.0 * z);
    }
  }
  for (int w = 0; w < num_wells; ++w) {
    if ((*plan)[w].role == WellRole::kEmpty) pathlength_cm[w] = 0.0;
  }

  // Noiseless signals: the detection channel from the ODE, the others constant.
  std::vector<std::vector<double>> detection(static_cast<std::size_t>(num_wells));
  out.wells.resize(static_cast<std::size_t>(num_wells));
  for (int w = 0; w < num_wells; ++w) {
    const detail::PlannedWell& p = (*plan)[w];
    WellTruth& truth = out.wells[w];
    truth.well = w;
    truth.name = WellName(w, geometry);
    truth.role = p.role;
    truth.group = p.group;
    truth.pathlength_cm = pathlength_cm[w];
    std::vector<double>& a = detection[w];
    if (p.role == WellRole::kEmpty) {
      a.assign(times.size(), s.background_A);
      if (progress) progress(kSimulationShareOfProgress * (w + 1) / num_wells);
      continue;
    }
    truth.substrate_uM = p.substrate_uM;
    truth.inhibitor_uM = p.inhibitor_uM;
    truth.has_enzyme = p.enzyme;
    if (p.enzyme) truth.enzyme_nM = enzyme_nM;
    truth.saturating = p.saturating;
    const double absorbance_per_uM = epsilon * pathlength_cm[w] / kMicromolarPerMolar;
    if (p.role == WellRole::kStandard) {
      truth.standard_uM = p.standard_uM;
      truth.nadh_start_uM = p.standard_uM;
    } else if (p.saturating) {
      truth.nadh_start_uM = (s.design.saturating_start_A - s.background_A) / absorbance_per_uM;
    } else {
      truth.nadh_start_uM = s.nadh_uM;
    }

    detail::CoupledWell well;
    well.kinetics = s.kinetics;
    if (!p.enzyme) well.kinetics.vmax_uM_per_min = 0.0;
    well.substrate0_uM = p.substrate_uM;
    well.inhibitor_uM = p.inhibitor_uM;
    well.nadh0_uM = truth.nadh_start_uM;
    well.tau_min = s.coupling_tau_min;
    well.per_turnover = s.detection.per_turnover;
    well.consumed = s.detection.direction == DetectionDirection::kConsumed;
    well.drift_uM_per_min = out.blank_drift_uM_per_min;
    well.nadh_half_saturation_uM = s.nadh_half_saturation_uM;
    const std::vector<detail::CoupledState> states = detail::IntegrateCoupledWell(well, times);

    if (p.role != WellRole::kStandard) {
      truth.rate_uM_per_min = EnzymeRate(well.kinetics, p.substrate_uM, p.inhibitor_uM);
    }
    truth.substrate_at_last_read_uM = states.back().substrate_uM;
    truth.nadh_at_last_read_uM = states.back().nadh_uM;
    a.reserve(times.size());
    for (const detail::CoupledState& state : states) {
      a.push_back(absorbance_per_uM * state.nadh_uM + s.background_A);
    }
    if (progress) progress(kSimulationShareOfProgress * (w + 1) / num_wells);
  }

  // The plate: noise, rounding, the ceiling.
  Plate& plate = out.plate;
  plate.Allocate(geometry, channels);
  plate.report.format = "simulated";
  plate.report.time_unit = "min";
  for (int c = 0; c < plate.num_channels(); ++c) {
    const double nm = channels[c];
    const bool is_detection = std::fabs(nm - s.detection.wavelength_nm) < 0.5;
    const bool is_water_sample =
        s.pathlength.water_peak && std::fabs(nm - s.pathlength.water_sample_nm) < 0.5;
    const bool is_water_reference =
        s.pathlength.water_peak && std::fabs(nm - s.pathlength.water_reference_nm) < 0.5;
    for (int w = 0; w < num_wells; ++w) {
      Series& series = plate.at(c, w);
      for (std::size_t k = 0; k < times.size(); ++k) {
        double a;
        if (is_detection) {
          a = detection[w][k];
        } else if (is_water_sample) {
          a = s.pathlength.water_baseline_A + s.pathlength.water_k_per_cm * pathlength_cm[w];
        } else if (is_water_reference) {
          a = s.pathlength.water_baseline_A;
        } else {
          a = s.background_A;
        }
        if (s.noise_sd_A > 0.0) a += s.noise_sd_A * random.Next();
        a = Quantize(a, s.detector.decimals);
        if (a > s.detector.ceiling_A) {
          series.Append(times[k], kNaN, PointStatus::kSaturated);
          if (is_detection) ++out.wells[w].saturated_points;
        } else {
          series.Append(times[k], a, PointStatus::kValid);
        }
      }
    }
  }
  if (s.reads.temperature_C) {
    plate.temperature_time_min = times;
    plate.temperature_C.assign(times.size(), *s.reads.temperature_C);
  }

  // The layout.
  Layout& layout = out.layout;
  layout.form = "list";
  layout.geometry = geometry;
  layout.wells.resize(static_cast<std::size_t>(num_wells));
  for (int w = 0; w < num_wells; ++w) {
    const detail::PlannedWell& p = (*plan)[w];
    WellInfo& info = layout.wells[w];
    info.role = p.role;
    info.group = p.group;
    switch (p.role) {
      case WellRole::kEmpty:
        break;
      case WellRole::kStandard:
        info.standard_uM = p.standard_uM;
        break;
      case WellRole::kSample:
      case WellRole::kBlank:
      case WellRole::kNoSubstrate:
        info.substrate_uM = p.substrate_uM;
        info.inhibitor_uM = p.inhibitor_uM;
        if (p.enzyme) {
          info.enzyme_nM = enzyme_nM.value_or(kNaN);
        } else {
          info.enzyme_nM = 0.0;
        }
        break;
    }
  }
  return out;
}

std::string LayoutListCsv(const Layout& layout, const std::string& comment) {
  auto number = [](double value) { return std::isnan(value) ? std::string() : Short(value); };
  std::string text = "# " + OneLine(comment) + "\n";
  text += "well,role,substrate_uM,inhibitor_uM,enzyme_nM,standard_uM,group\n";
  for (int w = 0; w < layout.geometry.num_wells(); ++w) {
    const WellInfo& info = layout.at(w);
    const bool empty = info.role == WellRole::kEmpty;
    text += WellName(w, layout.geometry);
    text += ',';
    text += WellRoleToString(info.role);
    text += ',';
    text += number(info.substrate_uM);
    text += ',';
    if (!empty && info.role != WellRole::kStandard) text += number(info.inhibitor_uM);
    text += ',';
    text += number(info.enzyme_nM);
    text += ',';
    text += number(info.standard_uM);
    text += ',';
    text += info.group;
    text += '\n';
  }
  return text;
}

nlohmann::ordered_json TruthJson(const Scenario& s, const SimulatedPlate& simulated,
                                 const std::vector<WrittenFile>& files) {
  using Json = nlohmann::ordered_json;
  const KineticTruth& k = s.kinetics;
  Json parameters = Json::object();
  parameters["Vmax"] = Parameter(k.vmax_uM_per_min, "uM/min");
  switch (k.model) {
    case RateLaw::kMichaelisMenten:
      parameters["Km"] = Parameter(k.km_uM, "uM");
      break;
    case RateLaw::kSubstrateInhibition:
      parameters["Km"] = Parameter(k.km_uM, "uM");
      parameters["Ksi"] = Parameter(k.ksi_uM, "uM");
      break;
    case RateLaw::kHill:
      parameters["Khalf"] = Parameter(k.km_uM, "uM");
      parameters["h"] = Parameter(k.hill_h, "1");
      break;
    case RateLaw::kCompetitive:
    case RateLaw::kUncompetitive:
    case RateLaw::kNoncompetitive:
      parameters["Km"] = Parameter(k.km_uM, "uM");
      parameters["Ki"] = Parameter(k.ki_uM, "uM");
      break;
    case RateLaw::kMixed:
      parameters["Km"] = Parameter(k.km_uM, "uM");
      parameters["Ki"] = Parameter(k.ki_uM, "uM");
      parameters["alpha"] = Parameter(k.alpha, "1");
      break;
  }
  const std::optional<double> enzyme_nM = s.enzyme.Nanomolar();
  std::optional<double> kcat = k.kcat_per_s;
  if (!kcat && enzyme_nM) {
    kcat = k.vmax_uM_per_min / (*enzyme_nM / kNanomolarPerMicromolar) / kSecondsPerMinute;
  }

  Json truth;
  truth["schema"] = 1;
  truth["generator"] = "ratewell simulate";
  truth["scenario"] = {{"file", std::filesystem::path(s.source).filename().string()},
                       {"run", s.run},
                       {"lab", s.lab}};
  truth["plate"] = {{"wells", s.geometry.num_wells()},
                    {"rows", s.geometry.rows},
                    {"columns", s.geometry.columns},
                    {"fill", s.fill_by_columns ? "columns" : "rows"}};
  truth["reads"] = {{"interval_s", s.reads.interval_s},
                    {"count", s.reads.count},
                    {"start_delay_s", s.reads.start_delay_s},
                    {"times_count_from", "mixing"},
                    {"temperature_C", OptionalNumber(s.reads.temperature_C)}};
  truth["kinetics"] = {{"model", RateLawToString(k.model)},
                       {"parameters", parameters},
                       {"kcat_per_s", OptionalNumber(kcat)},
                       {"enzyme_nM", OptionalNumber(enzyme_nM)},
                       {"enzyme_mg_per_mL", OptionalNumber(s.enzyme.MilligramsPerMillilitre())}};
  truth["detection"] = {{"species", s.detection.species},
                        {"wavelength_nm", s.detection.wavelength_nm},
                        {"epsilon_per_M_cm", s.detection.epsilon_per_M_cm},
                        {"per_turnover", s.detection.per_turnover},
                        {"direction", DetectionDirectionToString(s.detection.direction)}};
  Json water = nullptr;
  if (s.pathlength.water_peak) {
    water = {{"sample_nm", s.pathlength.water_sample_nm},
             {"reference_nm", s.pathlength.water_reference_nm},
             {"k_per_cm", s.pathlength.water_k_per_cm},
             {"baseline_A", s.pathlength.water_baseline_A}};
  }
  truth["pathlength"] = {{"nominal_cm", s.pathlength.NominalCm()},
                         {"volume_uL", OptionalNumber(s.pathlength.volume_uL)},
                         {"well_area_cm2", OptionalNumber(s.pathlength.well_area_cm2)},
                         {"spread_percent", s.pathlength.spread_percent},
                         {"water_peak", water},
                         {"assay_mode", PathlengthModeToString(s.pathlength.assay_mode)}};
  truth["signal"] = {{"nadh_start_uM", s.nadh_uM},
                     {"coupling_tau_min", s.coupling_tau_min},
                     {"nadh_half_saturation_uM", s.nadh_half_saturation_uM},
                     {"blank_drift_A_per_min", s.blank_drift_A_per_min},
                     {"blank_drift_uM_per_min", simulated.blank_drift_uM_per_min},
                     {"background_A", s.background_A},
                     {"noise_sd_A", s.noise_sd_A},
                     {"seed", s.seed},
                     {"detector_ceiling_A", s.detector.ceiling_A},
                     {"overflow_marker", s.detector.overflow_marker},
                     {"decimals", s.detector.decimals}};
  Json file_list = Json::array();
  for (const WrittenFile& file : files) {
    Json entry = {{"file", file.file_name}};
    for (const auto& item : file.description.items()) entry[item.key()] = item.value();
    file_list.push_back(entry);
  }
  truth["files"] = file_list;
  Json wells = Json::array();
  for (const WellTruth& w : simulated.wells) {
    Json entry = {{"well", w.name}, {"role", WellRoleToString(w.role)}};
    if (w.role != WellRole::kEmpty) {
      if (w.role != WellRole::kStandard) {
        entry["substrate_uM"] = w.substrate_uM;
        entry["inhibitor_uM"] = w.inhibitor_uM;
        entry["enzyme_nM"] = w.has_enzyme ? OptionalNumber(w.enzyme_nM) : Json(0.0);
      } else {
        entry["standard_uM"] = *w.standard_uM;
      }
      entry["pathlength_cm"] = w.pathlength_cm;
      entry["nadh_start_uM"] = w.nadh_start_uM;
      entry["rate_uM_per_min"] = OptionalNumber(w.rate_uM_per_min);
      entry["saturating"] = w.saturating;
      entry["saturated_points"] = w.saturated_points;
      entry["substrate_at_last_read_uM"] = w.substrate_at_last_read_uM;
      entry["nadh_at_last_read_uM"] = w.nadh_at_last_read_uM;
      entry["group"] = w.group;
    }
    wells.push_back(entry);
  }
  truth["wells"] = wells;
  return truth;
}

SimulationOutput WriteSimulation(const Scenario& s, const SimulatedPlate& simulated,
                                 const std::string& out_dir,
                                 const std::vector<std::string>& protected_inputs,
                                 const std::function<void(double)>& progress) {
  namespace fs = std::filesystem;
  std::error_code error;
  fs::create_directories(out_dir, error);
  if (error || !fs::is_directory(out_dir)) {
    throw InputError(out_dir, 0, 0,
                     "cannot create the output folder" +
                         (error ? ": " + error.message() : std::string(" (a file has that name)")));
  }
  SimulationOutput out;
  out.out_dir = out_dir;
  out.run = s.run;
  out.reads = s.reads.count;
  out.channels = simulated.plate.num_channels();
  out.saturated_points = simulated.plate.CountPoints(PointStatus::kSaturated);
  for (const WellTruth& w : simulated.wells) out.wells_used += w.role != WellRole::kEmpty;

  std::vector<std::string> preamble;
  if (s.preamble) {
    preamble.push_back("Simulated run: " + OneLine(s.run));
    if (!s.lab.empty()) preamble.push_back("Lab: " + OneLine(s.lab));
  }

  std::vector<WrittenFile> written;
  const auto path_of = [&](const std::string& name) { return (fs::path(out_dir) / name).string(); };
  // Check every name before writing the first file, so a refused run leaves
  // the folder as it was.
  for (const PlateFileSpec& spec : s.files) {
    RefuseToReplaceInput(path_of(spec.file_name), protected_inputs);
  }
  for (const char* name : {"layout.csv", "ASSAY.json", "truth.json"}) {
    RefuseToReplaceInput(path_of(name), protected_inputs);
  }
  const std::size_t steps = s.files.size() + 3;
  std::size_t step = 0;
  const auto advance = [&]() {
    ++step;
    if (progress) {
      progress(kSimulationShareOfProgress +
               (1.0 - kSimulationShareOfProgress) * static_cast<double>(step) / steps);
    }
  };
  for (const PlateFileSpec& spec : s.files) {
    PlateTableOptions table = spec.table;
    table.preamble = preamble;
    const std::string path = path_of(spec.file_name);
    nlohmann::ordered_json description = {{"kind", "plate"},
                                          {"format", spec.format},
                                          {"container", spec.xlsx ? "xlsx" : "text"},
                                          {"table", TableLayoutToString(table.layout)}};
    if (spec.xlsx) {
      WritePlateXlsx(simulated.plate, path, table, kSheetName, protected_inputs);
      description["sheet"] = kSheetName;
    } else {
      WritePlateText(simulated.plate, path, table, spec.text, protected_inputs);
      description["delimiter"] = spec.text.delimiter == ','   ? "comma"
                                 : spec.text.delimiter == ';' ? "semicolon"
                                                              : "tab";
      description["decimal_comma"] = spec.text.decimal_comma;
      description["line_end"] = spec.text.crlf ? "crlf" : "lf";
      description["bom"] = spec.text.utf8_bom;
    }
    description["time"] =
        table.layout == TableLayout::kGrid ? "clock" : TimeStyleToString(table.time_style);
    description["wavelengths_nm"] = simulated.plate.wavelengths_nm;
    description["overflow_marker"] = table.overflow_marker;
    description["preamble_lines"] = preamble.size();
    written.push_back({spec.file_name, description});
    out.files_written.push_back(path);
    advance();
  }

  WriteFileAtomically(path_of("layout.csv"),
                      LayoutListCsv(simulated.layout, "layout of simulated run: " + s.run),
                      protected_inputs);
  written.push_back({"layout.csv", {{"kind", "layout"}, {"form", "list"}}});
  out.files_written.push_back(path_of("layout.csv"));
  advance();

  WriteFileAtomically(path_of("ASSAY.json"), AssaySettingsToJson(simulated.assay).dump(2) + "\n",
                      protected_inputs);
  written.push_back({"ASSAY.json", {{"kind", "assay-settings"}}});
  out.files_written.push_back(path_of("ASSAY.json"));
  advance();

  written.push_back({"truth.json", {{"kind", "truth"}}});
  WriteFileAtomically(path_of("truth.json"), TruthJson(s, simulated, written).dump(2) + "\n",
                      protected_inputs);
  out.files_written.push_back(path_of("truth.json"));
  advance();
  return out;
}

SimulationOutput RunScenarioFile(const std::string& scenario_path, const std::string& out_dir,
                                 const std::function<void(double)>& progress) {
  const Scenario scenario = ReadScenarioFile(scenario_path);
  const SimulatedPlate simulated = SimulatePlate(scenario, progress);
  return WriteSimulation(scenario, simulated, out_dir, {scenario_path}, progress);
}

}  // namespace ratewell
