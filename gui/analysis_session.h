// AnalysisSession: the one analysis a window shows, and every change to it.
//
// The session owns the saved document (session/analysis_document.h) and the
// latest computed Analysis. A change (exclude, restore, window, model, …) is
// recorded in the document's audit trail at once, pushed on the undo stack,
// and computed on a worker thread: ApplyChange + FitKinetics on the worker's
// own copy of the analysis, so the window never waits. When the worker is
// done the new analysis is handed back through a queued call and
// analysisChanged() is emitted; widgets are only ever touched on the GUI
// thread. Changes are computed in the order they were made.
//
// Undo does not erase history: undoing an exclusion records a restore (the
// audit trail is append-only), with the reason "undo".
#pragma once

#include <QObject>
#include <QString>
#include <QStringList>
#include <QTimer>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "fitting/analysis.h"
#include "session/analysis_document.h"

QT_BEGIN_NAMESPACE
class QThread;
class QUndoStack;
QT_END_NAMESPACE

namespace ratewell::gui {

class AnalysisSession : public QObject {
  Q_OBJECT

 public:
  explicit AnalysisSession(QObject* parent = nullptr);
  ~AnalysisSession() override;

  // Starts a new analysis of plates with a layout (and assay settings):
  // the document is created here (inputs hashed), the analysis computed on
  // the worker. Throws InputError for an input that cannot be read.
  void startNew(const AnalysisRequest& request);
  // Opens a saved document (or a recovered autosave: `autosave_of` is the
  // document it belongs to, "" for an unsaved one) and recomputes it.
  // Throws InputError for a damaged document.
  void openDocument(const QString& path);
  void openRecovered(const QString& autosave_path);

  // Writes the document (atomic) and removes its autosave. Throws on failure.
  void saveAs(const QString& path);
  void save();  // to documentPath(); throws std::logic_error when there is none

  // The changes a person makes. Each is recorded, undoable and refits.
  void excludeWells(const std::vector<std::pair<int, std::string>>& wells, const QString& reason);
  void restoreWells(const std::vector<std::pair<int, std::string>>& wells);
  // Window in minutes from the well's first read; nullopt: automatic.
  void setWindow(int plate, const std::string& well,
                 const std::optional<std::pair<double, double>>& window_min);
  void setModel(const QString& model);              // "auto" or a model id
  void setIntervalMethod(const QString& method);    // asymptotic, profile, bootstrap
  void setWeighting(const QString& weighting);      // none, relative, inverse-variance

  // The latest computed analysis (null before the first result).
  std::shared_ptr<const Analysis> analysis() const { return analysis_; }
  const AnalysisDocument& document() const { return document_; }
  bool hasDocument() const { return has_document_; }
  QString documentPath() const { return document_path_; }
  bool isModified() const { return modified_; }
  // Work queued or running on the worker.
  bool isBusy() const { return pending_ > 0; }
  // Sentences about the document itself (changed inputs, broken chain,
  // inputs found beside the document).
  const QStringList& documentWarnings() const { return document_warnings_; }
  QUndoStack* undoStack() const { return undo_stack_; }

  // Autosave: the file written while there are unsaved changes, and the
  // interval (default one minute). autosaveNow() writes it if needed.
  QString autosavePath() const { return autosave_path_; }
  void setAutosaveFolder(const QString& folder);  // for unsaved documents
  void setAutosaveInterval(int milliseconds);
  bool autosaveNow();
  // Removes the autosave file (a clean close).
  void discardAutosave();

  // Blocks until the worker is idle, processing events (tests, saving).
  // False on timeout.
  bool waitUntilIdle(int timeout_ms = 60000);

  // Applies a change without the undo stack (the undo commands call it).
  void applyRecorded(const ManualChange& change);

 signals:
  // A new analysis is shown (after open, or after the last queued change).
  void analysisChanged();
  // The document was created, opened, saved or changed.
  void documentChanged();
  void busyChanged(bool busy);
  // Progress of the running job: fraction in [0, 1] and what is being done.
  void progress(double fraction, const QString& what);
  // A job failed; the analysis shown stays the last good one.
  void failed(const QString& message);

 private:
  // Runs job on the worker's analysis; the result (or the error, with the
  // worker's analysis left as it was) comes back through deliver().
  void runOnWorker(std::function<void(Analysis*, const ProgressCallback&)> job);
  void deliver(std::shared_ptr<const Analysis> analysis, const QString& error);
  void markModified();
  void pushChange(const ManualChange& forward, const ManualChange& inverse, const QString& text);
  // A fit setting (model, interval method, weighting): from `now` to
  // `value`, undone by going back to `now`; nothing when they are equal.
  void pushSettingChange(ChangeKind kind, const std::string& value, const std::string& now,
                         const QString& text);
  void resetForNewDocument();

  class Worker;
  QThread* thread_ = nullptr;
  Worker* worker_ = nullptr;
  QUndoStack* undo_stack_ = nullptr;
  QTimer autosave_timer_;

  AnalysisDocument document_;
  bool has_document_ = false;
  QString document_path_;
  QString autosave_path_;
  QString autosave_folder_;
  bool modified_ = false;
  bool autosave_due_ = false;
  QStringList document_warnings_;
  std::shared_ptr<const Analysis> analysis_;
  int pending_ = 0;
};

}  // namespace ratewell::gui
