#include "fitting/assay_settings.h"

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <set>
#include <vector>

#include "importers/input_error.h"
#include "importers/json_position.h"

namespace ratewell {
namespace {

using Json = nlohmann::json;
using KeyPath = std::vector<std::string>;

// ---------------------------------------------------------------------------
// Names.

struct DirectionName {
  DetectionDirection value;
  const char* name;
};
constexpr DirectionName kDirectionNames[] = {
    {DetectionDirection::kConsumed, "consumed"},
    {DetectionDirection::kFormed, "formed"},
};

struct PathlengthModeName {
  PathlengthMode value;
  const char* name;
};
constexpr PathlengthModeName kPathlengthModeNames[] = {
    {PathlengthMode::kFixed, "fixed"},
    {PathlengthMode::kGeometry, "geometry"},
    {PathlengthMode::kWaterPeak, "water-peak"},
    {PathlengthMode::kStandards, "standards"},
};

struct RateMethodName {
  RateMethod value;
  const char* name;
};
constexpr RateMethodName kRateMethodNames[] = {
    {RateMethod::kAuto, "auto"},
    {RateMethod::kLinear, "linear"},
    {RateMethod::kLag, "lag"},
    {RateMethod::kProgress, "progress"},
};

struct BlankModeName {
  BlankMode value;
  const char* name;
};
constexpr BlankModeName kBlankModeNames[] = {
    {BlankMode::kPlateMean, "plate-mean"},
    {BlankMode::kMatched, "matched"},
    {BlankMode::kNone, "none"},
};

template <typename Table, typename Enum>
const char* NameOf(const Table& table, Enum value) {
  for (const auto& entry : table) {
    if (entry.value == value) return entry.name;
  }
  return "unknown";
}

template <typename Table, typename Enum>
bool ValueOf(const Table& table, std::string_view text, Enum* value) {
  for (const auto& entry : table) {
    if (text == entry.name) {
      *value = entry.value;
      return true;
    }
  }
  return false;
}

template <typename Table>
std::string ListNames(const Table& table) {
  std::string list;
  for (const auto& entry : table) {
    if (!list.empty()) list += ", ";
    list += '"';
    list += entry.name;
    list += '"';
  }
  return list;
}

// ---------------------------------------------------------------------------
// Keys allowed in each object.

const std::vector<std::string> kTopKeys = {
    "detection", "pathlength", "enzyme", "rate", "fit", "blank",
    "absorbance_ceiling", "max_substrate_consumed"};
const std::vector<std::string> kDetectionKeys = {
    "species", "wavelength_nm", "epsilon_per_M_cm", "direction", "per_turnover"};
const std::vector<std::string> kEnzymeKeys = {"nM", "mg_per_mL", "molar_mass_Da"};
const std::vector<std::string> kRateKeys = {"method", "window_min"};
const std::vector<std::string> kFitKeys = {"model", "weighting", "loss", "loss_scale", "interval",
                                           "confidence_level", "bootstrap", "cheng_prusoff"};
const std::vector<std::string> kBootstrapKeys = {"resamples", "scheme", "seed"};
const std::vector<std::string> kChengPrusoffKeys = {"mode", "substrate_uM", "km_uM", "km_se_uM"};

// Every model id, quoted, for messages.
std::string ListModelIds() {
  std::string list = "\"auto\"";
  for (KineticModel m : AllKineticModels()) {
    list += ", \"";
    list += KineticModelToString(m);
    list += '"';
  }
  return list;
}

const std::vector<std::string>& PathlengthKeysFor(PathlengthMode mode) {
  static const std::vector<std::string> kFixed = {"mode", "cm"};
  static const std::vector<std::string> kGeometry = {"mode", "volume_uL", "well_area_cm2"};
  static const std::vector<std::string> kWaterPeak = {"mode", "sample_nm", "reference_nm",
                                                      "k_per_cm"};
  static const std::vector<std::string> kStandards = {"mode"};
  switch (mode) {
    case PathlengthMode::kFixed: return kFixed;
    case PathlengthMode::kGeometry: return kGeometry;
    case PathlengthMode::kWaterPeak: return kWaterPeak;
    case PathlengthMode::kStandards: return kStandards;
  }
  return kFixed;
}

const std::vector<std::string>& AllPathlengthKeys() {
  static const std::vector<std::string> kAll = {
      "mode", "cm", "volume_uL", "well_area_cm2", "sample_nm", "reference_nm", "k_per_cm"};
  return kAll;
}

std::string JoinKeys(const std::vector<std::string>& keys) {
  std::string list;
  for (const std::string& key : keys) {
    if (!list.empty()) list += ", ";
    list += key;
  }
  return list;
}

std::string JoinPath(const KeyPath& path) {
  std::string text;
  for (const std::string& part : path) {
    if (!text.empty()) text += '.';
    text += part;
  }
  return text;
}

std::string FormatNumber(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.10g", value);
  return buffer;
}


std::string DidYouMean(std::string_view key, const std::vector<std::string>& allowed) {
  int best_distance = 3;  // suggest only near misses
  std::string best;
  for (const std::string& candidate : allowed) {
    const int distance = EditDistanceIgnoreCase(key, candidate);
    if (distance < best_distance) {
      best_distance = distance;
      best = candidate;
    }
  }
  return best.empty() ? std::string() : " (did you mean \"" + best + "\"?)";
}

// ---------------------------------------------------------------------------
// Validation shared by IsValid and the parser: the first problem, with the
// key path it concerns.

struct Problem {
  KeyPath path;
  std::string message;
};

bool IsPositiveFinite(double value) { return std::isfinite(value) && value > 0.0; }

std::optional<Problem> FindProblem(const AssaySettings& s) {
  const auto& d = s.detection;
  if (d.species.empty()) {
    return Problem{{"detection", "species"}, "expected a non-empty name such as \"NADH\""};
  }
  if (!IsPositiveFinite(d.wavelength_nm)) {
    return Problem{{"detection", "wavelength_nm"},
                   "expected a positive wavelength in nm, got " + FormatNumber(d.wavelength_nm)};
  }
  if (!IsPositiveFinite(d.epsilon_per_M_cm)) {
    return Problem{{"detection", "epsilon_per_M_cm"},
                   "expected a positive molar absorption coefficient in M^-1 cm^-1 (6220 for "
                   "NADH at 340 nm), got " +
                       FormatNumber(d.epsilon_per_M_cm)};
  }
  if (!IsPositiveFinite(d.per_turnover)) {
    return Problem{{"detection", "per_turnover"},
                   "expected a positive number of detected molecules per turnover, got " +
                       FormatNumber(d.per_turnover)};
  }

  const auto& p = s.pathlength;
  switch (p.mode) {
    case PathlengthMode::kFixed:
      if (!IsPositiveFinite(p.cm) || p.cm >= kMaxSensiblePathlengthCm) {
        return Problem{{"pathlength", "cm"},
                       "expected a positive number of centimetres below " +
                           FormatNumber(kMaxSensiblePathlengthCm) + ", got " +
                           FormatNumber(p.cm)};
      }
      break;
    case PathlengthMode::kGeometry: {
      if (!p.volume_uL.has_value()) {
        return Problem{{"pathlength", "volume_uL"},
                       "required when mode is \"geometry\" (liquid volume per well in uL)"};
      }
      if (!IsPositiveFinite(*p.volume_uL)) {
        return Problem{{"pathlength", "volume_uL"},
                       "expected a positive volume in microlitres, got " +
                           FormatNumber(*p.volume_uL)};
      }
      if (!p.well_area_cm2.has_value()) {
        return Problem{{"pathlength", "well_area_cm2"},
                       "required when mode is \"geometry\" (well floor area in cm2)"};
      }
      if (!IsPositiveFinite(*p.well_area_cm2)) {
        return Problem{{"pathlength", "well_area_cm2"},
                       "expected a positive area in square centimetres, got " +
                           FormatNumber(*p.well_area_cm2)};
      }
      const double cm = *p.volume_uL * kCubicCentimetresPerMicrolitre / *p.well_area_cm2;
      if (!(cm < kMaxSensiblePathlengthCm)) {
        return Problem{{"pathlength", "volume_uL"},
                       "volume_uL / well_area_cm2 gives " + FormatNumber(cm) +
                           " cm; expected below " + FormatNumber(kMaxSensiblePathlengthCm) +
                           " cm (volume in uL, area in cm2?)"};
      }
      break;
    }
    case PathlengthMode::kWaterPeak:
      if (!IsPositiveFinite(p.sample_nm)) {
        return Problem{{"pathlength", "sample_nm"},
                       "expected a positive wavelength in nm, got " + FormatNumber(p.sample_nm)};
      }
      if (!IsPositiveFinite(p.reference_nm)) {
        return Problem{{"pathlength", "reference_nm"},
                       "expected a positive wavelength in nm, got " +
                           FormatNumber(p.reference_nm)};
      }
      if (std::fabs(p.sample_nm - p.reference_nm) < 1.0) {
        return Problem{{"pathlength", "reference_nm"},
                       "expected a wavelength different from sample_nm (" +
                           FormatNumber(p.sample_nm) + " nm)"};
      }
      if (!IsPositiveFinite(p.k_per_cm)) {
        return Problem{{"pathlength", "k_per_cm"},
                       "expected a positive absorbance difference per cm of water (about "
                       "0.18), got " +
                           FormatNumber(p.k_per_cm)};
      }
      break;
    case PathlengthMode::kStandards:
      break;
  }

  const auto& e = s.enzyme;
  if (e.nM.has_value() && e.mg_per_mL.has_value()) {
    return Problem{{"enzyme"},
                   "give either \"nM\" or \"mg_per_mL\" (with \"molar_mass_Da\"), not both"};
  }
  if (e.nM.has_value() && !IsPositiveFinite(*e.nM)) {
    return Problem{{"enzyme", "nM"},
                   "expected a positive enzyme concentration in nM, got " + FormatNumber(*e.nM)};
  }
  if (e.mg_per_mL.has_value() && !IsPositiveFinite(*e.mg_per_mL)) {
    return Problem{{"enzyme", "mg_per_mL"},
                   "expected a positive enzyme concentration in mg/mL, got " +
                       FormatNumber(*e.mg_per_mL)};
  }
  if (e.molar_mass_Da.has_value()) {
    if (!IsPositiveFinite(*e.molar_mass_Da)) {
      return Problem{{"enzyme", "molar_mass_Da"},
                     "expected a positive molar mass in daltons (g/mol), got " +
                         FormatNumber(*e.molar_mass_Da)};
    }
    if (!e.known()) {
      return Problem{{"enzyme", "molar_mass_Da"},
                     "needs \"mg_per_mL\" (or \"nM\") beside it to say how much enzyme there is"};
    }
  }

  if (s.rate.window_min.has_value()) {
    const auto [start, end] = *s.rate.window_min;
    if (!std::isfinite(start) || !std::isfinite(end) || start < 0.0 || !(start < end)) {
      return Problem{{"rate", "window_min"},
                     "expected [start, end] in minutes with 0 <= start < end, got [" +
                         FormatNumber(start) + ", " + FormatNumber(end) + "]"};
    }
  }

  const AssaySettings::Fit& f = s.fit;
  KineticModel model_value;
  if (f.model != "auto" && !StringToKineticModel(f.model, &model_value)) {
    return Problem{{"fit", "model"},
                   "unknown model \"" + f.model + "\"; expected one of " + ListModelIds()};
  }
  if (!IsPositiveFinite(f.loss_scale)) {
    return Problem{{"fit", "loss_scale"},
                   "expected a positive scale of the weighted residual, got " +
                       FormatNumber(f.loss_scale)};
  }
  if (!std::isfinite(f.confidence_level) || !(f.confidence_level > 0.5) ||
      !(f.confidence_level < 1.0)) {
    return Problem{{"fit", "confidence_level"},
                   "expected a coverage between 0.5 and 1 (exclusive), e.g. 0.95, got " +
                       FormatNumber(f.confidence_level)};
  }
  if (f.bootstrap_resamples < 100 || f.bootstrap_resamples > 100000) {
    return Problem{{"fit", "bootstrap", "resamples"},
                   "expected a whole number of resamples from 100 to 100000, got " +
                       std::to_string(f.bootstrap_resamples)};
  }
  if (f.cheng_prusoff_mode.has_value()) {
    const KineticModel m = *f.cheng_prusoff_mode;
    if (m != KineticModel::kCompetitive && m != KineticModel::kUncompetitive &&
        m != KineticModel::kNoncompetitive) {
      return Problem{{"fit", "cheng_prusoff", "mode"},
                     "expected \"competitive\", \"uncompetitive\" or \"noncompetitive\""};
    }
    if (!IsPositiveFinite(f.cheng_prusoff_substrate_uM)) {
      return Problem{{"fit", "cheng_prusoff", "substrate_uM"},
                     "expected the positive substrate concentration of the dose-response series in "
                     "µM, got " + FormatNumber(f.cheng_prusoff_substrate_uM)};
    }
    if (!IsPositiveFinite(f.cheng_prusoff_km_uM)) {
      return Problem{{"fit", "cheng_prusoff", "km_uM"},
                     "expected the positive Km in µM, got " + FormatNumber(f.cheng_prusoff_km_uM)};
    }
    if (f.cheng_prusoff_km_se_uM.has_value() &&
        (!std::isfinite(*f.cheng_prusoff_km_se_uM) || *f.cheng_prusoff_km_se_uM < 0.0)) {
      return Problem{{"fit", "cheng_prusoff", "km_se_uM"},
                     "expected a standard error >= 0 in µM, got " +
                         FormatNumber(*f.cheng_prusoff_km_se_uM)};
    }
  }

  if (!IsPositiveFinite(s.absorbance_ceiling)) {
    return Problem{{"absorbance_ceiling"},
                   "expected a positive absorbance, got " + FormatNumber(s.absorbance_ceiling)};
  }
  if (!std::isfinite(s.max_substrate_consumed) || !(s.max_substrate_consumed > 0.0) ||
      !(s.max_substrate_consumed < 1.0)) {
    return Problem{{"max_substrate_consumed"},
                   "expected a fraction between 0 and 1 (exclusive), got " +
                       FormatNumber(s.max_substrate_consumed)};
  }
  return std::nullopt;
}

// ---------------------------------------------------------------------------
// Positions in the text.

// The parser reports a whole unexpected string token at its closing quote;
// the person wants its start (a missing comma before a key). Offset of the
// opening quote on the same line, or end_quote unchanged if not found.
std::size_t StartOfStringEndingAt(std::string_view text, std::size_t end_quote) {
  if (end_quote >= text.size() || text[end_quote] != '"') return end_quote;
  for (std::size_t j = end_quote; j-- > 0;) {
    if (text[j] == '\n') break;
    if (text[j] != '"') continue;
    std::size_t backslashes = 0;
    while (j > backslashes && text[j - 1 - backslashes] == '\\') ++backslashes;
    if (backslashes % 2 == 0) return j;
  }
  return end_quote;
}

// Offset of `"key"` written as an object key (followed by optional
// whitespace and ':') at or after from; npos if none.
std::size_t FindKey(std::string_view text, const std::string& key, std::size_t from) {
  const std::string quoted = "\"" + key + "\"";
  std::size_t at = text.find(quoted, from);
  while (at != std::string_view::npos) {
    std::size_t after = at + quoted.size();
    while (after < text.size() && std::isspace(static_cast<unsigned char>(text[after]))) ++after;
    if (after < text.size() && text[after] == ':') return at;
    at = text.find(quoted, at + 1);
  }
  return std::string_view::npos;
}

// Where a key path is written: each key searched after the previous one; the
// occurrence-th match for the last key (1 = first). When a key is not written
// (a required key that is missing), the position of the deepest key found;
// {0, 0} when none is.
TextPosition LocateKeyPath(std::string_view text, const KeyPath& path, int occurrence = 1) {
  std::size_t from = 0;
  std::optional<std::size_t> found;
  for (std::size_t i = 0; i < path.size(); ++i) {
    const int wanted = (i + 1 == path.size()) ? occurrence : 1;
    std::size_t at = std::string_view::npos;
    std::size_t search_from = from;
    for (int k = 0; k < wanted; ++k) {
      at = FindKey(text, path[i], search_from);
      if (at == std::string_view::npos) break;
      search_from = at + 1;
    }
    if (at == std::string_view::npos) break;
    found = at;
    from = at + path[i].size() + 2;
  }
  if (!found.has_value()) return {};
  return PositionOfOffset(text, *found);
}

// ---------------------------------------------------------------------------
// The reader.

class SettingsReader {
 public:
  SettingsReader(std::string_view text, const std::string& file) : text_(text), file_(file) {}

