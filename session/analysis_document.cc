#include "session/analysis_document.h"

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <sstream>
#include <stdexcept>
#include <utility>

#include "importers/file_io.h"
#include "importers/input_error.h"
#include "report/files.h"
#include "report/results.h"
#include "importers/json_position.h"

namespace ratewell {
namespace {

using Json = nlohmann::json;
using Path = std::vector<std::string>;

namespace fs = std::filesystem;

constexpr const char* kReasonGivenAtStart = "given at the start";

bool IsLowerHex64(const std::string& text) {
  return text.size() == 64 && std::all_of(text.begin(), text.end(), [](char c) {
           return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f');
         });
}

std::string JoinPath(const Path& path) {
  std::string text;
  for (const std::string& part : path) {
    const bool index = !part.empty() && std::all_of(part.begin(), part.end(), [](char c) {
      return std::isdigit(static_cast<unsigned char>(c));
    });
    if (index) {
      text += "[" + part + "]";
    } else {
      text += (text.empty() ? "" : ".") + part;
    }
  }
  return text.empty() ? "top level" : text;
}

std::string Quote(const std::string& text) { return "\"" + text + "\""; }

// A problem with a change: the field it concerns ("well", "reason", …) and
// what was expected.
struct ChangeProblem {
  std::string field;
  std::string message;
};

bool KnownModelChoice(const std::string& value) {
  KineticModel model;
  return value == "auto" || StringToKineticModel(value, &model);
}

std::optional<ChangeProblem> CheckChange(const ManualChange& change, int num_plates) {
  if (change.IsWellChange()) {
    if (change.plate < 0 || change.plate >= num_plates) {
      return ChangeProblem{"plate", "plate index " + std::to_string(change.plate) +
                                        " is out of range; expected 0 to " +
                                        std::to_string(num_plates - 1)};
    }
    const std::optional<WellPosition> position = ParseWellName(change.well);
    if (!position || WellName(*position) != change.well) {
      return ChangeProblem{"well", "expected a zero-padded well name such as \"B03\", got " +
                                       Quote(change.well)};
    }
  }
  switch (change.kind) {
    case ChangeKind::kExclude:
      if (change.reason.find_first_not_of(" \t\r\n") == std::string::npos) {
        return ChangeProblem{"reason", "an excluded well needs a reason; expected a non-empty text"};
      }
      break;
    case ChangeKind::kWindow:
      if (!std::isfinite(change.start_min) || !std::isfinite(change.end_min) ||
          change.start_min < 0.0 || !(change.start_min < change.end_min)) {
        return ChangeProblem{"window_min",
                             "expected [start, end] in minutes with 0 <= start < end"};
      }
      break;
    case ChangeKind::kModel:
      if (!KnownModelChoice(change.value)) {
        return ChangeProblem{"value", "unknown kinetic model " + Quote(change.value) +
                                          "; expected \"auto\" or a model id such as "
                                          "\"michaelis-menten\""};
      }
      break;
    case ChangeKind::kIntervalMethod: {
      IntervalMethod method;
      if (!StringToIntervalMethod(change.value, &method)) {
        return ChangeProblem{"value", "unknown interval method " + Quote(change.value) +
                                          "; expected asymptotic, profile or bootstrap"};
      }
      break;
    }
    case ChangeKind::kWeighting: {
      Weighting weighting;
      if (!StringToWeighting(change.value, &weighting)) {
        return ChangeProblem{"value", "unknown weighting " + Quote(change.value) +
                                          "; expected none, relative or inverse-variance"};
      }
      break;
    }
    case ChangeKind::kRestore:
    case ChangeKind::kAutomaticWindow:
      break;
  }
  return std::nullopt;
}

Json ReadOptionsToJson(const ReadOptions& options) {
  return Json{{"table", TableLayoutToString(options.layout)},
              {"time_unit", TimeUnitToString(options.time_unit)},
              {"sheet", options.sheet},
              {"overflow_markers", options.overflow_markers},
              {"assumed_wavelength_nm", options.assumed_wavelength_nm}};
}

std::string ReadTextFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw InputError(path, 0, 0, "cannot open the analysis document; expected a readable file");
  }
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  if (in.bad()) throw InputError(path, 0, 0, "cannot read the analysis document");
  return text;
}

