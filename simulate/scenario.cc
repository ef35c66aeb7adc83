#include "simulate/scenario.h"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iterator>
#include <set>
#include <sstream>

#include "importers/input_error.h"
#include "simulate/detail/located_json.h"
#include "simulate/detail/plate_plan.h"

namespace ratewell {
namespace {

using Json = nlohmann::json;
using detail::AppendPointer;

// Limits that keep a scenario to something a plate reader could produce.
constexpr int kMaxReads = 10000;
constexpr double kMaxConcentrationUm = 1.0e9;
constexpr double kMaxCouplingTauMin = 1.0e4;
// Channels closer than this are one channel (Plate::ChannelOf uses 0.5 nm).
constexpr double kMinChannelSeparationNm = 1.0;

struct ModelName {
  RateLaw model;
  const char* name;
};
constexpr ModelName kModelNames[] = {
    {RateLaw::kMichaelisMenten, "michaelis-menten"},
    {RateLaw::kSubstrateInhibition, "substrate-inhibition"},
    {RateLaw::kHill, "hill"},
    {RateLaw::kCompetitive, "competitive"},
    {RateLaw::kUncompetitive, "uncompetitive"},
    {RateLaw::kNoncompetitive, "noncompetitive"},
    {RateLaw::kMixed, "mixed"},
};

std::string ModelList() {
  std::string list;
  for (const ModelName& entry : kModelNames) {
    if (!list.empty()) list += ", ";
    list += entry.name;
  }
  return list;
}

std::string Join(const std::vector<std::string>& words) {
  std::string text;
  for (const std::string& word : words) {
    if (!text.empty()) text += ", ";
    text += word;
  }
  return text;
}

std::string FormatValue(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.10g", value);
  return buffer;
}


// JSON pointer -> "kinetics.ki_uM", "files[2].format".
std::string KeyPathOf(const std::string& pointer) {
  std::string path;
  std::size_t at = 0;
  while (at < pointer.size()) {
    std::size_t next = pointer.find('/', at + 1);
    if (next == std::string::npos) next = pointer.size();
    std::string token = pointer.substr(at + 1, next - at - 1);
    for (std::size_t i = 0; (i = token.find('~', i)) != std::string::npos; ++i) {
      token.replace(i, 2, token[i + 1] == '1' ? "/" : "~");
    }
    const bool index = !token.empty() && std::all_of(token.begin(), token.end(), [](char c) {
      return std::isdigit(static_cast<unsigned char>(c));
    });
    if (index) {
      path += "[" + token + "]";
    } else {
      if (!path.empty()) path += '.';
      path += token;
    }
    at = next;
  }
  return path.empty() ? "top level" : path;
}

const std::vector<std::string> kTopKeys = {"scenario_version",
                                           "run",
                                           "lab",
                                           "plate",
                                           "reads",
                                           "files",
                                           "preamble",
                                           "detection",
                                           "extra_wavelengths_nm",
                                           "pathlength",
                                           "nadh_uM",
                                           "enzyme",
                                           "kinetics",
                                           "coupling_tau_min",
                                           "nadh_half_saturation_uM",
                                           "blank_drift_A_per_min",
                                           "background_A",
                                           "noise_sd_A",
                                           "seed",
                                           "detector",
                                           "design",
                                           "analysis"};

class ScenarioReader {
 public:
  ScenarioReader(std::string_view text, const std::string& file) : text_(text), file_(file) {}

  Scenario Read() {
    if (std::all_of(text_.begin(), text_.end(),
                    [](char c) { return std::isspace(static_cast<unsigned char>(c)); })) {
      throw InputError(file_, 0, 0,
                       "the scenario file is empty; expected a JSON object with at least "
                       "\"run\", \"reads\", \"kinetics\" and \"design\"");
    }
    doc_ = detail::ParseLocatedJson(text_, file_);
    Scenario s;
    s.source = file_;
    Object("", kTopKeys);
    if (Has("/scenario_version")) {
      const int version = Integer("/scenario_version", 1, 1000);
      if (version != 1)
        Fail("/scenario_version",
             "unknown version " + std::to_string(version) + "; this program reads version 1");
    }
    Require("", "run", "the run's name, e.g. \"RK-1 lot 7\"");
    s.run = String("/run");
    if (s.run.empty()) Fail("/run", "expected a non-empty run name");
    if (Has("/lab")) s.lab = String("/lab");
    if (Has("/preamble")) s.preamble = Bool("/preamble");

    ReadPlate(&s);
    ReadReads(&s);
    ReadDetection(&s);
    ReadPathlength(&s);
    if (Has("/extra_wavelengths_nm")) ReadExtraWavelengths(&s);
    if (Has("/nadh_uM")) s.nadh_uM = NumberIn("/nadh_uM", 0.0, kMaxConcentrationUm, "µM of NADH");
    if (Has("/enzyme")) ReadEnzyme(&s);
    Require("", "kinetics", "the kinetic truth: model and parameters");
    ReadKinetics(&s);
    if (Has("/coupling_tau_min")) {
      s.coupling_tau_min =
          NumberIn("/coupling_tau_min", 0.0, kMaxCouplingTauMin, "a time constant in minutes");
    }
    if (Has("/nadh_half_saturation_uM")) {
      s.nadh_half_saturation_uM = NumberIn("/nadh_half_saturation_uM", 0.0, kMaxConcentrationUm,
                                           "a concentration in µM (0 = clamp)");
    }
    if (Has("/blank_drift_A_per_min")) {
      s.blank_drift_A_per_min =
          NumberIn("/blank_drift_A_per_min", -1.0, 1.0, "a slope in absorbance per minute");
    }
    if (Has("/background_A"))
      s.background_A = NumberIn("/background_A", -1.0, 10.0, "an absorbance");
    if (Has("/noise_sd_A")) s.noise_sd_A = NumberIn("/noise_sd_A", 0.0, 1.0, "an absorbance SD");
    if (Has("/seed")) s.seed = Seed("/seed");
    ReadDetector(&s);
    Require("", "design", "the plate design: substrate levels and controls");
    ReadDesign(&s);
    ReadFiles(&s);
    ReadAnalysis(&s);
    CheckWhole(s);
    return s;
  }

