#include "session/audit_trail.h"

#include <gtest/gtest.h>

#include <cstdlib>
#include <regex>
#include <string>
#include <vector>

namespace ratewell {
namespace {

ManualChange Exclusion(const std::string& well, const std::string& reason) {
  ManualChange change;
  change.kind = ChangeKind::kExclude;
  change.plate = 0;
  change.well = well;
  change.reason = reason;
  return change;
}

// Three entries with fixed times and user, so hashes are reproducible.
std::vector<AuditEntry> ThreeEntries() {
  std::vector<AuditEntry> entries;
  AppendAuditEntry(&entries, "created", "analysis created", std::nullopt, "", "2025-01-02T03:04:05Z",
                   "ana");
  const ManualChange first = Exclusion("B03", "pipetting error");
  AppendAuditEntry(&entries, "exclude", first.Describe(), first, "", "2025-01-02T03:05:00Z", "ana");
  const ManualChange second = Exclusion("C07", "bubble or meniscus artefact");
  AppendAuditEntry(&entries, "exclude", second.Describe(), second, "", "2025-01-02T03:06:00Z", "ben");
  return entries;
}

TEST(ChangeKind, EveryNameRoundTrips) {
  for (ChangeKind kind : {ChangeKind::kExclude, ChangeKind::kRestore, ChangeKind::kWindow,
                          ChangeKind::kAutomaticWindow, ChangeKind::kModel,
                          ChangeKind::kIntervalMethod, ChangeKind::kWeighting}) {
    ChangeKind back = ChangeKind::kExclude;
    ASSERT_TRUE(StringToChangeKind(ChangeKindToString(kind), &back)) << ChangeKindToString(kind);
    EXPECT_EQ(back, kind);
  }
  ChangeKind untouched = ChangeKind::kModel;
  EXPECT_FALSE(StringToChangeKind("Exclude", &untouched));
  EXPECT_EQ(untouched, ChangeKind::kModel);
}

// The canonical form is part of the file format: a document saved today
// must verify with any later version. The expected hashes were computed
// independently with Python 3.11's hashlib over
// json.dumps(entry, sort_keys=True, separators=(",", ":")) (computed).
TEST(AuditTrail, EntryHashesAreSha256OfTheSortedCompactJson) {
  const std::vector<AuditEntry> entries = ThreeEntries();
  EXPECT_EQ(entries[0].previous_sha256, std::string(kAuditGenesisHash));
  EXPECT_EQ(entries[0].sha256, "390e3a9a20e50aabe86ece3bbc8f69671965fdcfca74921a5a0f71fc75283502");
  EXPECT_EQ(entries[1].previous_sha256, entries[0].sha256);
  EXPECT_EQ(entries[1].sha256, "cc465a1cb33dff6795a70a46a8dbc5cd79e599fa12e285d7c7526ba606140df5");
  EXPECT_EQ(entries[2].previous_sha256, entries[1].sha256);
  EXPECT_EQ(entries[2].sequence, 3);
  EXPECT_EQ(entries[2].user, "ben");
}

TEST(AuditTrail, AnUntouchedChainVerifies) {
  const AuditVerification result = VerifyAuditTrail(ThreeEntries());
  EXPECT_TRUE(result.intact);
  EXPECT_EQ(result.first_broken, -1);
  EXPECT_TRUE(result.message.empty());
}

TEST(AuditTrail, AnEditedReasonIsFoundAtItsEntry) {
  std::vector<AuditEntry> entries = ThreeEntries();
  entries[1].change->reason = "signal saturated";
  const AuditVerification result = VerifyAuditTrail(entries);
  EXPECT_FALSE(result.intact);
  EXPECT_EQ(result.first_broken, 1);
  EXPECT_NE(result.message.find("entry 2"), std::string::npos) << result.message;
  EXPECT_NE(result.message.find("changed after it was recorded"), std::string::npos) << result.message;
}

TEST(AuditTrail, AnEditWhoseHashWasAlsoRewrittenBreaksTheNextLink) {
  std::vector<AuditEntry> entries = ThreeEntries();
  entries[1].user = "mallory";
  entries[1].sha256 = AuditEntryHash(entries[1]);
  const AuditVerification result = VerifyAuditTrail(entries);
  EXPECT_FALSE(result.intact);
  EXPECT_EQ(result.first_broken, 2);
  EXPECT_NE(result.message.find("does not link"), std::string::npos) << result.message;
}

TEST(AuditTrail, ARemovedEntryIsFound) {
  std::vector<AuditEntry> entries = ThreeEntries();
  entries.erase(entries.begin() + 1);
  const AuditVerification result = VerifyAuditTrail(entries);
  EXPECT_FALSE(result.intact);
  EXPECT_EQ(result.first_broken, 1);
  EXPECT_NE(result.message.find("sequence number 3"), std::string::npos) << result.message;
}

TEST(AuditTrail, UserComesFromUserThenUsername) {
  const char* saved_user = std::getenv("USER");
  const std::string restore_user = saved_user ? saved_user : "";
  setenv("USER", "rosalind", 1);
  setenv("USERNAME", "someone-else", 1);
  EXPECT_EQ(CurrentUserName(), "rosalind");
  unsetenv("USER");
  EXPECT_EQ(CurrentUserName(), "someone-else");
  unsetenv("USERNAME");
  EXPECT_EQ(CurrentUserName(), "unknown");
  if (saved_user) setenv("USER", restore_user.c_str(), 1);
}

TEST(AuditTrail, TimeIsIso8601Utc) {
  EXPECT_TRUE(std::regex_match(CurrentIsoTime(),
                               std::regex(R"(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z)")))
      << CurrentIsoTime();
}

TEST(ManualChange, DescribeNamesWellPlateAndReason) {
  EXPECT_EQ(Exclusion("B03", "pipetting error").Describe(), "exclude B03 on plate 1: pipetting error");
  ManualChange window;
  window.kind = ChangeKind::kWindow;
  window.plate = 1;
  window.well = "A01";
  window.start_min = 1.5;
  window.end_min = 8.0;
  EXPECT_EQ(window.Describe(), "rate window of A01 on plate 2 set to 1.50–8.00 min");
}

}  // namespace
}  // namespace ratewell