  AssaySettings Read() {
    if (std::all_of(text_.begin(), text_.end(),
                    [](char c) { return std::isspace(static_cast<unsigned char>(c)); })) {
      throw InputError(file_, 0, 0,
                       "the assay settings file is empty; expected a JSON object such as {} "
                       "(every key is optional)");
    }
    const Json root = ParseJson();
    if (!root.is_object()) {
      const std::size_t first = text_.find_first_not_of(" \t\r\n");
      const TextPosition at = PositionOfOffset(text_, first);
      throw InputError(file_, at.line, at.column,
                       std::string("expected a JSON object at the top level, got ") +
                           root.type_name());
    }
    CheckKeys(root, {}, kTopKeys);

    AssaySettings settings;
    if (const Json* detection = Member(root, "detection")) {
      ReadDetection(*detection, &settings.detection);
    }
    if (const Json* pathlength = Member(root, "pathlength")) {
      ReadPathlength(*pathlength, &settings.pathlength);
    }
    if (const Json* enzyme = Member(root, "enzyme")) {
      ReadEnzyme(*enzyme, &settings.enzyme);
    }
    if (const Json* rate = Member(root, "rate")) {
      ReadRate(*rate, &settings.rate);
    }
    if (const Json* fit = Member(root, "fit")) {
      ReadFit(*fit, &settings.fit);
    }
    if (const Json* blank = Member(root, "blank")) {
      const std::string name = String(*blank, {"blank"});
      if (!ValueOf(kBlankModeNames, name, &settings.blank)) {
        Fail({"blank"}, "unknown blank correction \"" + name + "\"; expected one of " +
                            ListNames(kBlankModeNames));
      }
    }
    if (const Json* ceiling = Member(root, "absorbance_ceiling")) {
      settings.absorbance_ceiling = Number(*ceiling, {"absorbance_ceiling"});
    }
    if (const Json* fraction = Member(root, "max_substrate_consumed")) {
      settings.max_substrate_consumed = Number(*fraction, {"max_substrate_consumed"});
    }

    if (const std::optional<Problem> problem = FindProblem(settings)) {
      Fail(problem->path, problem->message);
    }
    return settings;
  }