// The strict reader of the file form: every key known, every value of the
// expected type, each problem an InputError at the value's line and column.
class DocumentReader {
 public:
  DocumentReader(std::string_view text, const std::string& file) : text_(text), file_(file) {
    if (text_.substr(0, 3) == "\xEF\xBB\xBF") text_.remove_prefix(3);
  }

  Json ParseText() {
    if (text_.find_first_not_of(" \t\r\n") == std::string_view::npos) {
      throw InputError(file_, 0, 0,
                       "the analysis document is empty; expected a JSON object with "
                       "\"format\": \"ratewell-analysis\"");
    }
    try {
      return Json::parse(text_.begin(), text_.end());
    } catch (const Json::parse_error& error) {
      const std::size_t offset = error.byte > 0 ? error.byte - 1 : 0;
      const TextPosition at = PositionOfOffset(text_, offset);
      std::string what = error.what();
      const std::size_t detail = what.find("syntax error");
      if (detail != std::string::npos) what = what.substr(detail);
      throw InputError(file_, at.line, at.column,
                       "not valid JSON (the document is damaged or truncated): " + what);
    } catch (const Json::exception& error) {
      throw InputError(file_, 0, 0, std::string("not valid JSON: ") + error.what());
    }
  }

  [[noreturn]] void Fail(const Path& path, const std::string& message) const {
    const TextPosition at = LocateJsonValue(text_, path);
    throw InputError(file_, at.line, at.column, JoinPath(path) + ": " + message);
  }

  const Json& Member(const Json& object, const Path& path, const std::string& key) const {
    const auto it = object.find(key);
    if (it == object.end()) Fail(path, "missing key " + Quote(key));
    return *it;
  }

  void CheckObject(const Json& value, const Path& path, const std::vector<std::string>& allowed) const {
    if (!value.is_object()) {
      Fail(path, std::string("expected a JSON object, got ") + value.type_name());
    }
    for (const auto& item : value.items()) {
      if (std::find(allowed.begin(), allowed.end(), item.key()) == allowed.end()) {
        Path where = path;
        where.push_back(item.key());
        std::string list;
        for (const std::string& a : allowed) list += (list.empty() ? "" : ", ") + a;
        Fail(where, "unknown key " + Quote(item.key()) + "; expected one of " + list);
      }
    }
  }

  std::string String(const Json& value, const Path& path) const {
    if (!value.is_string()) Fail(path, std::string("expected a string, got ") + value.type_name());
    return value.get<std::string>();
  }

  std::string StringOrNull(const Json& value, const Path& path) const {
    if (value.is_null()) return "";
    return String(value, path);
  }

  long long Integer(const Json& value, const Path& path) const {
    if (!value.is_number_integer()) {
      Fail(path, std::string("expected a whole number, got ") + value.type_name());
    }
    return value.get<long long>();
  }

  double Number(const Json& value, const Path& path) const {
    if (!value.is_number()) Fail(path, std::string("expected a number, got ") + value.type_name());
    return value.get<double>();
  }

  const Json& Array(const Json& value, const Path& path) const {
    if (!value.is_array()) Fail(path, std::string("expected a JSON array, got ") + value.type_name());
    return value;
  }

  static Path Child(Path path, const std::string& key) {
    path.push_back(key);
    return path;
  }
  static Path Child(Path path, std::size_t index) {
    path.push_back(std::to_string(index));
    return path;
  }

 private:
  std::string_view text_;
  std::string file_;
};

ReadOptions ParseReadOptions(const DocumentReader& r, const Json& value, const Path& path) {
  r.CheckObject(value, path,
                {"table", "time_unit", "sheet", "overflow_markers", "assumed_wavelength_nm"});
  ReadOptions options;
  if (value.contains("table")) {
    const std::string name = r.String(value["table"], DocumentReader::Child(path, "table"));
    if (!StringToTableLayout(name, &options.layout)) {
      r.Fail(DocumentReader::Child(path, "table"),
             "unknown table layout " + Quote(name) + "; expected auto, long, wide or grid");
    }
  }
  if (value.contains("time_unit")) {
    const Path where = DocumentReader::Child(path, "time_unit");
    const std::string name = r.String(value["time_unit"], where);
    if (!StringToTimeUnit(name, &options.time_unit)) {
      r.Fail(where, "unknown time unit " + Quote(name) + "; expected auto, s, min or h");
    }
  }
  if (value.contains("sheet")) {
    options.sheet = r.String(value["sheet"], DocumentReader::Child(path, "sheet"));
  }
  if (value.contains("overflow_markers")) {
    const Path where = DocumentReader::Child(path, "overflow_markers");
    const Json& markers = r.Array(value["overflow_markers"], where);
    for (std::size_t i = 0; i < markers.size(); ++i) {
      options.overflow_markers.push_back(r.String(markers[i], DocumentReader::Child(where, i)));
    }
  }
  if (value.contains("assumed_wavelength_nm")) {
    const Path where = DocumentReader::Child(path, "assumed_wavelength_nm");
    options.assumed_wavelength_nm = r.Number(value["assumed_wavelength_nm"], where);
    if (!(options.assumed_wavelength_nm > 0.0)) r.Fail(where, "expected a wavelength above 0 nm");
  }
  return options;
}