 private:
  // -------------------------------------------------------------------------
  // Access and errors.

  [[noreturn]] void Fail(const std::string& pointer, const std::string& message) const {
    const detail::TextPosition at = doc_.Locate(pointer);
    throw InputError(file_, at.line, at.column, KeyPathOf(pointer) + ": " + message);
  }

  bool Has(const std::string& pointer) const {
    return doc_.value.contains(Json::json_pointer(pointer));
  }
  const Json& Get(const std::string& pointer) const {
    return doc_.value.at(Json::json_pointer(pointer));
  }

  // Fails at the parent when key is missing.
  void Require(const std::string& parent, const std::string& key, const std::string& what) const {
    if (!Has(AppendPointer(parent, key))) {
      Fail(parent, "missing key \"" + key + "\" (" + what + ")");
    }
  }

  void Object(const std::string& pointer, const std::vector<std::string>& allowed) const {
    const Json& value = Get(pointer);
    if (!value.is_object()) {
      Fail(pointer, std::string("expected an object {...}, got ") + value.type_name());
    }
    for (const auto& item : value.items()) {
      if (std::find(allowed.begin(), allowed.end(), item.key()) != allowed.end()) continue;
      std::string hint;
      int best = 3;
      for (const std::string& candidate : allowed) {
        const int distance = EditDistanceIgnoreCase(item.key(), candidate);
        if (distance < best) {
          best = distance;
          hint = " (did you mean \"" + candidate + "\"?)";
        }
      }
      Fail(AppendPointer(pointer, item.key()),
           "unknown key" + hint + "; allowed here: " + Join(allowed));
    }
  }

  double Number(const std::string& pointer) const {
    const Json& value = Get(pointer);
    if (!value.is_number()) {
      Fail(pointer, std::string("expected a number, got ") + value.type_name());
    }
    const double number = value.get<double>();
    if (!std::isfinite(number)) Fail(pointer, "expected a finite number");
    return number;
  }

  double NumberIn(const std::string& pointer, double lo, double hi, const std::string& what) const {
    const double number = Number(pointer);
    if (number < lo || number > hi) {
      Fail(pointer, "expected " + what + " from " + FormatValue(lo) + " to " + FormatValue(hi) +
                        ", got " + FormatValue(number));
    }
    return number;
  }

  double Positive(const std::string& pointer, const std::string& what, double hi) const {
    const double number = Number(pointer);
    if (!(number > 0.0) || number > hi) {
      Fail(pointer, "expected " + what + " above 0 and at most " + FormatValue(hi) + ", got " +
                        FormatValue(number));
    }
    return number;
  }

  int Integer(const std::string& pointer, int lo, int hi) const {
    const Json& value = Get(pointer);
    if (!value.is_number_integer()) {
      Fail(pointer, std::string("expected a whole number, got ") +
                        (value.is_number() ? "a fraction" : value.type_name()));
    }
    const double number = value.get<double>();
    if (number < lo || number > hi) {
      Fail(pointer, "expected a whole number from " + std::to_string(lo) + " to " +
                        std::to_string(hi) + ", got " + FormatValue(number));
    }
    return static_cast<int>(number);
  }

  std::uint64_t Seed(const std::string& pointer) const {
    const Json& value = Get(pointer);
    constexpr double kMaxSeed = 9007199254740992.0;  // 2^53: exact in any JSON reader
    if (!value.is_number_integer() || value.get<double>() < 0.0 || value.get<double>() > kMaxSeed) {
      Fail(pointer, "expected a whole number from 0 to 2^53 (9007199254740992)");
    }
    return value.is_number_unsigned() ? value.get<std::uint64_t>()
                                      : static_cast<std::uint64_t>(value.get<std::int64_t>());
  }

  std::string String(const std::string& pointer) const {
    const Json& value = Get(pointer);
    if (!value.is_string()) {
      Fail(pointer, std::string("expected a string in double quotes, got ") + value.type_name());
    }
    return value.get<std::string>();
  }

  bool Bool(const std::string& pointer) const {
    const Json& value = Get(pointer);
    if (!value.is_boolean()) {
      Fail(pointer, std::string("expected true or false, got ") + value.type_name());
    }
    return value.get<bool>();
  }

