// AnalysisDocument: one analysis saved as a `*.ratewell` file.
//
// The document holds what is needed to recompute every number, and nothing
// computed: the input files by path and SHA-256, the analysis request (read
// options, model, interval method), and the audit trail (session/
// audit_trail.h) whose entries carry every manual change with time, user and
// reason. Loading re-reads the inputs and runs RunAnalysis on the request with
// the recorded changes applied (RebuildAnalysis); raw data are never edited.
//
// File form (JSON, UTF-8; our own schema):
//
//   { "format": "ratewell-analysis", "version": 1,
//     "software": {"name": "ratewell", "version": "0.1.0"},
//     "inputs": [{"role": "plate" | "layout" | "assay", "path": "/abs/plate.csv",
//                 "relative_path": "plate.csv" | null, "sha256": "…"}],
//     "request": {"read_options": {"table": "auto", "time_unit": "auto", "sheet": "",
//                                  "overflow_markers": [], "assumed_wavelength_nm": 340},
//                 "model": "", "interval_method": "profile" | null},
//     "audit": [{"sequence": 1, "time": "…Z", "user": "…", "action": "created",
//                "summary": "…", "change": null, "base_sha256": "…",
//                "previous_sha256": "000…", "sha256": "…"},
//               {"sequence": 2, …, "action": "exclude",
//                "change": {"kind": "exclude", "plate": 0, "well": "B03",
//                           "reason": "pipetting error"}, …}] }
//
// Inputs are listed plates first (in request order), then the layout, then
// the assay settings if any. "relative_path" is the path from the document's
// folder, written on save, so that a folder moved as a whole still opens.
// The "created" entry's base_sha256 hashes the inputs' roles and SHA-256s and
// the request (not the paths, which only say where to look), so editing the
// request or swapping an input's hash in the file breaks the chain.
//
// A document that cannot be used is an InputError with the file, the line
// and column of the offending value, and what was expected. A changed input
// (SHA-256 differs) or a broken audit chain is not an error: it is a warning
// the window shows and the report repeats.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "fitting/analysis.h"
#include "session/audit_trail.h"

namespace ratewell {

inline constexpr std::string_view kDocumentFormat = "ratewell-analysis";
inline constexpr int kDocumentVersion = 1;
// File name extension of a saved analysis.
inline constexpr std::string_view kDocumentExtension = ".ratewell";

struct DocumentInput {
  std::string role;    // "plate", "layout", "assay"
  std::string path;    // as the analysis reads it
  std::string sha256;  // lower-case hex of the bytes when the analysis was made
  bool operator==(const DocumentInput&) const = default;
};

class AnalysisDocument {
 public:
  AnalysisDocument() = default;

  // A new document for `request` (its exclusions and windows become the
  // first recorded changes, with reason "given at the start" where one is
  // missing). Hashes every input; throws InputError naming an input that
  // cannot be read.
  static AnalysisDocument Create(const AnalysisRequest& request);

  // Parses the file form. `file` names the source in errors. Throws
  // InputError (file, line, column, what was expected).
  static AnalysisDocument Parse(std::string_view text, const std::string& file);

  // The file form; ToJson().dump(2) is what Save writes.
  nlohmann::json ToJson() const;

  // The request as first made: no exclusions, no windows.
  const AnalysisRequest& base_request() const { return base_request_; }
  const std::vector<DocumentInput>& inputs() const { return inputs_; }
  const std::vector<AuditEntry>& audit() const { return audit_; }

  // Every recorded change, in order.
  std::vector<ManualChange> Changes() const;
  // The base request with every change applied: the exclusions and windows
  // in force (a restore or automatic-window removes the well's entry), the
  // model, interval method and weighting last chosen.
  AnalysisRequest CurrentRequest() const;
  // The weighting last chosen, if any (CurrentRequest().weighting).
  std::optional<Weighting> CurrentWeighting() const;

  // Checks the change (known kind, plate index in range, a well name, a
  // reason for an exclusion, a window 0 ≤ start < end, a known model,
  // interval method or weighting) and appends it to the audit trail. Throws
  // std::invalid_argument saying what was expected. time/user: see
  // AppendAuditEntry.
  void Record(const ManualChange& change, const std::optional<std::string>& time = std::nullopt,
              const std::optional<std::string>& user = std::nullopt);

  // The audit chain (VerifyAuditTrail) and the base hash of the "created"
  // entry against the document's inputs and request.
  AuditVerification Verify() const;

  // Rewrites input paths (e.g. found beside the document); hashes unchanged.
  void SetInputPath(std::size_t index, const std::string& path);

  // Same inputs, request and audit trail.
  bool operator==(const AnalysisDocument& other) const;

 private:
  std::string BaseHash() const;
  void SyncRequestPaths();

  AnalysisRequest base_request_;
  std::vector<DocumentInput> inputs_;
  std::vector<AuditEntry> audit_;
};

// The canonical JSON of a request's read options, model and interval method
// (no paths, no user decisions), as stored under "request".
nlohmann::json RequestToJson(const AnalysisRequest& request);

// Writes the document atomically (importers/file_io.h). Refuses to write over
// one of the document's inputs (InputError); std::runtime_error when the
// file cannot be written. Relative paths of the inputs are computed against
// the folder of `path`.
void SaveAnalysisDocument(const AnalysisDocument& document, const std::string& path);

// Reads a document. Inputs whose recorded path no longer exists but whose
// relative_path exists beside the document are redirected there (and said
// so in *notes, if given). Throws InputError for an unreadable or malformed
// file.
AnalysisDocument ReadAnalysisDocument(const std::string& path,
                                      std::vector<std::string>* notes = nullptr);

// For each input whose file now has another SHA-256 (or is gone), a sentence
// naming the file: the raw data changed since the analysis was made.
std::vector<std::string> CheckInputHashes(const AnalysisDocument& document);

// Everything recomputed from a document.
struct RebuiltAnalysis {
  Analysis analysis;
  // Changed inputs (CheckInputHashes) and a broken audit chain, as
  // sentences, before the analysis' own warnings.
  std::vector<std::string> warnings;
  AuditVerification integrity;
};

// Runs RunAnalysis on CurrentRequest() and applies the recorded weighting
// (refitting when it differs from the settings'). Throws InputError when an
// input is missing or unusable.
RebuiltAnalysis RebuildAnalysis(const AnalysisDocument& document,
                                const ProgressCallback& progress = {});

// Applies one change to an analysis in memory, the way the window does
// between saves: SetExclusion / SetWindow for well changes, the request's
// model or interval method, the settings' weighting. Does not refit (every
// kind of change needs FitKinetics afterwards). Throws std::invalid_argument
// for a change that does not fit the analysis.
void ApplyChange(Analysis* analysis, const ManualChange& change);

}  // namespace ratewell