 private:
  [[noreturn]] void Fail(const KeyPath& path, const std::string& message,
                         int occurrence = 1) const {
    const TextPosition at = LocateKeyPath(text_, path, occurrence);
    const std::string where = path.empty() ? std::string("top level") : JoinPath(path);
    throw InputError(file_, at.line, at.column, where + ": " + message);
  }

  Json ParseJson() {
    // Repeated keys are legal JSON but the parser would keep only the last
    // one silently; note the first repeat and reject it after the parse.
    struct Frame {
      std::set<std::string> keys;
      std::string current;
    };
    std::vector<Frame> frames;
    std::optional<KeyPath> repeated;
    Json::parser_callback_t callback = [&](int /*depth*/, Json::parse_event_t event,
                                           Json& parsed) {
      switch (event) {
        case Json::parse_event_t::object_start:
          frames.emplace_back();
          break;
        case Json::parse_event_t::object_end:
          if (!frames.empty()) frames.pop_back();
          break;
        case Json::parse_event_t::key: {
          Frame& frame = frames.back();
          frame.current = parsed.get<std::string>();
          if (!frame.keys.insert(frame.current).second && !repeated.has_value()) {
            KeyPath path;
            for (const Frame& f : frames) path.push_back(f.current);
            repeated = path;
          }
          break;
        }
        default:
          break;
      }
      return true;
    };

    Json root;
    try {
      root = Json::parse(text_.begin(), text_.end(), callback);
    } catch (const Json::parse_error& error) {
      // error.byte counts the bytes read, the offending one included.
      std::size_t offset = error.byte > 0 ? error.byte - 1 : 0;
      std::string what = error.what();
      if (what.find("unexpected string literal") != std::string::npos) {
        offset = StartOfStringEndingAt(text_, offset);
      }
      const TextPosition at = PositionOfOffset(text_, offset);
      const std::size_t detail = what.find("syntax error");
      if (detail != std::string::npos) what = what.substr(detail);
      throw InputError(file_, at.line, at.column, "not valid JSON: " + what);
    } catch (const Json::out_of_range& error) {
      // A number too large for a double ("1e999"); the message quotes it.
      const std::string what = error.what();
      const std::size_t open = what.find('\'');
      const std::size_t close = what.rfind('\'');
      TextPosition at;
      if (open != std::string::npos && close > open) {
        const std::size_t found = text_.find(what.substr(open + 1, close - open - 1));
        if (found != std::string_view::npos) at = PositionOfOffset(text_, found);
      }
      throw InputError(file_, at.line, at.column,
                       "not valid JSON: a number is too large for a double (" +
                           what.substr(open == std::string::npos ? 0 : open) + ")");
    }
    if (repeated.has_value()) {
      Fail(*repeated, "key written twice; give each setting once", 2);
    }
    return root;
  }