ManualChange ParseChange(const DocumentReader& r, const Json& value, const Path& path,
                         int num_plates) {
  r.CheckObject(value, path, {"kind", "plate", "well", "window_min", "value", "reason"});
  ManualChange change;
  const std::string kind = r.String(r.Member(value, path, "kind"), DocumentReader::Child(path, "kind"));
  if (!StringToChangeKind(kind, &change.kind)) {
    r.Fail(DocumentReader::Child(path, "kind"),
           "unknown change " + Quote(kind) +
               "; expected exclude, restore, window, automatic-window, model, interval-method "
               "or weighting");
  }
  if (change.IsWellChange()) {
    const long long plate =
        r.Integer(r.Member(value, path, "plate"), DocumentReader::Child(path, "plate"));
    change.plate = static_cast<int>(std::clamp<long long>(plate, -1, 1 << 20));
    change.well = r.String(r.Member(value, path, "well"), DocumentReader::Child(path, "well"));
  }
  if (change.kind == ChangeKind::kWindow) {
    const Path where = DocumentReader::Child(path, "window_min");
    const Json& window = r.Array(r.Member(value, path, "window_min"), where);
    if (window.size() != 2) r.Fail(where, "expected [start, end] in minutes");
    change.start_min = r.Number(window[0], DocumentReader::Child(where, 0));
    change.end_min = r.Number(window[1], DocumentReader::Child(where, 1));
  }
  if (!change.IsWellChange()) {
    change.value = r.String(r.Member(value, path, "value"), DocumentReader::Child(path, "value"));
  }
  if (value.contains("reason")) {
    change.reason = r.StringOrNull(value["reason"], DocumentReader::Child(path, "reason"));
  }
  if (const std::optional<ChangeProblem> problem = CheckChange(change, num_plates)) {
    const Path where = value.contains(problem->field) ? DocumentReader::Child(path, problem->field) : path;
    r.Fail(where, problem->message);
  }
  return change;
}

AuditEntry ParseEntry(const DocumentReader& r, const Json& value, const Path& path, int num_plates) {
  r.CheckObject(value, path,
                {"sequence", "time", "user", "action", "summary", "change", "base_sha256",
                 "previous_sha256", "sha256"});
  AuditEntry entry;
  const auto child = [&](const char* key) { return DocumentReader::Child(path, key); };
  entry.sequence = static_cast<int>(r.Integer(r.Member(value, path, "sequence"), child("sequence")));
  entry.time = r.String(r.Member(value, path, "time"), child("time"));
  entry.user = r.String(r.Member(value, path, "user"), child("user"));
  entry.action = r.String(r.Member(value, path, "action"), child("action"));
  entry.summary = r.String(r.Member(value, path, "summary"), child("summary"));
  const Json& change = r.Member(value, path, "change");
  if (!change.is_null()) entry.change = ParseChange(r, change, child("change"), num_plates);
  if (value.contains("base_sha256")) {
    entry.base_sha256 = r.String(value["base_sha256"], child("base_sha256"));
  }
  entry.previous_sha256 = r.String(r.Member(value, path, "previous_sha256"), child("previous_sha256"));
  entry.sha256 = r.String(r.Member(value, path, "sha256"), child("sha256"));
  for (const auto& [key, hash] : {std::pair<const char*, const std::string*>{"previous_sha256",
                                                                             &entry.previous_sha256},
                                  {"sha256", &entry.sha256}}) {
    if (!IsLowerHex64(*hash)) r.Fail(child(key), "expected 64 lower-case hexadecimal digits");
  }
  if (!entry.base_sha256.empty() && !IsLowerHex64(entry.base_sha256)) {
    r.Fail(child("base_sha256"), "expected 64 lower-case hexadecimal digits");
  }
  const bool created = entry.action == "created";
  if (created != !entry.change.has_value()) {
    r.Fail(child("change"), created ? "a \"created\" entry carries no change"
                                    : "expected the change this entry records");
  }
  if (!created && entry.action != ChangeKindToString(entry.change->kind)) {
    r.Fail(child("action"), "expected " + Quote(ChangeKindToString(entry.change->kind)) +
                                ", the kind of the change it records");
  }
  return entry;
}

