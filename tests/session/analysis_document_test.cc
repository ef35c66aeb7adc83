#include "session/analysis_document.h"

#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <stdexcept>
#include <string>

#include "importers/input_error.h"
#include "tests/session/session_test_util.h"

namespace ratewell {
namespace {

namespace fs = std::filesystem;
using testing::ReadBytes;
using testing::ScratchDir;
using testing::WriteBytes;

// SHA-256("abc"): the first example of FIPS 180-2, appendix B.1.
constexpr const char* kSha256OfAbc =
    "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad";

// Documents can be made, changed, saved and read without reading the
// inputs as plates: only their bytes are hashed.
class DocumentTest : public ::testing::Test {
 protected:
  void SetUp() override {
    WriteBytes(dir_.File("plate_a.csv"), "abc");
    WriteBytes(dir_.File("plate_b.csv"), "second plate");
    WriteBytes(dir_.File("layout.csv"), "well,role\n");
    WriteBytes(dir_.File("assay.json"), "{}");
    request_.plate_paths = {dir_.File("plate_a.csv"), dir_.File("plate_b.csv")};
    request_.layout_path = dir_.File("layout.csv");
    request_.assay_path = dir_.File("assay.json");
    request_.read_options.time_unit = TimeUnit::kMinutes;
    request_.read_options.overflow_markers = {"OVER"};
    request_.model = "auto";
  }

  static ManualChange Change(ChangeKind kind) {
    ManualChange change;
    change.kind = kind;
    return change;
  }

  // One change of every kind, in an order that also exercises replacement.
  static std::vector<ManualChange> EveryKind() {
    std::vector<ManualChange> changes;
    ManualChange exclude = Change(ChangeKind::kExclude);
    exclude.plate = 1;
    exclude.well = "B03";
    exclude.reason = "pipetting error";
    changes.push_back(exclude);
    ManualChange exclude2 = exclude;
    exclude2.well = "H12";
    exclude2.reason = "bubble or meniscus artefact";
    changes.push_back(exclude2);
    ManualChange restore = Change(ChangeKind::kRestore);
    restore.plate = 1;
    restore.well = "B03";
    restore.reason = "repeat agreed with it";
    changes.push_back(restore);
    ManualChange window = Change(ChangeKind::kWindow);
    window.plate = 0;
    window.well = "A01";
    window.start_min = 1.25;
    window.end_min = 7.0 / 3.0;  // not a short decimal: must survive the text form exactly
    changes.push_back(window);
    ManualChange window2 = window;
    window2.well = "A02";
    window2.start_min = 0.0;
    window2.end_min = 12.5;
    changes.push_back(window2);
    ManualChange automatic = Change(ChangeKind::kAutomaticWindow);
    automatic.plate = 0;
    automatic.well = "A02";
    changes.push_back(automatic);
    ManualChange model = Change(ChangeKind::kModel);
    model.value = "substrate-inhibition";
    model.reason = "curve falls at high [S]";
    changes.push_back(model);
    ManualChange interval = Change(ChangeKind::kIntervalMethod);
    interval.value = "bootstrap";
    changes.push_back(interval);
    ManualChange weighting = Change(ChangeKind::kWeighting);
    weighting.value = "inverse-variance";
    changes.push_back(weighting);
    return changes;
  }