  static const Json* Member(const Json& object, const char* key) {
    const auto it = object.find(key);
    return it == object.end() ? nullptr : &*it;
  }

  void CheckKeys(const Json& object, const KeyPath& path,
                 const std::vector<std::string>& allowed) const {
    for (const auto& item : object.items()) {
      if (std::find(allowed.begin(), allowed.end(), item.key()) != allowed.end()) continue;
      KeyPath key_path = path;
      key_path.push_back(item.key());
      Fail(key_path, "unknown key" + DidYouMean(item.key(), allowed) +
                         "; allowed keys here: " + JoinKeys(allowed));
    }
  }

  void RequireObject(const Json& value, const KeyPath& path) const {
    if (!value.is_object()) {
      Fail(path, std::string("expected an object {...}, got ") + value.type_name());
    }
  }

  double Number(const Json& value, const KeyPath& path) const {
    if (!value.is_number()) {
      Fail(path, std::string("expected a number, got ") + value.type_name());
    }
    const double number = value.get<double>();
    if (!std::isfinite(number)) Fail(path, "expected a finite number");
    return number;
  }

  std::string String(const Json& value, const KeyPath& path) const {
    if (!value.is_string()) {
      Fail(path, std::string("expected a string, got ") + value.type_name());
    }
    return value.get<std::string>();
  }