std::string AbsolutePath(const std::string& path) {
  std::error_code error;
  const fs::path absolute = fs::absolute(fs::path(path), error);
  return error ? path : absolute.lexically_normal().string();
}

}  // namespace

// ---------------------------------------------------------------------------

Json RequestToJson(const AnalysisRequest& request) {
  Json j;
  j["read_options"] = ReadOptionsToJson(request.read_options);
  j["model"] = request.model;
  j["interval_method"] = request.interval_method
                             ? Json(IntervalMethodToString(*request.interval_method))
                             : Json(nullptr);
  return j;
}

AnalysisDocument AnalysisDocument::Create(const AnalysisRequest& request) {
  if (request.plate_paths.empty()) {
    throw InputError("", 0, 0, "no plate file given; expected at least one");
  }
  if (request.layout_path.empty()) {
    throw InputError("", 0, 0, "no layout file given; expected one");
  }
  AnalysisDocument document;
  const auto add = [&](const std::string& role, const std::string& path) {
    DocumentInput input;
    input.role = role;
    input.path = AbsolutePath(path);
    try {
      input.sha256 = Sha256OfFile(input.path);
    } catch (const std::exception& error) {
      throw InputError(path, 0, 0, std::string("cannot read the file to record its SHA-256: ") +
                                       error.what());
    }
    document.inputs_.push_back(std::move(input));
  };
  for (const std::string& path : request.plate_paths) add("plate", path);
  add("layout", request.layout_path);
  if (!request.assay_path.empty()) add("assay", request.assay_path);

  document.base_request_ = request;
  document.base_request_.exclusions.clear();
  document.base_request_.windows.clear();
  document.SyncRequestPaths();

  const std::string inputs_text = std::to_string(request.plate_paths.size()) +
                                  (request.plate_paths.size() == 1 ? " plate" : " plates");
  AppendAuditEntry(&document.audit_, "created",
                   "analysis created from " + inputs_text + " and the layout " +
                       fs::path(request.layout_path).filename().string(),
                   std::nullopt, document.BaseHash());
  for (const WellExclusion& exclusion : request.exclusions) {
    ManualChange change;
    change.kind = ChangeKind::kExclude;
    change.plate = exclusion.plate;
    change.well = exclusion.well;
    change.reason = exclusion.reason.empty() ? kReasonGivenAtStart : exclusion.reason;
    document.Record(change);
  }
  for (const WindowOverride& window : request.windows) {
    ManualChange change;
    change.kind = ChangeKind::kWindow;
    change.plate = window.plate;
    change.well = window.well;
    change.start_min = window.start_min;
    change.end_min = window.end_min;
    change.reason = kReasonGivenAtStart;
    document.Record(change);
  }
  return document;
}

void AnalysisDocument::SyncRequestPaths() {
  base_request_.plate_paths.clear();
  base_request_.layout_path.clear();
  base_request_.assay_path.clear();
  for (const DocumentInput& input : inputs_) {
    if (input.role == "plate") base_request_.plate_paths.push_back(input.path);
    if (input.role == "layout") base_request_.layout_path = input.path;
    if (input.role == "assay") base_request_.assay_path = input.path;
  }
}

void AnalysisDocument::SetInputPath(std::size_t index, const std::string& path) {
  inputs_.at(index).path = path;
  SyncRequestPaths();
}

std::string AnalysisDocument::BaseHash() const {
  Json inputs = Json::array();
  for (const DocumentInput& input : inputs_) {
    inputs.push_back(Json{{"role", input.role}, {"sha256", input.sha256}});
  }
  return Sha256OfBytes(Json{{"inputs", inputs}, {"request", RequestToJson(base_request_)}}.dump());
}