  ScratchDir dir_;
  AnalysisRequest request_;
};

TEST_F(DocumentTest, CreateRecordsEveryInputByPathAndSha256) {
  const AnalysisDocument document = AnalysisDocument::Create(request_);
  ASSERT_EQ(document.inputs().size(), 4u);
  EXPECT_EQ(document.inputs()[0].role, "plate");
  EXPECT_EQ(document.inputs()[0].path, dir_.File("plate_a.csv"));
  EXPECT_EQ(document.inputs()[0].sha256, kSha256OfAbc);
  EXPECT_EQ(document.inputs()[2].role, "layout");
  EXPECT_EQ(document.inputs()[3].role, "assay");
  ASSERT_EQ(document.audit().size(), 1u);
  EXPECT_EQ(document.audit()[0].action, "created");
  EXPECT_TRUE(document.Verify().intact);
  EXPECT_EQ(document.base_request().plate_paths, request_.plate_paths);
}

TEST_F(DocumentTest, CreateNamesAnInputThatCannotBeRead) {
  request_.layout_path = dir_.File("no-such-layout.csv");
  try {
    AnalysisDocument::Create(request_);
    FAIL() << "expected InputError";
  } catch (const InputError& error) {
    EXPECT_NE(error.file().find("no-such-layout.csv"), std::string::npos) << error.what();
  }
}

TEST_F(DocumentTest, RequestExclusionsAndWindowsBecomeRecordedChanges) {
  request_.exclusions = {WellExclusion{0, "C04", "signal saturated"}};
  request_.windows = {WindowOverride{1, "D05", 2.0, 9.0}};
  const AnalysisDocument document = AnalysisDocument::Create(request_);
  ASSERT_EQ(document.Changes().size(), 2u);
  EXPECT_EQ(document.Changes()[0].kind, ChangeKind::kExclude);
  EXPECT_EQ(document.Changes()[0].reason, "signal saturated");
  EXPECT_EQ(document.Changes()[1].kind, ChangeKind::kWindow);
  EXPECT_TRUE(document.base_request().exclusions.empty());
  const AnalysisRequest current = document.CurrentRequest();
  EXPECT_EQ(current.exclusions, request_.exclusions);
  EXPECT_EQ(current.windows, request_.windows);
}

TEST_F(DocumentTest, SaveAndReadRoundTripsEveryChangeKind) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  for (const ManualChange& change : EveryKind()) document.Record(change);
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document, path);

  const AnalysisDocument read = ReadAnalysisDocument(path);
  EXPECT_EQ(read, document);
  EXPECT_EQ(read.Changes(), EveryKind());
  EXPECT_TRUE(read.Verify().intact) << read.Verify().message;

  const AnalysisRequest current = read.CurrentRequest();
  ASSERT_EQ(current.exclusions.size(), 1u);  // B03 was restored
  EXPECT_EQ(current.exclusions[0], (WellExclusion{1, "H12", "bubble or meniscus artefact"}));
  ASSERT_EQ(current.windows.size(), 1u);  // A02 went back to automatic
  EXPECT_EQ(current.windows[0].well, "A01");
  EXPECT_EQ(current.windows[0].end_min, 7.0 / 3.0);  // exact: JSON numbers round-trip
  EXPECT_EQ(current.model, "substrate-inhibition");
  ASSERT_TRUE(current.interval_method.has_value());
  EXPECT_EQ(*current.interval_method, IntervalMethod::kBootstrap);
  ASSERT_TRUE(read.CurrentWeighting().has_value());
  EXPECT_EQ(*read.CurrentWeighting(), Weighting::kInverseVariance);
  EXPECT_EQ(current.read_options.time_unit, TimeUnit::kMinutes);
  EXPECT_EQ(current.read_options.overflow_markers, std::vector<std::string>{"OVER"});
}

TEST_F(DocumentTest, RecordRefusesChangesThatCannotBeApplied) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  ManualChange no_reason = Change(ChangeKind::kExclude);
  no_reason.well = "A01";
  no_reason.reason = "  ";
  EXPECT_THROW(document.Record(no_reason), std::invalid_argument);
  ManualChange bad_well = no_reason;
  bad_well.reason = "pipetting error";
  bad_well.well = "A1";  // not zero-padded
  EXPECT_THROW(document.Record(bad_well), std::invalid_argument);
  ManualChange bad_plate = bad_well;
  bad_plate.well = "A01";
  bad_plate.plate = 2;  // two plates: 0 and 1
  EXPECT_THROW(document.Record(bad_plate), std::invalid_argument);
  ManualChange backwards = Change(ChangeKind::kWindow);
  backwards.well = "A01";
  backwards.start_min = 5.0;
  backwards.end_min = 2.0;
  EXPECT_THROW(document.Record(backwards), std::invalid_argument);
  ManualChange model = Change(ChangeKind::kModel);
  model.value = "michaelis";
  try {
    document.Record(model);
    FAIL() << "expected std::invalid_argument";
  } catch (const std::invalid_argument& error) {
    EXPECT_NE(std::string(error.what()).find("michaelis-menten"), std::string::npos) << error.what();
  }
  EXPECT_EQ(document.audit().size(), 1u);  // nothing was appended
}