  void ReadDetection(const Json& object, AssaySettings::Detection* detection) const {
    const KeyPath path = {"detection"};
    RequireObject(object, path);
    CheckKeys(object, path, kDetectionKeys);
    if (const Json* v = Member(object, "species")) {
      detection->species = String(*v, {"detection", "species"});
    }
    if (const Json* v = Member(object, "wavelength_nm")) {
      detection->wavelength_nm = Number(*v, {"detection", "wavelength_nm"});
    }
    if (const Json* v = Member(object, "epsilon_per_M_cm")) {
      detection->epsilon_per_M_cm = Number(*v, {"detection", "epsilon_per_M_cm"});
    }
    if (const Json* v = Member(object, "direction")) {
      const std::string name = String(*v, {"detection", "direction"});
      if (!StringToDetectionDirection(name, &detection->direction)) {
        Fail({"detection", "direction"}, "unknown direction \"" + name +
                                             "\"; expected one of " +
                                             ListNames(kDirectionNames));
      }
    }
    if (const Json* v = Member(object, "per_turnover")) {
      detection->per_turnover = Number(*v, {"detection", "per_turnover"});
    }
  }

  void ReadPathlength(const Json& object, AssaySettings::Pathlength* pathlength) const {
    const KeyPath path = {"pathlength"};
    RequireObject(object, path);
    CheckKeys(object, path, AllPathlengthKeys());
    if (const Json* v = Member(object, "mode")) {
      const std::string name = String(*v, {"pathlength", "mode"});
      if (!StringToPathlengthMode(name, &pathlength->mode)) {
        Fail({"pathlength", "mode"}, "unknown pathlength mode \"" + name +
                                         "\"; expected one of " +
                                         ListNames(kPathlengthModeNames));
      }
    }
    // A key of another mode would be ignored: say so rather than guess.
    const std::vector<std::string>& mode_keys = PathlengthKeysFor(pathlength->mode);
    for (const auto& item : object.items()) {
      if (std::find(mode_keys.begin(), mode_keys.end(), item.key()) != mode_keys.end()) continue;
      const std::string mode_name = PathlengthModeToString(pathlength->mode);
      Fail({"pathlength", item.key()},
           "not used when mode is \"" + mode_name + "\"" +
               (Member(object, "mode") ? std::string() : std::string(" (the default)")) +
               "; keys for \"" + mode_name + "\": " + JoinKeys(mode_keys));
    }
    if (const Json* v = Member(object, "cm")) pathlength->cm = Number(*v, {"pathlength", "cm"});
    if (const Json* v = Member(object, "volume_uL")) {
      pathlength->volume_uL = Number(*v, {"pathlength", "volume_uL"});
    }
    if (const Json* v = Member(object, "well_area_cm2")) {
      pathlength->well_area_cm2 = Number(*v, {"pathlength", "well_area_cm2"});
    }
    if (const Json* v = Member(object, "sample_nm")) {
      pathlength->sample_nm = Number(*v, {"pathlength", "sample_nm"});
    }
    if (const Json* v = Member(object, "reference_nm")) {
      pathlength->reference_nm = Number(*v, {"pathlength", "reference_nm"});
    }
    if (const Json* v = Member(object, "k_per_cm")) {
      pathlength->k_per_cm = Number(*v, {"pathlength", "k_per_cm"});
    }
  }