Json AnalysisDocument::ToJson() const {
  Json j;
  j["format"] = kDocumentFormat;
  j["version"] = kDocumentVersion;
  j["software"] = {{"name", "ratewell"}, {"version", SoftwareVersion()}};
  Json inputs = Json::array();
  for (const DocumentInput& input : inputs_) {
    inputs.push_back(Json{{"role", input.role},
                          {"path", input.path},
                          {"relative_path", nullptr},
                          {"sha256", input.sha256}});
  }
  j["inputs"] = inputs;
  j["request"] = RequestToJson(base_request_);
  Json audit = Json::array();
  for (const AuditEntry& entry : audit_) audit.push_back(AuditEntryToJson(entry));
  j["audit"] = audit;
  return j;
}

AnalysisDocument AnalysisDocument::Parse(std::string_view text, const std::string& file) {
  DocumentReader r(text, file);
  const Json root = r.ParseText();
  if (!root.is_object()) {
    r.Fail({}, std::string("expected a JSON object, got ") + root.type_name());
  }
  const Json& format = r.Member(root, {}, "format");
  if (!format.is_string() || format.get<std::string>() != kDocumentFormat) {
    r.Fail({"format"}, "expected \"ratewell-analysis\"; this is not a ratewell analysis document");
  }
  const long long version = r.Integer(r.Member(root, {}, "version"), {"version"});
  if (version != kDocumentVersion) {
    r.Fail({"version"}, "this program reads version " + std::to_string(kDocumentVersion) +
                            " documents, the file is version " + std::to_string(version) +
                            (version > kDocumentVersion ? " (written by a newer ratewell)" : ""));
  }
  r.CheckObject(root, {},
                {"format", "version", "software", "inputs", "request", "audit", "autosave_of"});

  AnalysisDocument document;
  const Json& inputs = r.Array(r.Member(root, {}, "inputs"), {"inputs"});
  int plates = 0;
  int layouts = 0;
  int assays = 0;
  for (std::size_t i = 0; i < inputs.size(); ++i) {
    const Path path = DocumentReader::Child({"inputs"}, i);
    r.CheckObject(inputs[i], path, {"role", "path", "relative_path", "sha256"});
    DocumentInput input;
    input.role = r.String(r.Member(inputs[i], path, "role"), DocumentReader::Child(path, "role"));
    input.path = r.String(r.Member(inputs[i], path, "path"), DocumentReader::Child(path, "path"));
    input.sha256 = r.String(r.Member(inputs[i], path, "sha256"), DocumentReader::Child(path, "sha256"));
    if (inputs[i].contains("relative_path")) {
      r.StringOrNull(inputs[i]["relative_path"], DocumentReader::Child(path, "relative_path"));
    }
    if (!IsLowerHex64(input.sha256)) {
      r.Fail(DocumentReader::Child(path, "sha256"), "expected 64 lower-case hexadecimal digits");
    }
    if (input.path.empty()) r.Fail(DocumentReader::Child(path, "path"), "expected a file path");
    if (input.role == "plate") {
      if (layouts + assays > 0) {
        r.Fail(DocumentReader::Child(path, "role"),
               "plates are listed first; expected the plate before the layout and assay");
      }
      ++plates;
    } else if (input.role == "layout") {
      if (++layouts > 1 || assays > 0) {
        r.Fail(DocumentReader::Child(path, "role"), "expected one layout, after the plates");
      }
    } else if (input.role == "assay") {
      if (++assays > 1) r.Fail(DocumentReader::Child(path, "role"), "expected at most one assay file");
    } else {
      r.Fail(DocumentReader::Child(path, "role"),
             "unknown role " + Quote(input.role) + "; expected plate, layout or assay");
    }
    document.inputs_.push_back(std::move(input));
  }
  if (plates == 0 || layouts == 0) {
    r.Fail({"inputs"}, "expected at least one plate and one layout");
  }

  const Json& request = r.Member(root, {}, "request");
  r.CheckObject(request, {"request"}, {"read_options", "model", "interval_method"});
  if (request.contains("read_options")) {
    document.base_request_.read_options =
        ParseReadOptions(r, request["read_options"], {"request", "read_options"});
  }
  if (request.contains("model")) {
    document.base_request_.model = r.String(request["model"], {"request", "model"});
    if (!document.base_request_.model.empty() && !KnownModelChoice(document.base_request_.model)) {
      r.Fail({"request", "model"}, "unknown kinetic model " + Quote(document.base_request_.model) +
                                       "; expected \"\", \"auto\" or a model id");
    }
  }
  if (request.contains("interval_method") && !request["interval_method"].is_null()) {
    const std::string name = r.String(request["interval_method"], {"request", "interval_method"});
    IntervalMethod method;
    if (!StringToIntervalMethod(name, &method)) {
      r.Fail({"request", "interval_method"},
             "unknown interval method " + Quote(name) + "; expected asymptotic, profile or bootstrap");
    }
    document.base_request_.interval_method = method;
  }
  document.SyncRequestPaths();

  const Json& audit = r.Array(r.Member(root, {}, "audit"), {"audit"});
  if (audit.empty()) r.Fail({"audit"}, "expected at least the \"created\" entry");
  for (std::size_t i = 0; i < audit.size(); ++i) {
    const Path path = DocumentReader::Child({"audit"}, i);
    document.audit_.push_back(ParseEntry(r, audit[i], path, plates));
    if ((i == 0) != (document.audit_.back().action == "created")) {
      r.Fail(DocumentReader::Child(path, "action"),
             i == 0 ? "the first entry must be \"created\"" : "only the first entry is \"created\"");
    }
  }
  return document;
}

