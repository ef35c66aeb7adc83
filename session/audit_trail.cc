#include "session/audit_trail.h"

#include <array>
#include <cstdlib>
#include <ctime>
#include <iomanip>
#include <sstream>
#include <utility>

#include "report/files.h"

namespace ratewell {
namespace {

constexpr std::array<std::pair<ChangeKind, const char*>, 7> kChangeKindNames = {{
    {ChangeKind::kExclude, "exclude"},
    {ChangeKind::kRestore, "restore"},
    {ChangeKind::kWindow, "window"},
    {ChangeKind::kAutomaticWindow, "automatic-window"},
    {ChangeKind::kModel, "model"},
    {ChangeKind::kIntervalMethod, "interval-method"},
    {ChangeKind::kWeighting, "weighting"},
}};

std::string FormatMinutes(double minutes) {
  std::ostringstream out;
  out << std::fixed << std::setprecision(2) << minutes;
  return out.str();
}

}  // namespace

const char* ChangeKindToString(ChangeKind kind) {
  for (const auto& [k, name] : kChangeKindNames) {
    if (k == kind) return name;
  }
  return "unknown";
}

bool StringToChangeKind(std::string_view text, ChangeKind* kind) {
  for (const auto& [k, name] : kChangeKindNames) {
    if (text == name) {
      *kind = k;
      return true;
    }
  }
  return false;
}

bool ManualChange::IsWellChange() const {
  return kind == ChangeKind::kExclude || kind == ChangeKind::kRestore ||
         kind == ChangeKind::kWindow || kind == ChangeKind::kAutomaticWindow;
}

std::string ManualChange::Describe() const {
  std::string text;
  const std::string where = well + " on plate " + std::to_string(plate + 1);
  switch (kind) {
    case ChangeKind::kExclude:
      text = "exclude " + where;
      break;
    case ChangeKind::kRestore:
      text = "restore " + where;
      break;
    case ChangeKind::kWindow:
      text = "rate window of " + where + " set to " + FormatMinutes(start_min) + "–" +
             FormatMinutes(end_min) + " min";
      break;
    case ChangeKind::kAutomaticWindow:
      text = "rate window of " + where + " chosen automatically";
      break;
    case ChangeKind::kModel:
      text = "kinetic model set to " + value;
      break;
    case ChangeKind::kIntervalMethod:
      text = "interval method set to " + value;
      break;
    case ChangeKind::kWeighting:
      text = "weighting set to " + value;
      break;
  }
  if (!reason.empty()) text += ": " + reason;
  return text;
}

nlohmann::json ManualChangeToJson(const ManualChange& change) {
  nlohmann::json j;
  j["kind"] = ChangeKindToString(change.kind);
  if (change.IsWellChange()) {
    j["plate"] = change.plate;
    j["well"] = change.well;
  }
  if (change.kind == ChangeKind::kWindow) {
    j["window_min"] = nlohmann::json::array({change.start_min, change.end_min});
  }
  if (!change.IsWellChange()) j["value"] = change.value;
  j["reason"] = change.reason.empty() ? nlohmann::json(nullptr) : nlohmann::json(change.reason);
  return j;
}

nlohmann::json AuditEntryToJson(const AuditEntry& entry, bool with_hash) {
  nlohmann::json j;
  j["sequence"] = entry.sequence;
  j["time"] = entry.time;
  j["user"] = entry.user;
  j["action"] = entry.action;
  j["summary"] = entry.summary;
  j["change"] = entry.change ? ManualChangeToJson(*entry.change) : nlohmann::json(nullptr);
  if (!entry.base_sha256.empty()) j["base_sha256"] = entry.base_sha256;
  j["previous_sha256"] = entry.previous_sha256;
  if (with_hash) j["sha256"] = entry.sha256;
  return j;
}

std::string AuditEntryHash(const AuditEntry& entry) {
  return Sha256OfBytes(AuditEntryToJson(entry, /*with_hash=*/false).dump());
}

AuditVerification VerifyAuditTrail(const std::vector<AuditEntry>& entries) {
  AuditVerification result;
  std::string previous(kAuditGenesisHash);
  for (std::size_t i = 0; i < entries.size(); ++i) {
    const AuditEntry& entry = entries[i];
    const std::string number = "entry " + std::to_string(i + 1);
    std::string problem;
    if (entry.sequence != static_cast<int>(i) + 1) {
      problem = number + " carries sequence number " + std::to_string(entry.sequence) +
                "; entries were removed, inserted or reordered";
    } else if (entry.previous_sha256 != previous) {
      problem = number + " does not link to the entry before it (previous_sha256 " +
                entry.previous_sha256.substr(0, 12) + "…, expected " + previous.substr(0, 12) +
                "…); an entry before it was edited or removed";
    } else if (AuditEntryHash(entry) != entry.sha256) {
      problem = number + " (" + entry.action + ") was changed after it was recorded: its "
                "SHA-256 no longer matches its content";
    }
    if (!problem.empty()) {
      result.intact = false;
      result.first_broken = static_cast<int>(i);
      result.message = problem;
      return result;
    }
    previous = entry.sha256;
  }
  return result;
}

void AppendAuditEntry(std::vector<AuditEntry>* entries, const std::string& action,
                      const std::string& summary, const std::optional<ManualChange>& change,
                      const std::string& base_sha256, const std::optional<std::string>& time,
                      const std::optional<std::string>& user) {
  AuditEntry entry;
  entry.sequence = static_cast<int>(entries->size()) + 1;
  entry.time = time ? *time : CurrentIsoTime();
  entry.user = user ? *user : CurrentUserName();
  entry.action = action;
  entry.summary = summary;
  entry.change = change;
  entry.base_sha256 = base_sha256;
  entry.previous_sha256 = entries->empty() ? std::string(kAuditGenesisHash) : entries->back().sha256;
  entry.sha256 = AuditEntryHash(entry);
  entries->push_back(std::move(entry));
}

std::string CurrentUserName() {
  for (const char* variable : {"USER", "USERNAME"}) {
    const char* value = std::getenv(variable);
    if (value != nullptr && *value != '\0') return value;
  }
  return "unknown";
}

std::string CurrentIsoTime() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

}  // namespace ratewell