TEST_F(DocumentTest, AnEditedChangeInTheFileIsFoundByVerify) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  for (const ManualChange& change : EveryKind()) document.Record(change);
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document, path);
  std::string text = ReadBytes(path);
  const std::size_t at = text.find("\"bubble or meniscus artefact\"");
  ASSERT_NE(at, std::string::npos);
  text.replace(at, 29, "\"reagent ran out             \"");
  WriteBytes(path, text);

  const AnalysisDocument read = ReadAnalysisDocument(path);
  const AuditVerification result = read.Verify();
  EXPECT_FALSE(result.intact);
  EXPECT_EQ(result.first_broken, 2);  // created, exclude B03, exclude H12 <- edited
}

TEST_F(DocumentTest, AnEditedRequestIsFoundThroughTheBaseHash) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document, path);
  std::string text = ReadBytes(path);
  const std::size_t at = text.find("\"model\": \"auto\"");
  ASSERT_NE(at, std::string::npos);
  text.replace(at, 15, "\"model\": \"hill\"");
  WriteBytes(path, text);

  const AuditVerification result = ReadAnalysisDocument(path).Verify();
  EXPECT_FALSE(result.intact);
  EXPECT_EQ(result.first_broken, 0);
  EXPECT_NE(result.message.find("entry 1"), std::string::npos) << result.message;
}

// 1-based line and column of the first occurrence of needle.
std::pair<int, int> LineColumnOf(const std::string& text, const std::string& needle) {
  const std::size_t at = text.find(needle);
  const std::size_t line_start = text.rfind('\n', at);
  const int line = 1 + static_cast<int>(std::count(text.begin(), text.begin() + at, '\n'));
  const int column = static_cast<int>(at - (line_start == std::string::npos ? -1 : line_start));
  return {line, column};
}

TEST_F(DocumentTest, AValueOfTheWrongTypeIsReportedAtItsLineAndColumn) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  document.Record(EveryKind()[0]);
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document, path);
  std::string text = ReadBytes(path);
  const std::size_t at = text.find("\"plate\": 1");
  ASSERT_NE(at, std::string::npos);
  text.replace(at, 10, "\"plate\": \"one\"");
  WriteBytes(path, text);
  const auto [line, column] = LineColumnOf(text, "\"one\"");
  try {
    ReadAnalysisDocument(path);
    FAIL() << "expected InputError";
  } catch (const InputError& error) {
    EXPECT_EQ(error.file(), path);
    EXPECT_EQ(error.line(), line) << error.what();
    EXPECT_EQ(error.column(), column) << error.what();
    EXPECT_NE(error.reason().find("audit[1].change.plate"), std::string::npos) << error.what();
    EXPECT_NE(error.reason().find("expected a whole number"), std::string::npos) << error.what();
  }
}

TEST_F(DocumentTest, ATruncatedFileIsAClearErrorAndIsLeftAsItWas) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  for (const ManualChange& change : EveryKind()) document.Record(change);
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document, path);
  const std::string damaged = ReadBytes(path).substr(0, 900);
  WriteBytes(path, damaged);
  try {
    ReadAnalysisDocument(path);
    FAIL() << "expected InputError";
  } catch (const InputError& error) {
    EXPECT_GT(error.line(), 1) << error.what();
    EXPECT_GT(error.column(), 0) << error.what();
    EXPECT_NE(error.reason().find("not valid JSON"), std::string::npos) << error.what();
  }
  EXPECT_EQ(ReadBytes(path), damaged);
}

