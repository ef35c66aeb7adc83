#include "session/autosave.h"

#include <unistd.h>

#include <QDir>
#include <QStandardPaths>
#include <algorithm>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <stdexcept>

#include "importers/file_io.h"
#include "importers/input_error.h"

namespace ratewell {
namespace fs = std::filesystem;

std::string AutosavePathFor(const std::string& document_path) {
  return document_path + std::string(kAutosaveSuffix);
}

std::string UnsavedAutosaveFolder() {
  const QString base = QStandardPaths::writableLocation(QStandardPaths::AppDataLocation);
  if (base.isEmpty()) {
    throw std::runtime_error("no writable application data folder for autosaves");
  }
  const QString folder = base + "/autosave";
  if (!QDir().mkpath(folder)) {
    throw std::runtime_error("cannot create the autosave folder " + folder.toStdString());
  }
  return folder.toStdString();
}

std::string NewUnsavedAutosavePath(const std::string& folder) {
  std::string stamp = CurrentIsoTime();
  std::replace(stamp.begin(), stamp.end(), ':', '-');
  const std::string stem = "unsaved-" + stamp + "-" + std::to_string(::getpid());
  std::string path = (fs::path(folder) / (stem + ".ratewell.autosave")).string();
  for (int n = 2; fs::exists(path); ++n) {
    path = (fs::path(folder) / (stem + "-" + std::to_string(n) + ".ratewell.autosave")).string();
  }
  return path;
}

void WriteAutosave(const AnalysisDocument& document, const std::string& autosave_path,
                   const std::string& document_path) {
  nlohmann::json j = document.ToJson();
  j["autosave_of"] = document_path.empty() ? nlohmann::json(nullptr) : nlohmann::json(document_path);
  std::vector<std::string> protected_inputs;
  for (const DocumentInput& input : document.inputs()) protected_inputs.push_back(input.path);
  if (!document_path.empty()) protected_inputs.push_back(document_path);
  WriteFileAtomically(autosave_path, j.dump(2) + "\n", protected_inputs);
}

AnalysisDocument ReadAutosave(const std::string& autosave_path, std::string* document_path) {
  AnalysisDocument document = ReadAnalysisDocument(autosave_path);
  if (document_path) {
    std::ifstream in(autosave_path, std::ios::binary);
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    const nlohmann::json root = nlohmann::json::parse(text, nullptr, /*allow_exceptions=*/false);
    const auto it = root.find("autosave_of");
    *document_path = (it != root.end() && it->is_string()) ? it->get<std::string>() : "";
  }
  return document;
}

namespace {

std::optional<RecoveryCandidate> Candidate(const std::string& autosave_path) {
  RecoveryCandidate candidate;
  candidate.autosave_path = autosave_path;
  try {
    const AnalysisDocument document = ReadAutosave(autosave_path, &candidate.document_path);
    candidate.audit_entries = static_cast<int>(document.audit().size());
    candidate.unsaved_entries = candidate.audit_entries;
    if (!document.audit().empty()) candidate.last_change_time = document.audit().back().time;
  } catch (const InputError&) {
    return std::nullopt;  // a damaged autosave is not offered
  }
  return candidate;
}

}  // namespace

std::optional<RecoveryCandidate> FindRecovery(const std::string& document_path) {
  const std::string autosave = AutosavePathFor(document_path);
  std::error_code error;
  if (!fs::exists(autosave, error)) return std::nullopt;
  std::optional<RecoveryCandidate> candidate = Candidate(autosave);
  if (!candidate) return std::nullopt;
  candidate->document_path = document_path;
  try {
    const AnalysisDocument saved = ReadAnalysisDocument(document_path);
    std::string ignored;
    const AnalysisDocument copy = ReadAutosave(autosave, &ignored);
    // The autosave is worth offering only when it goes beyond the saved
    // document along the same history.
    const auto& a = copy.audit();
    const auto& s = saved.audit();
    const bool extends = a.size() > s.size() && std::equal(s.begin(), s.end(), a.begin());
    if (!extends) return std::nullopt;
    candidate->unsaved_entries = static_cast<int>(a.size() - s.size());
  } catch (const InputError&) {
    // The saved document is unreadable: the autosave is all there is.
  }
  return candidate;
}

std::vector<RecoveryCandidate> FindUnsavedRecoveries(const std::string& folder) {
  std::vector<std::pair<fs::file_time_type, RecoveryCandidate>> found;
  std::error_code error;
  for (const fs::directory_entry& entry : fs::directory_iterator(folder, error)) {
    const std::string name = entry.path().filename().string();
    if (!entry.is_regular_file() || !name.starts_with("unsaved-") || !name.ends_with(kAutosaveSuffix)) {
      continue;
    }
    if (std::optional<RecoveryCandidate> candidate = Candidate(entry.path().string())) {
      found.emplace_back(entry.last_write_time(error), *candidate);
    }
  }
  std::sort(found.begin(), found.end(),
            [](const auto& a, const auto& b) { return a.first > b.first; });
  std::vector<RecoveryCandidate> candidates;
  for (auto& [time, candidate] : found) candidates.push_back(std::move(candidate));
  return candidates;
}

void RemoveAutosave(const std::string& autosave_path) {
  std::error_code error;
  fs::remove(autosave_path, error);
}

}  // namespace ratewell