  void ReadEnzyme(const Json& object, AssaySettings::Enzyme* enzyme) const {
    if (object.is_null()) return;  // unknown, as written by AssaySettingsToJson
    const KeyPath path = {"enzyme"};
    RequireObject(object, path);
    CheckKeys(object, path, kEnzymeKeys);
    if (const Json* v = Member(object, "nM")) enzyme->nM = Number(*v, {"enzyme", "nM"});
    if (const Json* v = Member(object, "mg_per_mL")) {
      enzyme->mg_per_mL = Number(*v, {"enzyme", "mg_per_mL"});
    }
    if (const Json* v = Member(object, "molar_mass_Da")) {
      enzyme->molar_mass_Da = Number(*v, {"enzyme", "molar_mass_Da"});
    }
  }

  void ReadRate(const Json& object, AssaySettings::Rate* rate) const {
    const KeyPath path = {"rate"};
    RequireObject(object, path);
    CheckKeys(object, path, kRateKeys);
    if (const Json* v = Member(object, "method")) {
      const std::string name = String(*v, {"rate", "method"});
      if (!StringToRateMethod(name, &rate->method)) {
        Fail({"rate", "method"}, "unknown rate method \"" + name + "\"; expected one of " +
                                     ListNames(kRateMethodNames));
      }
    }
    if (const Json* v = Member(object, "window_min")) {
      if (v->is_null()) return;  // automatic, as written by AssaySettingsToJson
      const KeyPath window_path = {"rate", "window_min"};
      if (!v->is_array()) {
        Fail(window_path,
             std::string("expected [start, end] in minutes, got ") + v->type_name());
      }
      if (v->size() != 2) {
        Fail(window_path, "expected [start, end] in minutes (two numbers), got an array of " +
                              std::to_string(v->size()));
      }
      rate->window_min = std::make_pair(Number((*v)[0], window_path),
                                        Number((*v)[1], window_path));
    }
  }