TEST_F(DocumentTest, OtherDamageIsNamed) {
  const std::string path = dir_.File("bad.ratewell");
  const auto reason_for = [&](const std::string& text) -> std::string {
    WriteBytes(path, text);
    try {
      ReadAnalysisDocument(path);
    } catch (const InputError& error) {
      return error.what();
    }
    return "no error";
  };
  EXPECT_NE(reason_for("").find("empty"), std::string::npos);
  EXPECT_NE(reason_for("[1, 2]").find("expected a JSON object"), std::string::npos);
  EXPECT_NE(reason_for(R"({"format": "something-else", "version": 1})").find("not a ratewell analysis"),
            std::string::npos);
  EXPECT_NE(reason_for(R"({"format": "ratewell-analysis", "version": 7})").find("newer ratewell"),
            std::string::npos);

  AnalysisDocument document = AnalysisDocument::Create(request_);
  SaveAnalysisDocument(document, path);
  std::string text = ReadBytes(path);
  text.replace(text.find("\"audit\""), 7, "\"audti\"");
  EXPECT_NE(reason_for(text).find("unknown key \"audti\""), std::string::npos) << reason_for(text);
  EXPECT_NE(reason_for("{}").find("missing key \"format\""), std::string::npos);
  EXPECT_THROW(ReadAnalysisDocument(dir_.File("missing.ratewell")), InputError);
}

TEST_F(DocumentTest, SavingOverAnInputIsRefusedAndTheInputKept) {
  const AnalysisDocument document = AnalysisDocument::Create(request_);
  EXPECT_THROW(SaveAnalysisDocument(document, dir_.File("plate_a.csv")), InputError);
  EXPECT_EQ(ReadBytes(dir_.File("plate_a.csv")), "abc");
}

TEST_F(DocumentTest, AFolderMovedAsAWholeStillOpens) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  SaveAnalysisDocument(document, dir_.File("run.ratewell"));
  const fs::path moved = dir_.path().parent_path() / (dir_.path().filename().string() + "-moved");
  fs::remove_all(moved);
  fs::rename(dir_.path(), moved);
  std::vector<std::string> notes;
  const AnalysisDocument read = ReadAnalysisDocument((moved / "run.ratewell").string(), &notes);
  fs::rename(moved, dir_.path());  // so the scratch folder is cleaned up
  EXPECT_EQ(notes.size(), 4u);
  EXPECT_EQ(read.base_request().plate_paths[0], (moved / "plate_a.csv").string());
  EXPECT_EQ(read.base_request().layout_path, (moved / "layout.csv").string());
  EXPECT_TRUE(read.Verify().intact) << read.Verify().message;  // paths are not in the hash
}

TEST_F(DocumentTest, AChangedInputIsReportedWithoutStoppingTheLoad) {
  const AnalysisDocument document = AnalysisDocument::Create(request_);
  EXPECT_TRUE(CheckInputHashes(document).empty());
  WriteBytes(dir_.File("plate_b.csv"), "second plate, edited");
  const std::vector<std::string> problems = CheckInputHashes(document);
  ASSERT_EQ(problems.size(), 1u);
  EXPECT_NE(problems[0].find("plate_b.csv"), std::string::npos) << problems[0];
  EXPECT_NE(problems[0].find("changed since the analysis was made"), std::string::npos);
  fs::remove(dir_.File("layout.csv"));
  EXPECT_EQ(CheckInputHashes(document).size(), 2u);
}

// --- With real plates: the numbers are recomputed from inputs + document.

class RebuildTest : public ::testing::Test {
 protected:
  void SetUp() override {
    const fs::path demo = testing::DemoPlatesDir() / "mut7-mutase";
    for (const char* name : {"mut7_wide.txt", "layout.csv", "ASSAY.json"}) {
      fs::copy_file(demo / name, dir_.path() / name);
    }
    request_.plate_paths = {dir_.File("mut7_wide.txt")};
    request_.layout_path = dir_.File("layout.csv");
    request_.assay_path = dir_.File("ASSAY.json");
    request_.interval_method = IntervalMethod::kAsymptotic;  // fast; the method is not under test
  }

  ScratchDir dir_;
  AnalysisRequest request_;
};

// Relative agreement of the same computation reached two ways (one refit
// after in-memory changes, one run from scratch): both run the same code on
// the same numbers, so only the order of floating-point work may differ.
constexpr double kSameComputationRelTolerance = 1e-9;