  // A list of numbers in [lo, hi]; min_size entries at least.
  std::vector<double> NumberList(const std::string& pointer, double lo, double hi,
                                 std::size_t min_size, const std::string& what) const {
    const Json& value = Get(pointer);
    if (!value.is_array()) {
      Fail(pointer, "expected a list [...] of " + what + ", got " + value.type_name());
    }
    if (value.size() < min_size) {
      Fail(pointer, "expected at least " + std::to_string(min_size) + " " + what);
    }
    std::vector<double> numbers;
    for (std::size_t i = 0; i < value.size(); ++i) {
      numbers.push_back(NumberIn(AppendPointer(pointer, std::to_string(i)), lo, hi, what));
    }
    return numbers;
  }

  // -------------------------------------------------------------------------
  // Sections.

  void ReadPlate(Scenario* s) const {
    if (!Has("/plate")) return;
    Object("/plate", {"wells", "file_stem", "fill"});
    if (Has("/plate/wells")) {
      const int wells = Integer("/plate/wells", 1, 1536);
      const std::optional<PlateGeometry> geometry = PlateGeometry::FromWellCount(wells);
      if (!geometry) Fail("/plate/wells", "expected 96, 384 or 1536 wells");
      s->geometry = *geometry;
    }
    if (Has("/plate/file_stem")) {
      s->file_stem = String("/plate/file_stem");
      const bool plain = !s->file_stem.empty() &&
                         std::all_of(s->file_stem.begin(), s->file_stem.end(),
                                     [](char c) {
                                       return std::isalnum(static_cast<unsigned char>(c)) ||
                                              c == '-' || c == '_' || c == '.';
                                     }) &&
                         s->file_stem.front() != '.';
      if (!plain) {
        Fail("/plate/file_stem",
             "expected a plain name of letters, digits, '-', '_' and '.' (not starting with '.')");
      }
    }
    if (Has("/plate/fill")) {
      const std::string fill = String("/plate/fill");
      if (fill != "rows" && fill != "columns") {
        Fail("/plate/fill", "expected \"rows\" or \"columns\", got \"" + fill + "\"");
      }
      s->fill_by_columns = fill == "columns";
    }
  }

  void ReadReads(Scenario* s) const {
    Require("", "reads", "the read schedule: interval_s and count");
    Object("/reads", {"interval_s", "count", "start_delay_s", "temperature_C"});
    Require("/reads", "interval_s", "seconds between reads");
    Require("/reads", "count", "number of reads");
    s->reads.interval_s = Positive("/reads/interval_s", "an interval in seconds", 86400.0);
    s->reads.count = Integer("/reads/count", 2, kMaxReads);
    if (Has("/reads/start_delay_s")) {
      s->reads.start_delay_s = NumberIn("/reads/start_delay_s", 0.0, 86400.0, "a delay in seconds");
    }
    if (Has("/reads/temperature_C")) {
      s->reads.temperature_C =
          NumberIn("/reads/temperature_C", -20.0, 100.0, "a temperature in °C");
    }
  }

  void ReadDetection(Scenario* s) const {
    if (!Has("/detection")) return;
    Object("/detection",
           {"species", "wavelength_nm", "epsilon_per_M_cm", "per_turnover", "direction"});
    AssaySettings::Detection& d = s->detection;
    if (Has("/detection/species")) {
      d.species = String("/detection/species");
      if (d.species.empty()) Fail("/detection/species", "expected a name such as \"NADH\"");
    }
    if (Has("/detection/wavelength_nm")) {
      d.wavelength_nm = Positive("/detection/wavelength_nm", "a wavelength in nm", 10000.0);
    }
    if (Has("/detection/epsilon_per_M_cm")) {
      d.epsilon_per_M_cm = Positive("/detection/epsilon_per_M_cm",
                                    "a molar absorption coefficient in M^-1 cm^-1", 1.0e7);
    }
    if (Has("/detection/per_turnover")) {
      d.per_turnover =
          Positive("/detection/per_turnover", "molecules detected per turnover", 100.0);
    }
    if (Has("/detection/direction")) {
      const std::string direction = String("/detection/direction");
      if (!StringToDetectionDirection(direction, &d.direction)) {
        Fail("/detection/direction",
             "expected \"consumed\" or \"formed\", got \"" + direction + "\"");
      }
    }
  }