  void ReadFit(const Json& object, AssaySettings::Fit* fit) const {
    const KeyPath path = {"fit"};
    RequireObject(object, path);
    CheckKeys(object, path, kFitKeys);
    if (const Json* v = Member(object, "model")) fit->model = String(*v, {"fit", "model"});
    if (const Json* v = Member(object, "weighting")) {
      const std::string name = String(*v, {"fit", "weighting"});
      if (!StringToWeighting(name, &fit->weighting)) {
        Fail({"fit", "weighting"}, "unknown weighting \"" + name +
                                       "\"; expected \"none\", \"relative\" or \"inverse-variance\"");
      }
    }
    if (const Json* v = Member(object, "loss")) {
      const std::string name = String(*v, {"fit", "loss"});
      if (!StringToRobustLoss(name, &fit->loss)) {
        Fail({"fit", "loss"},
             "unknown loss \"" + name + "\"; expected \"none\", \"huber\" or \"cauchy\"");
      }
    }
    if (const Json* v = Member(object, "loss_scale")) {
      fit->loss_scale = Number(*v, {"fit", "loss_scale"});
    }
    if (const Json* v = Member(object, "interval")) {
      const std::string name = String(*v, {"fit", "interval"});
      if (!StringToIntervalMethod(name, &fit->interval)) {
        Fail({"fit", "interval"}, "unknown interval method \"" + name +
                                      "\"; expected \"asymptotic\", \"profile\" or \"bootstrap\"");
      }
    }
    if (const Json* v = Member(object, "confidence_level")) {
      fit->confidence_level = Number(*v, {"fit", "confidence_level"});
    }
    if (const Json* v = Member(object, "bootstrap")) {
      const KeyPath bootstrap_path = {"fit", "bootstrap"};
      RequireObject(*v, bootstrap_path);
      CheckKeys(*v, bootstrap_path, kBootstrapKeys);
      if (const Json* r = Member(*v, "resamples")) {
        fit->bootstrap_resamples = static_cast<int>(
            WholeNumber(*r, {"fit", "bootstrap", "resamples"}, 0.0, 1e9));
      }
      if (const Json* r = Member(*v, "scheme")) {
        const std::string name = String(*r, {"fit", "bootstrap", "scheme"});
        if (!StringToBootstrapScheme(name, &fit->bootstrap_scheme)) {
          Fail({"fit", "bootstrap", "scheme"},
               "unknown scheme \"" + name + "\"; expected \"residuals\" or \"cases\"");
        }
      }
      if (const Json* r = Member(*v, "seed")) {
        fit->bootstrap_seed = static_cast<std::uint64_t>(
            WholeNumber(*r, {"fit", "bootstrap", "seed"}, 0.0, 9007199254740992.0));
      }
    }
    if (const Json* v = Member(object, "cheng_prusoff")) {
      const KeyPath cp_path = {"fit", "cheng_prusoff"};
      if (v->is_null()) return;  // none, as written by AssaySettingsToJson
      RequireObject(*v, cp_path);
      CheckKeys(*v, cp_path, kChengPrusoffKeys);
      for (const char* key : {"mode", "substrate_uM", "km_uM"}) {
        if (!Member(*v, key)) {
          Fail(cp_path, std::string("missing \"") + key +
                            "\"; Cheng-Prusoff needs mode, substrate_uM and km_uM");
        }
      }
      const std::string mode = String(*Member(*v, "mode"), {"fit", "cheng_prusoff", "mode"});
      KineticModel model;
      if (!StringToKineticModel(mode, &model)) {
        Fail({"fit", "cheng_prusoff", "mode"},
             "unknown mode \"" + mode +
                 "\"; expected \"competitive\", \"uncompetitive\" or \"noncompetitive\"");
      }
      fit->cheng_prusoff_mode = model;
      fit->cheng_prusoff_substrate_uM =
          Number(*Member(*v, "substrate_uM"), {"fit", "cheng_prusoff", "substrate_uM"});
      fit->cheng_prusoff_km_uM = Number(*Member(*v, "km_uM"), {"fit", "cheng_prusoff", "km_uM"});
      if (const Json* r = Member(*v, "km_se_uM")) {
        fit->cheng_prusoff_km_se_uM = Number(*r, {"fit", "cheng_prusoff", "km_se_uM"});
      }
    }
  }

  // A whole number in [lo, hi].
  double WholeNumber(const Json& value, const KeyPath& path, double lo, double hi) const {
    const double number = Number(value, path);
    if (number != std::floor(number) || number < lo || number > hi) {
      Fail(path, "expected a whole number from " + FormatNumber(lo) + " to " + FormatNumber(hi) +
                     ", got " + FormatNumber(number));
    }
    return number;
  }

