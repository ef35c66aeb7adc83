// Autosave and recovery: a copy of the document with unsaved changes, kept
// where a crash cannot take it away, and offered back at the next start.
//
// A saved document "run.ratewell" autosaves beside itself as
// "run.ratewell.autosave"; a document never saved autosaves into a folder of
// the user's application data (UnsavedAutosaveFolder) as
// "unsaved-<time>-<process>.ratewell.autosave". The autosave file is the
// document in the same file form plus "autosave_of": the document's path
// (null when unsaved). It is written atomically like the document itself
// and removed once the document is saved or closed without changes. The
// original document is never touched by an autosave.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "session/analysis_document.h"

namespace ratewell {

inline constexpr std::string_view kAutosaveSuffix = ".autosave";

// "run.ratewell" -> "run.ratewell.autosave".
std::string AutosavePathFor(const std::string& document_path);
// <application data>/autosave (QStandardPaths::AppDataLocation), created if
// needed. Throws std::runtime_error when there is no writable location.
std::string UnsavedAutosaveFolder();
// A fresh file name in `folder` for an unsaved document.
std::string NewUnsavedAutosavePath(const std::string& folder);

// Writes the autosave atomically. document_path: the saved document this
// is a copy of, or "" for an unsaved one.
void WriteAutosave(const AnalysisDocument& document, const std::string& autosave_path,
                   const std::string& document_path);

// An autosave that can be offered back.
struct RecoveryCandidate {
  std::string autosave_path;
  std::string document_path;  // "" when the document was never saved
  std::string last_change_time;  // time of the last audit entry
  int audit_entries = 0;
  // Entries the autosave holds beyond the saved document (all of them for
  // an unsaved one).
  int unsaved_entries = 0;
};

// The autosave beside document_path when it holds more than the document
// (or the document itself cannot be read); nullopt otherwise.
std::optional<RecoveryCandidate> FindRecovery(const std::string& document_path);
// Every unsaved-document autosave in `folder`, newest first.
std::vector<RecoveryCandidate> FindUnsavedRecoveries(const std::string& folder);

// Reads an autosave; *document_path gets its "autosave_of" ("" if unsaved).
// Throws InputError like ReadAnalysisDocument.
AnalysisDocument ReadAutosave(const std::string& autosave_path, std::string* document_path);

// Removes an autosave file; a missing file is not an error.
void RemoveAutosave(const std::string& autosave_path);

}  // namespace ratewell
