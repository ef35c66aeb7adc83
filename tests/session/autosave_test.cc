#include "session/autosave.h"

#include <gtest/gtest.h>

#include <chrono>
#include <filesystem>
#include <string>
#include <thread>

#include "tests/session/session_test_util.h"

namespace ratewell {
namespace {

namespace fs = std::filesystem;
using testing::ReadBytes;
using testing::ScratchDir;
using testing::WriteBytes;

class AutosaveTest : public ::testing::Test {
 protected:
  void SetUp() override {
    WriteBytes(dir_.File("plate.csv"), "plate bytes");
    WriteBytes(dir_.File("layout.csv"), "layout bytes");
    AnalysisRequest request;
    request.plate_paths = {dir_.File("plate.csv")};
    request.layout_path = dir_.File("layout.csv");
    document_ = AnalysisDocument::Create(request);
  }

  void Exclude(const std::string& well) {
    ManualChange change;
    change.kind = ChangeKind::kExclude;
    change.well = well;
    change.reason = "signal saturated";
    document_.Record(change);
  }

  ScratchDir dir_;
  AnalysisDocument document_;
};

TEST_F(AutosaveTest, TheAutosaveSitsBesideTheDocument) {
  EXPECT_EQ(AutosavePathFor("/data/run.ratewell"), "/data/run.ratewell.autosave");
}

TEST_F(AutosaveTest, UnsavedChangesAreOfferedBackAndTheDocumentIsUntouched) {
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document_, path);
  const std::string saved_bytes = ReadBytes(path);
  EXPECT_FALSE(FindRecovery(path).has_value());  // no autosave yet

  Exclude("A01");
  Exclude("B02");
  WriteAutosave(document_, AutosavePathFor(path), path);
  EXPECT_EQ(ReadBytes(path), saved_bytes);

  const std::optional<RecoveryCandidate> candidate = FindRecovery(path);
  ASSERT_TRUE(candidate.has_value());
  EXPECT_EQ(candidate->autosave_path, AutosavePathFor(path));
  EXPECT_EQ(candidate->document_path, path);
  EXPECT_EQ(candidate->audit_entries, 3);
  EXPECT_EQ(candidate->unsaved_entries, 2);
  EXPECT_EQ(candidate->last_change_time, document_.audit().back().time);

  std::string of;
  const AnalysisDocument recovered = ReadAutosave(candidate->autosave_path, &of);
  EXPECT_EQ(of, path);
  EXPECT_EQ(recovered, document_);
  EXPECT_TRUE(recovered.Verify().intact);
}

TEST_F(AutosaveTest, AnAutosaveNoNewerThanTheDocumentIsNotOffered) {
  const std::string path = dir_.File("run.ratewell");
  Exclude("A01");
  WriteAutosave(document_, AutosavePathFor(path), path);
  SaveAnalysisDocument(document_, path);  // saved after the autosave: nothing to recover
  EXPECT_FALSE(FindRecovery(path).has_value());
}

TEST_F(AutosaveTest, AnAutosaveIsOfferedWhenTheDocumentIsDamaged) {
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document_, path);
  Exclude("A01");
  WriteAutosave(document_, AutosavePathFor(path), path);
  WriteBytes(path, "{\"format\": \"ratewell-analysis\", ");  // a crash mid-write by another tool
  const std::optional<RecoveryCandidate> candidate = FindRecovery(path);
  ASSERT_TRUE(candidate.has_value());
  EXPECT_EQ(candidate->audit_entries, 2);
}

TEST_F(AutosaveTest, UnsavedDocumentsAreFoundNewestFirstAndDamagedOnesSkipped) {
  const fs::path folder = dir_.path() / "autosave";
  fs::create_directories(folder);
  const std::string older = NewUnsavedAutosavePath(folder.string());
  WriteAutosave(document_, older, "");
  const std::string newer = NewUnsavedAutosavePath(folder.string());
  ASSERT_NE(newer, older);
  Exclude("C03");
  WriteAutosave(document_, newer, "");
  fs::last_write_time(older, fs::last_write_time(newer) - std::chrono::seconds(30));
  WriteBytes((folder / "unsaved-damaged.ratewell.autosave").string(), "not json");
  WriteBytes((folder / "notes.txt").string(), "unrelated");

  const std::vector<RecoveryCandidate> found = FindUnsavedRecoveries(folder.string());
  ASSERT_EQ(found.size(), 2u);
  EXPECT_EQ(found[0].autosave_path, newer);
  EXPECT_EQ(found[0].audit_entries, 2);
  EXPECT_TRUE(found[0].document_path.empty());
  EXPECT_EQ(found[1].autosave_path, older);

  RemoveAutosave(newer);
  EXPECT_FALSE(fs::exists(newer));
  RemoveAutosave(newer);  // a second removal is harmless
  EXPECT_EQ(FindUnsavedRecoveries(folder.string()).size(), 1u);
}

}  // namespace
}  // namespace ratewell