  void ReadPathlength(Scenario* s) const {
    Scenario::Pathlength& p = s->pathlength;
    if (!Has("/pathlength")) {
      p.cm = 1.0;
      p.assay_mode = PathlengthMode::kFixed;
      return;
    }
    Object("/pathlength",
           {"cm", "volume_uL", "well_area_cm2", "spread_percent", "water_peak", "assay_mode"});
    const bool fixed = Has("/pathlength/cm");
    const bool volume = Has("/pathlength/volume_uL");
    const bool area = Has("/pathlength/well_area_cm2");
    if (fixed && (volume || area)) {
      Fail("/pathlength/cm",
           "give either \"cm\" or \"volume_uL\" with \"well_area_cm2\", not both");
    }
    if (!fixed && !volume && !area) {
      Fail("/pathlength",
           "missing key \"cm\" (a fixed pathlength) or \"volume_uL\" with "
           "\"well_area_cm2\" (pathlength from the well geometry)");
    }
    if (volume != area) {
      Fail(volume ? "/pathlength/volume_uL" : "/pathlength/well_area_cm2",
           "\"volume_uL\" and \"well_area_cm2\" go together (l = volume / area)");
    }
    if (fixed) {
      p.cm = Number("/pathlength/cm");
      if (!(*p.cm > 0.0) || *p.cm >= kMaxSensiblePathlengthCm) {
        Fail("/pathlength/cm", "expected a pathlength above 0 and below " +
                                   FormatValue(kMaxSensiblePathlengthCm) + " cm, got " +
                                   FormatValue(*p.cm));
      }
    } else {
      p.volume_uL = Positive("/pathlength/volume_uL", "a volume in µL", 1.0e5);
      p.well_area_cm2 = Positive("/pathlength/well_area_cm2", "an area in cm²", 100.0);
      if (!(p.NominalCm() < kMaxSensiblePathlengthCm)) {
        Fail("/pathlength/volume_uL", "volume_uL / well_area_cm2 gives " +
                                          FormatValue(p.NominalCm()) + " cm; expected below " +
                                          FormatValue(kMaxSensiblePathlengthCm) +
                                          " cm (volume in µL, area in cm²?)");
      }
    }
    if (Has("/pathlength/spread_percent")) {
      p.spread_percent =
          NumberIn("/pathlength/spread_percent", 0.0, 30.0, "a per-well spread in percent");
    }
    if (Has("/pathlength/water_peak")) {
      const std::string w = "/pathlength/water_peak";
      if (Get(w).is_boolean()) {
        p.water_peak = Bool(w);
      } else {
        Object(w, {"k_per_cm", "baseline_A", "sample_nm", "reference_nm"});
        p.water_peak = true;
        if (Has(w + "/k_per_cm"))
          p.water_k_per_cm = Positive(w + "/k_per_cm", "an absorbance per cm", 10.0);
        if (Has(w + "/baseline_A"))
          p.water_baseline_A = NumberIn(w + "/baseline_A", -1.0, 10.0, "an absorbance");
        if (Has(w + "/sample_nm"))
          p.water_sample_nm = Positive(w + "/sample_nm", "a wavelength in nm", 10000.0);
        if (Has(w + "/reference_nm"))
          p.water_reference_nm = Positive(w + "/reference_nm", "a wavelength in nm", 10000.0);
        if (std::fabs(p.water_sample_nm - p.water_reference_nm) < kMinChannelSeparationNm) {
          Fail(Has(w + "/reference_nm") ? w + "/reference_nm" : w,
               "expected the reference wavelength to differ from the sample wavelength");
        }
      }
    }
    p.assay_mode = p.water_peak ? PathlengthMode::kWaterPeak
                   : volume     ? PathlengthMode::kGeometry
                                : PathlengthMode::kFixed;
    if (Has("/pathlength/assay_mode")) {
      const std::string mode = String("/pathlength/assay_mode");
      if (!StringToPathlengthMode(mode, &p.assay_mode)) {
        Fail("/pathlength/assay_mode",
             "expected \"fixed\", \"geometry\", \"water-peak\" or "
             "\"standards\", got \"" +
                 mode + "\"");
      }
      if (p.assay_mode == PathlengthMode::kWaterPeak && !p.water_peak) {
        Fail("/pathlength/assay_mode",
             "\"water-peak\" needs \"water_peak\" channels in the "
             "scenario (add \"water_peak\": true)");
      }
      if (p.assay_mode == PathlengthMode::kGeometry && !volume) {
        Fail("/pathlength/assay_mode",
             "\"geometry\" needs \"volume_uL\" and \"well_area_cm2\" instead of \"cm\"");
      }
    }
  }

  void ReadExtraWavelengths(Scenario* s) const {
    s->extra_wavelengths_nm =
        NumberList("/extra_wavelengths_nm", 1.0, 10000.0, 0, "wavelengths in nm");
  }

  void ReadEnzyme(Scenario* s) const {
    Object("/enzyme", {"nM", "mg_per_mL", "molar_mass_Da"});
    AssaySettings::Enzyme& e = s->enzyme;
    if (Has("/enzyme/nM") && Has("/enzyme/mg_per_mL")) {
      Fail("/enzyme/mg_per_mL", "give either \"nM\" or \"mg_per_mL\", not both");
    }
    if (Has("/enzyme/nM")) e.nM = Positive("/enzyme/nM", "a concentration in nM", 1.0e9);
    if (Has("/enzyme/mg_per_mL")) {
      e.mg_per_mL = Positive("/enzyme/mg_per_mL", "a concentration in mg/mL", 1000.0);
    }
    if (Has("/enzyme/molar_mass_Da")) {
      e.molar_mass_Da = Positive("/enzyme/molar_mass_Da", "a molar mass in Da", 1.0e8);
      if (!e.known()) {
        Fail("/enzyme/molar_mass_Da", "needs \"mg_per_mL\" beside it");
      }
    }
    if (!e.known()) Fail("/enzyme", "expected \"nM\", or \"mg_per_mL\" (with \"molar_mass_Da\")");
  }