  std::string_view text_;
  const std::string& file_;
};

}  // namespace

const char* DetectionDirectionToString(DetectionDirection direction) {
  return NameOf(kDirectionNames, direction);
}
bool StringToDetectionDirection(std::string_view text, DetectionDirection* direction) {
  return ValueOf(kDirectionNames, text, direction);
}
const char* PathlengthModeToString(PathlengthMode mode) {
  return NameOf(kPathlengthModeNames, mode);
}
bool StringToPathlengthMode(std::string_view text, PathlengthMode* mode) {
  return ValueOf(kPathlengthModeNames, text, mode);
}
const char* RateMethodToString(RateMethod method) { return NameOf(kRateMethodNames, method); }
bool StringToRateMethod(std::string_view text, RateMethod* method) {
  return ValueOf(kRateMethodNames, text, method);
}
const char* BlankModeToString(BlankMode mode) { return NameOf(kBlankModeNames, mode); }
bool StringToBlankMode(std::string_view text, BlankMode* mode) {
  return ValueOf(kBlankModeNames, text, mode);
}

std::optional<double> AssaySettings::Enzyme::Nanomolar() const {
  if (nM.has_value()) return nM;
  if (mg_per_mL.has_value() && molar_mass_Da.has_value()) {
    // mg/mL = g/L; g/L ÷ g/mol = mol/L; × 1e9 = nM.
    return *mg_per_mL / *molar_mass_Da * kNanomolarPerMolar;
  }
  return std::nullopt;
}

std::optional<double> AssaySettings::Enzyme::MilligramsPerMillilitre() const {
  if (mg_per_mL.has_value()) return mg_per_mL;
  if (nM.has_value() && molar_mass_Da.has_value()) {
    return *nM / kNanomolarPerMolar * *molar_mass_Da;
  }
  return std::nullopt;
}

bool AssaySettings::IsValid(std::string* error) const {
  const std::optional<Problem> problem = FindProblem(*this);
  if (!problem.has_value()) return true;
  if (error != nullptr) {
    *error = (problem->path.empty() ? std::string("top level") : JoinPath(problem->path)) +
             ": " + problem->message;
  }
  return false;
}

AssaySettings ParseAssaySettings(std::string_view json_text, const std::string& file) {
  // A UTF-8 byte order mark is not part of the JSON text.
  if (json_text.substr(0, 3) == "\xEF\xBB\xBF") json_text.remove_prefix(3);
  return SettingsReader(json_text, file).Read();
}

AssaySettings ReadAssaySettingsFile(const std::string& path) {
  std::error_code ignored;
  if (std::filesystem::is_directory(path, ignored)) {
    throw InputError(path, 0, 0, "is a directory; expected an assay settings file (JSON)");
  }
  std::ifstream stream(path, std::ios::binary);
  if (!stream) {
    throw InputError(path, 0, 0,
                     std::string("cannot open the assay settings file: ") + std::strerror(errno));
  }
  std::string bytes((std::istreambuf_iterator<char>(stream)), std::istreambuf_iterator<char>());
  if (stream.bad()) {
    throw InputError(path, 0, 0, "cannot read the assay settings file");
  }
  if (bytes.size() >= 2 && ((bytes[0] == '\xFF' && bytes[1] == '\xFE') ||
                            (bytes[0] == '\xFE' && bytes[1] == '\xFF'))) {
    throw InputError(path, 0, 0,
                     "the assay settings file is UTF-16; expected UTF-8 (save it as UTF-8)");
  }
  return ParseAssaySettings(bytes, path);
}

nlohmann::json AssaySettingsToJson(const AssaySettings& settings) {
  Json json = Json::object();
  const auto& d = settings.detection;
  json["detection"] = {{"species", d.species},
                       {"wavelength_nm", d.wavelength_nm},
                       {"epsilon_per_M_cm", d.epsilon_per_M_cm},
                       {"direction", DetectionDirectionToString(d.direction)},
                       {"per_turnover", d.per_turnover}};

  const auto& p = settings.pathlength;
  Json pathlength = {{"mode", PathlengthModeToString(p.mode)}};
  switch (p.mode) {
    case PathlengthMode::kFixed:
      pathlength["cm"] = p.cm;
      break;
    case PathlengthMode::kGeometry:
      if (p.volume_uL.has_value()) pathlength["volume_uL"] = *p.volume_uL;
      if (p.well_area_cm2.has_value()) pathlength["well_area_cm2"] = *p.well_area_cm2;
      break;
    case PathlengthMode::kWaterPeak:
      pathlength["sample_nm"] = p.sample_nm;
      pathlength["reference_nm"] = p.reference_nm;
      pathlength["k_per_cm"] = p.k_per_cm;
      break;
    case PathlengthMode::kStandards:
      break;
  }
  json["pathlength"] = pathlength;

  const auto& e = settings.enzyme;
  if (!e.nM.has_value() && !e.mg_per_mL.has_value() && !e.molar_mass_Da.has_value()) {
    json["enzyme"] = nullptr;
  } else {
    Json enzyme = Json::object();
    if (e.nM.has_value()) enzyme["nM"] = *e.nM;
    if (e.mg_per_mL.has_value()) enzyme["mg_per_mL"] = *e.mg_per_mL;
    if (e.molar_mass_Da.has_value()) enzyme["molar_mass_Da"] = *e.molar_mass_Da;
    json["enzyme"] = enzyme;
  }

  Json rate = {{"method", RateMethodToString(settings.rate.method)}};
  if (settings.rate.window_min.has_value()) {
    rate["window_min"] = Json::array({settings.rate.window_min->first,
                                      settings.rate.window_min->second});
  } else {
    rate["window_min"] = nullptr;
  }
  json["rate"] = rate;

  const AssaySettings::Fit& f = settings.fit;
  Json fit = {{"model", f.model},
              {"weighting", WeightingToString(f.weighting)},
              {"loss", RobustLossToString(f.loss)},
              {"loss_scale", f.loss_scale},
              {"interval", IntervalMethodToString(f.interval)},
              {"confidence_level", f.confidence_level},
              {"bootstrap", {{"resamples", f.bootstrap_resamples},
                             {"scheme", BootstrapSchemeToString(f.bootstrap_scheme)},
                             {"seed", f.bootstrap_seed}}}};
  if (f.cheng_prusoff_mode.has_value()) {
    Json cp = {{"mode", KineticModelToString(*f.cheng_prusoff_mode)},
               {"substrate_uM", f.cheng_prusoff_substrate_uM},
               {"km_uM", f.cheng_prusoff_km_uM}};
    if (f.cheng_prusoff_km_se_uM.has_value()) cp["km_se_uM"] = *f.cheng_prusoff_km_se_uM;
    fit["cheng_prusoff"] = cp;
  } else {
    fit["cheng_prusoff"] = nullptr;
  }
  json["fit"] = fit;

  json["blank"] = BlankModeToString(settings.blank);
  json["absorbance_ceiling"] = settings.absorbance_ceiling;
  json["max_substrate_consumed"] = settings.max_substrate_consumed;
  return json;
}

}  // namespace ratewell