TEST_F(RebuildTest, LoadRecomputesEveryNumberWithTheRecordedChanges) {
  AnalysisDocument document = AnalysisDocument::Create(request_);
  ManualChange exclude;
  exclude.kind = ChangeKind::kExclude;
  exclude.well = "A02";
  exclude.reason = "pipetting error";
  ManualChange window;
  window.kind = ChangeKind::kWindow;
  window.well = "A05";
  window.start_min = 2.0;
  window.end_min = 10.0;
  ManualChange model;
  model.kind = ChangeKind::kModel;
  model.value = "michaelis-menten";
  ManualChange weighting;
  weighting.kind = ChangeKind::kWeighting;
  weighting.value = "relative";
  for (const ManualChange& c : {exclude, window, model, weighting}) document.Record(c);
  const std::string path = dir_.File("run.ratewell");
  SaveAnalysisDocument(document, path);

  const RebuiltAnalysis rebuilt = RebuildAnalysis(ReadAnalysisDocument(path));
  EXPECT_TRUE(rebuilt.warnings.empty()) << rebuilt.warnings.front();
  EXPECT_TRUE(rebuilt.integrity.intact);
  const Analysis& a = rebuilt.analysis;
  EXPECT_EQ(a.request.weighting, Weighting::kRelative);
  EXPECT_EQ(a.kinetics.options.weighting, Weighting::kRelative);
  ASSERT_EQ(a.plate_rates.size(), 1u);
  const WellRate& a02 = a.plate_rates[0].wells[1];
  ASSERT_EQ(a02.name, "A02");
  EXPECT_TRUE(a02.excluded);
  EXPECT_EQ(a02.exclusion_reason, "pipetting error");
  const WellRate& a05 = a.plate_rates[0].wells[4];
  ASSERT_EQ(a05.name, "A05");
  // The window counts from the well's first read; the estimate reports the
  // reader's clock.
  const int channel = a.plates[0].ChannelOf(340.0);
  const double first_read = a.plates[0].at(channel, a05.well).time_min.front();
  EXPECT_GE(a05.estimate.window_start_min, first_read + 2.0);
  EXPECT_LE(a05.estimate.window_end_min, first_read + 10.0);
  EXPECT_GT(a05.estimate.window_end_min, first_read + 9.0);  // the window was used, not shortened
  const KineticFit* fit = a.kinetics.choice.Preferred();
  ASSERT_NE(fit, nullptr);
  EXPECT_EQ(fit->model, KineticModel::kMichaelisMenten);

  // The same state reached in memory, the way the window gets there.
  AnalysisRequest plain = request_;
  Analysis stepwise = RunAnalysis(plain);
  for (const ManualChange& c : {exclude, window, model, weighting}) ApplyChange(&stepwise, c);
  FitKinetics(&stepwise);
  const KineticFit* stepwise_fit = stepwise.kinetics.choice.Preferred();
  ASSERT_NE(stepwise_fit, nullptr);
  for (const char* name : {"Vmax", "Km"}) {
    const double expected = stepwise_fit->Find(name)->value;
    EXPECT_NEAR(fit->Find(name)->value, expected, kSameComputationRelTolerance * std::abs(expected))
        << name;
  }
  EXPECT_EQ(stepwise.request.exclusions, a.request.exclusions);
  EXPECT_EQ(stepwise.request.windows, a.request.windows);
}

TEST_F(RebuildTest, AChangedPlateFileIsAWarningOfTheRebuild) {
  const AnalysisDocument document = AnalysisDocument::Create(request_);
  std::string bytes = ReadBytes(dir_.File("mut7_wide.txt"));
  bytes.insert(bytes.find('\n') + 1, "edited by hand\n");  // a preamble line the reader skips
  WriteBytes(dir_.File("mut7_wide.txt"), bytes);
  RebuiltAnalysis rebuilt;
  try {
    rebuilt = RebuildAnalysis(document);
  } catch (const InputError& error) {
    FAIL() << error.what();
  }
  ASSERT_FALSE(rebuilt.warnings.empty());
  EXPECT_NE(rebuilt.warnings[0].find("changed since the analysis was made"), std::string::npos);
}

TEST_F(RebuildTest, ApplyChangeRefusesAnUnknownWell) {
  Analysis analysis = RunAnalysis(request_);
  ManualChange exclude;
  exclude.kind = ChangeKind::kExclude;
  exclude.plate = 3;
  exclude.well = "A02";
  exclude.reason = "pipetting error";
  EXPECT_THROW(ApplyChange(&analysis, exclude), std::invalid_argument);
}

}  // namespace
}  // namespace ratewell