  void ReadKinetics(Scenario* s) const {
    const std::string k = "/kinetics";
    Object(k, {"model", "vmax_uM_per_min", "kcat_per_s", "km_uM", "khalf_uM", "hill_h", "ki_uM",
               "alpha", "ksi_uM"});
    Require(k, "model", "one of " + ModelList());
    const std::string model_name = String(k + "/model");
    KineticTruth& t = s->kinetics;
    if (!StringToRateLaw(model_name, &t.model)) {
      Fail(k + "/model", "unknown model \"" + model_name + "\"; expected one of " + ModelList());
    }
    std::vector<std::string> needed;
    switch (t.model) {
      case RateLaw::kMichaelisMenten:
        needed = {"km_uM"};
        break;
      case RateLaw::kSubstrateInhibition:
        needed = {"km_uM", "ksi_uM"};
        break;
      case RateLaw::kHill:
        needed = {"khalf_uM", "hill_h"};
        break;
      case RateLaw::kCompetitive:
      case RateLaw::kUncompetitive:
      case RateLaw::kNoncompetitive:
        needed = {"km_uM", "ki_uM"};
        break;
      case RateLaw::kMixed:
        needed = {"km_uM", "ki_uM", "alpha"};
        break;
    }
    for (const char* key : {"km_uM", "khalf_uM", "hill_h", "ki_uM", "alpha", "ksi_uM"}) {
      const bool wanted = std::find(needed.begin(), needed.end(), key) != needed.end();
      const std::string pointer = AppendPointer(k, key);
      if (!wanted && Has(pointer)) {
        Fail(pointer, "not a parameter of model \"" + model_name + "\", which takes " +
                          Join(needed) + " and vmax_uM_per_min or kcat_per_s");
      }
      if (wanted && !Has(pointer)) {
        Fail(k, "missing key \"" + std::string(key) + "\" (model \"" + model_name + "\" takes " +
                    Join(needed) + ")");
      }
    }
    const bool vmax = Has(k + "/vmax_uM_per_min");
    const bool kcat = Has(k + "/kcat_per_s");
    if (vmax == kcat) {
      Fail(vmax ? k + "/kcat_per_s" : k,
           "give exactly one of \"vmax_uM_per_min\" (µM/min at the scenario's enzyme "
           "concentration) and \"kcat_per_s\"");
    }
    if (vmax) {
      t.vmax_uM_per_min = Positive(k + "/vmax_uM_per_min", "a rate in µM/min", 1.0e7);
    } else {
      t.kcat_per_s = Positive(k + "/kcat_per_s", "a turnover number in s^-1", 1.0e9);
      const std::optional<double> nM = s->enzyme.Nanomolar();
      if (!nM) {
        Fail(k + "/kcat_per_s",
             "needs the enzyme's molar concentration: \"enzyme\": {\"nM\": "
             "...} or {\"mg_per_mL\": ..., \"molar_mass_Da\": ...}");
      }
      t.vmax_uM_per_min = *t.kcat_per_s * kSecondsPerMinute * (*nM / kNanomolarPerMicromolar);
    }
    if (Has(k + "/km_uM"))
      t.km_uM = Positive(k + "/km_uM", "a concentration in µM", kMaxConcentrationUm);
    if (Has(k + "/khalf_uM"))
      t.km_uM = Positive(k + "/khalf_uM", "a concentration in µM", kMaxConcentrationUm);
    if (Has(k + "/hill_h")) t.hill_h = Positive(k + "/hill_h", "a Hill coefficient", 20.0);
    if (Has(k + "/ki_uM"))
      t.ki_uM = Positive(k + "/ki_uM", "a concentration in µM", kMaxConcentrationUm);
    if (Has(k + "/alpha")) t.alpha = Positive(k + "/alpha", "a factor", 1.0e6);
    if (Has(k + "/ksi_uM"))
      t.ksi_uM = Positive(k + "/ksi_uM", "a concentration in µM", kMaxConcentrationUm);
  }

  void ReadDetector(Scenario* s) const {
    if (!Has("/detector")) return;
    Object("/detector", {"ceiling_A", "overflow_marker", "decimals"});
    if (Has("/detector/ceiling_A")) {
      s->detector.ceiling_A = Positive("/detector/ceiling_A", "an absorbance", 10.0);
    }
    if (Has("/detector/overflow_marker")) {
      const std::string marker = String("/detector/overflow_marker");
      const bool plain = !marker.empty() && marker.size() <= 16 &&
                         std::none_of(marker.begin(), marker.end(), [](char c) {
                           return c == ',' || c == ';' || c == '\t' || c == '"' || c == ' ' ||
                                  std::isdigit(static_cast<unsigned char>(c));
                         });
      if (!plain) {
        Fail("/detector/overflow_marker",
             "expected a short word or symbol run with no digits, spaces, quotes or "
             "delimiters, e.g. \"OVER\" or \"****\"");
      }
      s->detector.overflow_marker = marker;
    }
    if (Has("/detector/decimals")) s->detector.decimals = Integer("/detector/decimals", 1, 10);
  }

