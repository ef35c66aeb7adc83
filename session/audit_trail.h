// Audit trail: the append-only, tamper-evident history of an analysis.
//
// Every decision a person makes about an analysis (a well excluded or
// restored, a rate window moved, another model or interval method chosen) is
// one AuditEntry with the time, the user and the reason. Entries are only
// ever appended; an undo is a new entry that reverses an earlier one.
//
// Hash chain
// ----------
// Each entry stores the SHA-256 (FIPS 180-4) of its own canonical form and
// the SHA-256 of the entry before it:
//
//     hᵢ = SHA-256(canonical(entryᵢ without "sha256")),
//     entryᵢ.previous_sha256 = hᵢ₋₁,   h₀ := 64 × "0",
//
// where canonical() is the compact JSON text with keys in sorted order
// (nlohmann::json::dump(), whose numbers round-trip exactly). Editing,
// removing or reordering any entry changes its hash, so the link from the
// next entry breaks; VerifyAuditTrail names the first entry where the chain
// no longer holds. This shows tampering; it does not prevent a person from
// rewriting the whole chain (that needs a signature, not a hash).
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

namespace ratewell {

// What a manual change does.
enum class ChangeKind {
  kExclude,         // "exclude": set a well aside (reason required)
  kRestore,         // "restore": use an excluded well again
  kWindow,          // "window": a rate window chosen by hand for one well
  kAutomaticWindow, // "automatic-window": the well's window chosen automatically again
  kModel,           // "model": kinetic model id, or "auto"
  kIntervalMethod,  // "interval-method": asymptotic, profile or bootstrap
  kWeighting,       // "weighting": none, relative or inverse-variance
};
const char* ChangeKindToString(ChangeKind kind);
// Exact names as above; false (and *kind untouched) otherwise.
bool StringToChangeKind(std::string_view text, ChangeKind* kind);

// One manual change. Which fields are used depends on kind: plate and well
// for the four well changes, start_min/end_min for kWindow, value for the
// three fit choices. reason: required for kExclude, optional otherwise.
struct ManualChange {
  ChangeKind kind = ChangeKind::kExclude;
  int plate = 0;          // index into the request's plate paths
  std::string well;       // zero-padded well name, "B03"
  double start_min = 0.0; // kWindow: minutes from the first read, 0 ≤ start < end
  double end_min = 0.0;
  std::string value;      // kModel / kIntervalMethod / kWeighting
  std::string reason;

  bool operator==(const ManualChange&) const = default;
  bool IsWellChange() const;
  // One line for people: "exclude B03 on plate 1: pipetting error".
  std::string Describe() const;
};

nlohmann::json ManualChangeToJson(const ManualChange& change);

struct AuditEntry {
  int sequence = 0;          // 1, 2, 3, … in order
  std::string time;          // ISO 8601 UTC, "2025-03-14T09:26:53Z"
  std::string user;          // from USER / USERNAME
  std::string action;        // "created", or the ChangeKind name of `change`
  std::string summary;       // one sentence for people
  std::optional<ManualChange> change;  // absent for "created"
  // "created" only: SHA-256 of the document's canonical inputs and request,
  // so that an edit of those sections also breaks the chain.
  std::string base_sha256;
  std::string previous_sha256;  // hash of the entry before (64 zeros for the first)
  std::string sha256;           // hash of this entry's canonical form

  bool operator==(const AuditEntry&) const = default;
};

// The hash h₀ linked from the first entry.
inline constexpr std::string_view kAuditGenesisHash =
    "0000000000000000000000000000000000000000000000000000000000000000";

// The JSON form of an entry (with "sha256" when with_hash).
nlohmann::json AuditEntryToJson(const AuditEntry& entry, bool with_hash = true);
// SHA-256 of the canonical form, eq. above.
std::string AuditEntryHash(const AuditEntry& entry);

struct AuditVerification {
  bool intact = true;
  // 0-based index of the first entry whose own hash or link to the entry
  // before does not hold; -1 when intact.
  int first_broken = -1;
  std::string message;  // "" when intact; what failed otherwise
};

// Checks every entry's hash, its link to the one before and the sequence
// numbers. The first failure is reported.
AuditVerification VerifyAuditTrail(const std::vector<AuditEntry>& entries);

// Appends an entry for `change` (or a "created" entry when change is null),
// stamping time, user, sequence, previous hash and its own hash.
// time and user: nullopt takes the clock (UTC) and CurrentUserName().
void AppendAuditEntry(std::vector<AuditEntry>* entries, const std::string& action,
                      const std::string& summary, const std::optional<ManualChange>& change,
                      const std::string& base_sha256 = "",
                      const std::optional<std::string>& time = std::nullopt,
                      const std::optional<std::string>& user = std::nullopt);

// USER, else USERNAME, else "unknown".
std::string CurrentUserName();
// The current time as ISO 8601 UTC to the second: "2025-03-14T09:26:53Z".
std::string CurrentIsoTime();

}  // namespace ratewell