bool AnalysisDocument::operator==(const AnalysisDocument& other) const {
  return inputs_ == other.inputs_ && audit_ == other.audit_ &&
         RequestToJson(base_request_) == RequestToJson(other.base_request_);
}

std::vector<ManualChange> AnalysisDocument::Changes() const {
  std::vector<ManualChange> changes;
  for (const AuditEntry& entry : audit_) {
    if (entry.change) changes.push_back(*entry.change);
  }
  return changes;
}

AnalysisRequest AnalysisDocument::CurrentRequest() const {
  AnalysisRequest request = base_request_;
  const auto same_well = [](int plate, const std::string& well) {
    return [plate, &well](const auto& item) { return item.plate == plate && item.well == well; };
  };
  for (const ManualChange& change : Changes()) {
    switch (change.kind) {
      case ChangeKind::kExclude:
      case ChangeKind::kRestore:
        std::erase_if(request.exclusions, same_well(change.plate, change.well));
        if (change.kind == ChangeKind::kExclude) {
          request.exclusions.push_back(WellExclusion{change.plate, change.well, change.reason});
        }
        break;
      case ChangeKind::kWindow:
      case ChangeKind::kAutomaticWindow:
        std::erase_if(request.windows, same_well(change.plate, change.well));
        if (change.kind == ChangeKind::kWindow) {
          request.windows.push_back(
              WindowOverride{change.plate, change.well, change.start_min, change.end_min});
        }
        break;
      case ChangeKind::kModel:
        request.model = change.value;
        break;
      case ChangeKind::kIntervalMethod: {
        IntervalMethod method;
        if (StringToIntervalMethod(change.value, &method)) request.interval_method = method;
        break;
      }
      case ChangeKind::kWeighting: {
        Weighting weighting;
        if (StringToWeighting(change.value, &weighting)) request.weighting = weighting;
        break;
      }
    }
  }
  return request;
}

std::optional<Weighting> AnalysisDocument::CurrentWeighting() const {
  std::optional<Weighting> weighting;
  for (const ManualChange& change : Changes()) {
    Weighting w;
    if (change.kind == ChangeKind::kWeighting && StringToWeighting(change.value, &w)) weighting = w;
  }
  return weighting;
}

void AnalysisDocument::Record(const ManualChange& change, const std::optional<std::string>& time,
                              const std::optional<std::string>& user) {
  if (const std::optional<ChangeProblem> problem =
          CheckChange(change, static_cast<int>(base_request_.plate_paths.size()))) {
    throw std::invalid_argument(problem->field + ": " + problem->message);
  }
  AppendAuditEntry(&audit_, ChangeKindToString(change.kind), change.Describe(), change, "", time,
                   user);
}

AuditVerification AnalysisDocument::Verify() const {
  AuditVerification result = VerifyAuditTrail(audit_);
  if (result.intact && !audit_.empty() && audit_.front().base_sha256 != BaseHash()) {
    result.intact = false;
    result.first_broken = 0;
    result.message =
        "the inputs or the request were changed after the analysis was created: they no longer "
        "match the SHA-256 recorded in entry 1";
  }
  return result;
}

// ---------------------------------------------------------------------------