  void ReadDesign(Scenario* s) const {
    const std::string d = "/design";
    Object(d, {"substrate_uM", "inhibitor_uM", "replicates", "blanks_per_substrate",
               "blank_substrate_uM", "no_substrate", "standards_uM", "standard_replicates",
               "saturating"});
    Scenario::Design& design = s->design;
    Require(d, "substrate_uM", "the substrate levels in µM");
    design.substrate_uM =
        NumberList(d + "/substrate_uM", 0.0, kMaxConcentrationUm, 1, "concentrations in µM");
    if (Has(d + "/inhibitor_uM")) {
      design.inhibitor_uM =
          NumberList(d + "/inhibitor_uM", 0.0, kMaxConcentrationUm, 1, "concentrations in µM");
    }
    const int max_wells = s->geometry.num_wells();
    if (Has(d + "/replicates")) design.replicates = Integer(d + "/replicates", 1, max_wells);
    if (Has(d + "/blanks_per_substrate")) {
      design.blanks_per_substrate = Integer(d + "/blanks_per_substrate", 0, max_wells);
    }
    if (Has(d + "/blank_substrate_uM")) {
      design.blank_substrate_uM = NumberList(d + "/blank_substrate_uM", 0.0, kMaxConcentrationUm, 0,
                                             "concentrations in µM");
    }
    if (Has(d + "/no_substrate")) design.no_substrate = Integer(d + "/no_substrate", 0, max_wells);
    if (Has(d + "/standards_uM")) {
      design.standards_uM =
          NumberList(d + "/standards_uM", 0.0, kMaxConcentrationUm, 0, "NADH concentrations in µM");
    }
    if (Has(d + "/standard_replicates")) {
      design.standard_replicates = Integer(d + "/standard_replicates", 1, max_wells);
    }
    if (Has(d + "/saturating")) {
      const std::string w = d + "/saturating";
      Object(w, {"wells", "start_A"});
      Require(w, "wells", "how many saturating wells");
      design.saturating_wells = Integer(w + "/wells", 0, max_wells);
      if (Has(w + "/start_A"))
        design.saturating_start_A = NumberIn(w + "/start_A", 0.0, 10.0, "an absorbance");
    }
  }

  PlateFileSpec FileSpec(const std::string& pointer, const Scenario& s) const {
    PlateFileSpec spec;
    const Json& value = Get(pointer);
    std::string format_pointer = pointer;
    if (value.is_string()) {
      spec.format = value.get<std::string>();
    } else if (value.is_object()) {
      Object(pointer,
             {"format", "table", "delimiter", "decimal_comma", "line_end", "bom", "time", "name"});
      Require(pointer, "format", "\"long\", \"wide\", \"grid\" or \"xlsx\"");
      format_pointer = AppendPointer(pointer, "format");
      spec.format = String(format_pointer);
    } else {
      Fail(pointer, std::string("expected a format name or an object {\"format\": ...}, got ") +
                        value.type_name());
    }
    if (spec.format == "xlsx") {
      spec.xlsx = true;
      spec.table.layout = TableLayout::kLong;
    } else if (!StringToTableLayout(spec.format, &spec.table.layout) ||
               spec.table.layout == TableLayout::kAuto) {
      Fail(format_pointer, "unknown file format \"" + spec.format +
                               "\"; expected \"long\", \"wide\", \"grid\" or \"xlsx\"");
    }
    if (value.is_object()) {
      const auto key = [&](const char* name) { return AppendPointer(pointer, name); };
      for (const char* text_only : {"delimiter", "decimal_comma", "line_end", "bom"}) {
        if (spec.xlsx && Has(key(text_only))) {
          Fail(key(text_only),
               "only for text files; an xlsx workbook has no delimiter or "
               "line ends");
        }
      }
      if (!spec.xlsx && Has(key("table"))) {
        Fail(key("table"),
             "only for \"xlsx\" (the table held in the workbook); for a text "
             "file the format is the table");
      }
      if (Has(key("table"))) {
        const std::string table = String(key("table"));
        if (!StringToTableLayout(table, &spec.table.layout) ||
            spec.table.layout == TableLayout::kAuto) {
          Fail(key("table"), "expected \"long\", \"wide\" or \"grid\", got \"" + table + "\"");
        }
      }
      if (Has(key("delimiter"))) {
        const std::string delimiter = String(key("delimiter"));
        if (delimiter == "comma") {
          spec.text.delimiter = ',';
        } else if (delimiter == "semicolon") {
          spec.text.delimiter = ';';
        } else if (delimiter == "tab") {
          spec.text.delimiter = '\t';
        } else {
          Fail(key("delimiter"),
               "expected \"comma\", \"semicolon\" or \"tab\", got \"" + delimiter + "\"");
        }
      }
      if (Has(key("decimal_comma"))) {
        spec.text.decimal_comma = Bool(key("decimal_comma"));
        if (spec.text.decimal_comma && spec.text.delimiter == ',') {
          Fail(key("decimal_comma"),
               "a decimal comma needs \"delimiter\": \"semicolon\" or "
               "\"tab\" (numbers would split at the comma)");
        }
      }
      if (Has(key("line_end"))) {
        const std::string line_end = String(key("line_end"));
        if (line_end != "lf" && line_end != "crlf") {
          Fail(key("line_end"), "expected \"lf\" or \"crlf\", got \"" + line_end + "\"");
        }
        spec.text.crlf = line_end == "crlf";
      }
      if (Has(key("bom"))) spec.text.utf8_bom = Bool(key("bom"));
      if (Has(key("time"))) {
        const std::string time = String(key("time"));
        if (!StringToTimeStyle(time, &spec.table.time_style)) {
          Fail(key("time"), "expected \"seconds\", \"minutes\" or \"clock\", got \"" + time + "\"");
        }
      }
      if (Has(key("name"))) {
        spec.file_name = String(key("name"));
        const std::string& n = spec.file_name;
        if (n.empty() || n == "." || n == ".." || n.find('/') != std::string::npos ||
            n.find('\\') != std::string::npos || n.find('\0') != std::string::npos) {
          Fail(key("name"), "expected a plain file name (no folder part)");
        }
      }
    }
    spec.table.decimals = s.detector.decimals;
    spec.table.overflow_marker = s.detector.overflow_marker;
    return spec;
  }

  void ReadFiles(Scenario* s) const {
    if (!Has("/files")) {
      PlateFileSpec spec;
      spec.format = "long";
      spec.table.decimals = s->detector.decimals;
      spec.table.overflow_marker = s->detector.overflow_marker;
      s->files.push_back(spec);
    } else {
      const Json& files = Get("/files");
      if (!files.is_array() || files.empty()) {
        Fail("/files", "expected a non-empty list of formats, e.g. [\"long\", \"grid\"]");
      }
      for (std::size_t i = 0; i < files.size(); ++i) {
        s->files.push_back(FileSpec(AppendPointer("/files", std::to_string(i)), *s));
      }
    }
    // Names: the given ones first, then defaults that avoid them.
    std::set<std::string> taken = {"layout.csv", "ASSAY.json", "truth.json"};
    for (std::size_t i = 0; i < s->files.size(); ++i) {
      const std::string& name = s->files[i].file_name;
      if (name.empty()) continue;
      if (!taken.insert(name).second) {
        Fail(AppendPointer(AppendPointer("/files", std::to_string(i)), "name"),
             "the name \"" + name + "\" is already used by another output file");
      }
    }
    for (PlateFileSpec& spec : s->files) {
      if (!spec.file_name.empty()) continue;
      const std::string base =
          s->file_stem + "_" +
          (spec.xlsx ? std::string(TableLayoutToString(spec.table.layout)) : spec.format);
      const std::string extension = spec.xlsx                     ? ".xlsx"
                                    : spec.text.delimiter == '\t' ? ".txt"
                                                                  : ".csv";
      std::string name = base + extension;
      for (int n = 2; taken.count(name) > 0; ++n) {
        name = base + "_" + std::to_string(n) + extension;
      }
      taken.insert(name);
      spec.file_name = name;
    }
  }

  void ReadAnalysis(Scenario* s) const {
    if (!Has("/analysis")) return;
    Object("/analysis", {"blank", "rate_method", "absorbance_ceiling"});
    if (Has("/analysis/blank")) {
      const std::string blank = String("/analysis/blank");
      if (!StringToBlankMode(blank, &s->analysis.blank)) {
        Fail("/analysis/blank",
             "expected \"plate-mean\", \"matched\" or \"none\", got \"" + blank + "\"");
      }
    }
    if (Has("/analysis/rate_method")) {
      const std::string method = String("/analysis/rate_method");
      if (!StringToRateMethod(method, &s->analysis.rate_method)) {
        Fail("/analysis/rate_method",
             "expected \"auto\", \"linear\", \"lag\" or \"progress\", "
             "got \"" +
                 method + "\"");
      }
    }
    if (Has("/analysis/absorbance_ceiling")) {
      s->analysis.absorbance_ceiling =
          Positive("/analysis/absorbance_ceiling", "an absorbance", 10.0);
    }
  }

  // Checks that need several sections.
  void CheckWhole(const Scenario& s) const {
    // Channels must be distinct.
    std::vector<std::pair<double, std::string>> channels = {
        {s.detection.wavelength_nm,
         Has("/detection/wavelength_nm") ? "/detection/wavelength_nm" : "/detection"}};
    if (s.pathlength.water_peak) {
      channels.push_back({s.pathlength.water_sample_nm, "/pathlength/water_peak"});
      channels.push_back({s.pathlength.water_reference_nm, "/pathlength/water_peak"});
    }
    for (std::size_t i = 0; i < s.extra_wavelengths_nm.size(); ++i) {
      channels.push_back(
          {s.extra_wavelengths_nm[i], AppendPointer("/extra_wavelengths_nm", std::to_string(i))});
    }
    for (std::size_t i = 0; i < channels.size(); ++i) {
      for (std::size_t j = 0; j < i; ++j) {
        if (std::fabs(channels[i].first - channels[j].first) < kMinChannelSeparationNm) {
          Fail(channels[i].second, "wavelength " + FormatValue(channels[i].first) +
                                       " nm is already read as another channel; expected "
                                       "distinct wavelengths");
        }
      }
    }
    if (s.pathlength.assay_mode == PathlengthMode::kStandards) {
      const std::set<double> distinct(s.design.standards_uM.begin(), s.design.standards_uM.end());
      if (distinct.size() < 3) {
        Fail("/pathlength/assay_mode",
             "\"standards\" needs at least 3 distinct "
             "design.standards_uM concentrations");
      }
    }
    const Scenario::Design& d = s.design;
    if (d.saturating_wells > 0 && !(d.saturating_start_A > s.background_A)) {
      Fail("/design/saturating/start_A", "expected a starting absorbance above background_A (" +
                                             FormatValue(s.background_A) + ")");
    }
    int wells_needed = 0;
    if (!detail::PlanPlate(s, &wells_needed)) {
      const long samples = static_cast<long>(d.substrate_uM.size()) *
                           static_cast<long>(d.inhibitor_uM.size()) * d.replicates;
      Fail("/design", "the design needs " + std::to_string(wells_needed) + " wells (" +
                          std::to_string(samples) + " samples in series kept within one " +
                          (s.fill_by_columns ? "column" : "row") +
                          ", then the control wells from a fresh one), more than the " +
                          std::to_string(s.geometry.num_wells()) + " wells of the plate");
    }
  }