void SaveAnalysisDocument(const AnalysisDocument& document, const std::string& path) {
  Json j = document.ToJson();
  const fs::path folder = fs::absolute(fs::path(path)).parent_path();
  std::vector<std::string> protected_inputs;
  for (std::size_t i = 0; i < document.inputs().size(); ++i) {
    const DocumentInput& input = document.inputs()[i];
    protected_inputs.push_back(input.path);
    std::error_code error;
    const fs::path relative = fs::relative(fs::path(input.path), folder, error);
    if (!error && !relative.empty()) j["inputs"][i]["relative_path"] = relative.generic_string();
  }
  WriteFileAtomically(path, j.dump(2) + "\n", protected_inputs);
}

AnalysisDocument ReadAnalysisDocument(const std::string& path, std::vector<std::string>* notes) {
  const std::string text = ReadTextFile(path);
  AnalysisDocument document = AnalysisDocument::Parse(text, path);
  // The relative paths were checked by Parse; read them again to redirect
  // inputs that moved together with the document.
  const Json root = Json::parse(text.begin() + (text.rfind("\xEF\xBB\xBF", 0) == 0 ? 3 : 0),
                                text.end());
  const fs::path folder = fs::absolute(fs::path(path)).parent_path();
  for (std::size_t i = 0; i < document.inputs().size(); ++i) {
    const DocumentInput& input = document.inputs()[i];
    const Json& relative = root["inputs"][i]["relative_path"];
    std::error_code error;
    if (fs::exists(input.path, error) || !relative.is_string()) continue;
    const fs::path beside = (folder / relative.get<std::string>()).lexically_normal();
    if (fs::exists(beside, error)) {
      if (notes) {
        notes->push_back(input.path + " was not found; using " + beside.string() +
                         " beside the document");
      }
      document.SetInputPath(i, beside.string());
    }
  }
  return document;
}

std::vector<std::string> CheckInputHashes(const AnalysisDocument& document) {
  std::vector<std::string> problems;
  for (const DocumentInput& input : document.inputs()) {
    std::string now;
    try {
      now = Sha256OfFile(input.path);
    } catch (const std::exception&) {
      problems.push_back(input.path + ": the " + input.role +
                         " file can no longer be read; the analysis cannot be recomputed");
      continue;
    }
    if (now != input.sha256) {
      problems.push_back(input.path + ": the " + input.role +
                         " file changed since the analysis was made (SHA-256 was " +
                         input.sha256.substr(0, 12) + "…, now " + now.substr(0, 12) +
                         "…); the numbers are recomputed from the file as it is now");
    }
  }
  return problems;
}

RebuiltAnalysis RebuildAnalysis(const AnalysisDocument& document, const ProgressCallback& progress) {
  RebuiltAnalysis rebuilt;
  rebuilt.integrity = document.Verify();
  rebuilt.warnings = CheckInputHashes(document);
  if (!rebuilt.integrity.intact) {
    rebuilt.warnings.insert(rebuilt.warnings.begin(),
                            "audit trail broken: " + rebuilt.integrity.message);
  }
  rebuilt.analysis = RunAnalysis(document.CurrentRequest(), progress);
  return rebuilt;
}

void ApplyChange(Analysis* analysis, const ManualChange& change) {
  if (const std::optional<ChangeProblem> problem =
          CheckChange(change, static_cast<int>(analysis->plates.size()))) {
    throw std::invalid_argument(problem->field + ": " + problem->message);
  }
  switch (change.kind) {
    case ChangeKind::kExclude:
      SetExclusion(analysis, change.plate, change.well, change.reason);
      break;
    case ChangeKind::kRestore:
      SetExclusion(analysis, change.plate, change.well, std::nullopt);
      break;
    case ChangeKind::kWindow:
      SetWindow(analysis, change.plate, change.well,
                std::make_pair(change.start_min, change.end_min));
      break;
    case ChangeKind::kAutomaticWindow:
      SetWindow(analysis, change.plate, change.well, std::nullopt);
      break;
    case ChangeKind::kModel:
      analysis->request.model = change.value;
      break;
    case ChangeKind::kIntervalMethod: {
      IntervalMethod method;
      StringToIntervalMethod(change.value, &method);
      analysis->request.interval_method = method;
      break;
    }
    case ChangeKind::kWeighting: {
      Weighting weighting;
      StringToWeighting(change.value, &weighting);
      analysis->request.weighting = weighting;
      break;
    }
  }
}

}  // namespace ratewell