  std::string_view text_;
  const std::string& file_;
  detail::LocatedJson doc_;
};

}  // namespace

const char* RateLawToString(RateLaw model) {
  for (const ModelName& entry : kModelNames) {
    if (entry.model == model) return entry.name;
  }
  return "unknown";
}

bool StringToRateLaw(std::string_view text, RateLaw* model) {
  for (const ModelName& entry : kModelNames) {
    if (text == entry.name) {
      *model = entry.model;
      return true;
    }
  }
  return false;
}

double EnzymeRate(const KineticTruth& k, double substrate_uM, double inhibitor_uM) {
  const double s = substrate_uM > 0.0 ? substrate_uM : 0.0;
  const double i = inhibitor_uM > 0.0 ? inhibitor_uM : 0.0;
  const double vmax = k.vmax_uM_per_min;
  if (vmax == 0.0 || s == 0.0) return 0.0;
  switch (k.model) {
    case RateLaw::kMichaelisMenten:
      return vmax * s / (k.km_uM + s);
    case RateLaw::kSubstrateInhibition:
      return vmax * s / (k.km_uM + s + s * s / k.ksi_uM);
    case RateLaw::kHill: {
      const double sh = std::pow(s, k.hill_h);
      return vmax * sh / (std::pow(k.km_uM, k.hill_h) + sh);
    }
    case RateLaw::kCompetitive:
      return vmax * s / (k.km_uM * (1.0 + i / k.ki_uM) + s);
    case RateLaw::kUncompetitive:
      return vmax * s / (k.km_uM + s * (1.0 + i / k.ki_uM));
    case RateLaw::kNoncompetitive:
      return vmax * s / ((k.km_uM + s) * (1.0 + i / k.ki_uM));
    case RateLaw::kMixed:
      return vmax * s / (k.km_uM * (1.0 + i / k.ki_uM) + s * (1.0 + i / (k.alpha * k.ki_uM)));
  }
  return 0.0;
}

double Scenario::Pathlength::NominalCm() const {
  if (cm) return *cm;
  if (volume_uL && well_area_cm2)
    return *volume_uL * kCubicCentimetresPerMicrolitre / *well_area_cm2;
  return 1.0;
}

AssaySettings Scenario::ToAssaySettings() const {
  AssaySettings settings;
  settings.detection = detection;
  settings.pathlength.mode = pathlength.assay_mode;
  switch (pathlength.assay_mode) {
    case PathlengthMode::kFixed:
      settings.pathlength.cm = pathlength.NominalCm();
      break;
    case PathlengthMode::kGeometry:
      settings.pathlength.volume_uL = pathlength.volume_uL;
      settings.pathlength.well_area_cm2 = pathlength.well_area_cm2;
      break;
    case PathlengthMode::kWaterPeak:
      settings.pathlength.sample_nm = pathlength.water_sample_nm;
      settings.pathlength.reference_nm = pathlength.water_reference_nm;
      settings.pathlength.k_per_cm = pathlength.water_k_per_cm;
      break;
    case PathlengthMode::kStandards:
      break;
  }
  settings.enzyme = enzyme;
  settings.rate.method = analysis.rate_method;
  settings.blank = analysis.blank;
  settings.absorbance_ceiling = analysis.absorbance_ceiling;
  return settings;
}

Scenario ParseScenario(std::string_view json_text, const std::string& file) {
  return ScenarioReader(json_text, file).Read();
}

Scenario ReadScenarioFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path, 0, 0, "cannot open the scenario file");
  std::ostringstream buffer;
  buffer << in.rdbuf();
  if (in.bad()) throw InputError(path, 0, 0, "cannot read the scenario file");
  const std::string text = buffer.str();
  if (text.size() >= 2 &&
      ((text[0] == '\xFF' && text[1] == '\xFE') || (text[0] == '\xFE' && text[1] == '\xFF'))) {
    throw InputError(path, 1, 1, "the scenario file is UTF-16; save it as UTF-8");
  }
  return ParseScenario(text, path);
}

}  // namespace ratewell
