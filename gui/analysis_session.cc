#include "gui/analysis_session.h"

#include <QCoreApplication>
#include <QDeadlineTimer>
#include <QFileInfo>
#include <QPointer>
#include <QThread>
#include <QUndoCommand>
#include <QUndoStack>
#include <algorithm>
#include <exception>
#include <stdexcept>
#include <utility>

#include "importers/input_error.h"
#include "session/autosave.h"

namespace ratewell::gui {

// Lives on the worker thread; only jobs run there touch `current`.
class AnalysisSession::Worker : public QObject {
 public:
  Analysis current;
};

namespace {

// One undoable step: a group of changes made together (one click), and the
// changes that return to the state before it.
class ChangeCommand : public QUndoCommand {
 public:
  ChangeCommand(AnalysisSession* session, std::vector<ManualChange> forward,
                std::vector<ManualChange> inverse, const QString& text)
      : QUndoCommand(text), session_(session), forward_(std::move(forward)),
        inverse_(std::move(inverse)) {}

  void redo() override {
    for (const ManualChange& c : forward_) session_->applyRecorded(c);
  }
  void undo() override {
    for (auto it = inverse_.rbegin(); it != inverse_.rend(); ++it) session_->applyRecorded(*it);
  }

 private:
  AnalysisSession* session_;
  std::vector<ManualChange> forward_;
  std::vector<ManualChange> inverse_;
};

constexpr const char* kUndoReason = "undo";

}  // namespace

AnalysisSession::AnalysisSession(QObject* parent) : QObject(parent) {
  thread_ = new QThread(this);
  thread_->setObjectName("ratewell-analysis");
  worker_ = new Worker;
  worker_->moveToThread(thread_);
  connect(thread_, &QThread::finished, worker_, &QObject::deleteLater);
  thread_->start();
  undo_stack_ = new QUndoStack(this);
  autosave_timer_.setInterval(60 * 1000);
  connect(&autosave_timer_, &QTimer::timeout, this, [this] {
    if (autosave_due_) autosaveNow();
  });
  autosave_timer_.start();
}

AnalysisSession::~AnalysisSession() {
  thread_->quit();
  thread_->wait();
}

void AnalysisSession::resetForNewDocument() {
  undo_stack_->clear();
  document_warnings_.clear();
  autosave_path_.clear();
  modified_ = false;
  autosave_due_ = false;
}

void AnalysisSession::startNew(const AnalysisRequest& request) {
  AnalysisDocument document = AnalysisDocument::Create(request);  // throws InputError
  resetForNewDocument();
  document_ = std::move(document);
  has_document_ = true;
  document_path_.clear();
  modified_ = true;  // never saved
  autosave_due_ = true;
  const AnalysisRequest current = document_.CurrentRequest();
  runOnWorker([current](Analysis* a, const ProgressCallback& progress) {
    *a = RunAnalysis(current, progress);
  });
  emit documentChanged();
}

void AnalysisSession::openDocument(const QString& path) {
  std::vector<std::string> notes;
  AnalysisDocument document = ReadAnalysisDocument(path.toStdString(), &notes);  // throws
  resetForNewDocument();
  document_ = std::move(document);
  has_document_ = true;
  document_path_ = QFileInfo(path).absoluteFilePath();
  autosave_path_ = QString::fromStdString(AutosavePathFor(document_path_.toStdString()));
  for (const std::string& note : notes) document_warnings_ << QString::fromStdString(note);
  const AnalysisDocument copy = document_;
  runOnWorker([copy](Analysis* a, const ProgressCallback& progress) {
    *a = RebuildAnalysis(copy, progress).analysis;
  });
  // The document's own checks (cheap: hashes and the chain) on this thread.
  for (const std::string& w : CheckInputHashes(document_)) document_warnings_ << QString::fromStdString(w);
  const AuditVerification integrity = document_.Verify();
  if (!integrity.intact) {
    document_warnings_.prepend("audit trail broken: " + QString::fromStdString(integrity.message));
  }
  emit documentChanged();
}

void AnalysisSession::openRecovered(const QString& autosave_path) {
  std::string document_path;
  AnalysisDocument document = ReadAutosave(autosave_path.toStdString(), &document_path);
  resetForNewDocument();
  document_ = std::move(document);
  has_document_ = true;
  document_path_ = QString::fromStdString(document_path);
  autosave_path_ = autosave_path;
  modified_ = true;  // the recovered changes are not in the saved document
  autosave_due_ = false;
  const AnalysisDocument copy = document_;
  runOnWorker([copy](Analysis* a, const ProgressCallback& progress) {
    *a = RebuildAnalysis(copy, progress).analysis;
  });
  for (const std::string& w : CheckInputHashes(document_)) document_warnings_ << QString::fromStdString(w);
  document_warnings_.prepend("recovered unsaved changes from " + autosave_path);
  emit documentChanged();
}

void AnalysisSession::saveAs(const QString& path) {
  if (!has_document_) throw std::logic_error("there is no analysis to save");
  const QString absolute = QFileInfo(path).absoluteFilePath();
  SaveAnalysisDocument(document_, absolute.toStdString());  // throws
  const QString old_autosave = autosave_path_;
  document_path_ = absolute;
  autosave_path_ = QString::fromStdString(AutosavePathFor(absolute.toStdString()));
  if (!old_autosave.isEmpty()) RemoveAutosave(old_autosave.toStdString());
  RemoveAutosave(autosave_path_.toStdString());
  modified_ = false;
  autosave_due_ = false;
  undo_stack_->setClean();
  emit documentChanged();
}

void AnalysisSession::save() {
  if (document_path_.isEmpty()) throw std::logic_error("the analysis has no file yet; use Save As");
  saveAs(document_path_);
}

void AnalysisSession::markModified() {
  modified_ = true;
  autosave_due_ = true;
  emit documentChanged();
}

void AnalysisSession::setAutosaveFolder(const QString& folder) { autosave_folder_ = folder; }

void AnalysisSession::setAutosaveInterval(int milliseconds) {
  autosave_timer_.setInterval(milliseconds);
}

bool AnalysisSession::autosaveNow() {
  if (!has_document_ || !modified_) return false;
  try {
    if (autosave_path_.isEmpty()) {
      const std::string folder =
          autosave_folder_.isEmpty() ? UnsavedAutosaveFolder() : autosave_folder_.toStdString();
      autosave_path_ = QString::fromStdString(NewUnsavedAutosavePath(folder));
    }
    WriteAutosave(document_, autosave_path_.toStdString(), document_path_.toStdString());
  } catch (const std::exception& error) {
    emit failed(QString("autosave failed: ") + error.what());
    return false;
  }
  autosave_due_ = false;
  return true;
}

void AnalysisSession::discardAutosave() {
  if (!autosave_path_.isEmpty()) RemoveAutosave(autosave_path_.toStdString());
}

// --- Changes ---------------------------------------------------------------

void AnalysisSession::excludeWells(const std::vector<std::pair<int, std::string>>& wells,
                                   const QString& reason) {
  if (!has_document_) return;
  const AnalysisRequest current = document_.CurrentRequest();
  std::vector<ManualChange> forward, inverse;
  for (const auto& [plate, well] : wells) {
    const bool already = std::any_of(current.exclusions.begin(), current.exclusions.end(),
                                     [&](const WellExclusion& e) {
                                       return e.plate == plate && e.well == well;
                                     });
    if (already) continue;
    ManualChange change;
    change.kind = ChangeKind::kExclude;
    change.plate = plate;
    change.well = well;
    change.reason = reason.trimmed().toStdString();
    ManualChange back = change;
    back.kind = ChangeKind::kRestore;
    back.reason = kUndoReason;
    forward.push_back(change);
    inverse.push_back(back);
  }
  if (forward.empty()) return;
  const QString text = forward.size() == 1
                           ? QString("Exclude %1").arg(QString::fromStdString(forward[0].well))
                           : QString("Exclude %1 wells").arg(forward.size());
  undo_stack_->push(new ChangeCommand(this, forward, inverse, text));
}

void AnalysisSession::restoreWells(const std::vector<std::pair<int, std::string>>& wells) {
  if (!has_document_) return;
  const AnalysisRequest current = document_.CurrentRequest();
  std::vector<ManualChange> forward, inverse;
  for (const auto& [plate, well] : wells) {
    const auto it = std::find_if(current.exclusions.begin(), current.exclusions.end(),
                                 [&](const WellExclusion& e) {
                                   return e.plate == plate && e.well == well;
                                 });
    if (it == current.exclusions.end()) continue;
    ManualChange change;
    change.kind = ChangeKind::kRestore;
    change.plate = plate;
    change.well = well;
    ManualChange back = change;
    back.kind = ChangeKind::kExclude;
    back.reason = it->reason;
    forward.push_back(change);
    inverse.push_back(back);
  }
  if (forward.empty()) return;
  const QString text = forward.size() == 1
                           ? QString("Restore %1").arg(QString::fromStdString(forward[0].well))
                           : QString("Restore %1 wells").arg(forward.size());
  undo_stack_->push(new ChangeCommand(this, forward, inverse, text));
}

void AnalysisSession::setWindow(int plate, const std::string& well,
                                const std::optional<std::pair<double, double>>& window_min) {
  if (!has_document_) return;
  const AnalysisRequest current = document_.CurrentRequest();
  const auto it = std::find_if(current.windows.begin(), current.windows.end(),
                               [&](const WindowOverride& w) { return w.plate == plate && w.well == well; });
  ManualChange change;
  change.plate = plate;
  change.well = well;
  if (window_min) {
    change.kind = ChangeKind::kWindow;
    change.start_min = window_min->first;
    change.end_min = window_min->second;
  } else {
    if (it == current.windows.end()) return;  // already automatic
    change.kind = ChangeKind::kAutomaticWindow;
  }
  ManualChange back;
  back.plate = plate;
  back.well = well;
  back.reason = kUndoReason;
  if (it != current.windows.end()) {
    if (window_min && it->start_min == window_min->first && it->end_min == window_min->second) return;
    back.kind = ChangeKind::kWindow;
    back.start_min = it->start_min;
    back.end_min = it->end_min;
  } else {
    back.kind = ChangeKind::kAutomaticWindow;
  }
  const QString text = window_min ? QString("Window of %1").arg(QString::fromStdString(well))
                                  : QString("Automatic window of %1").arg(QString::fromStdString(well));
  undo_stack_->push(new ChangeCommand(this, {change}, {back}, text));
}

void AnalysisSession::pushChange(const ManualChange& forward, const ManualChange& inverse,
                                 const QString& text) {
  if (text.isEmpty()) return;
  undo_stack_->push(new ChangeCommand(this, {forward}, {inverse}, text));
}

void AnalysisSession::setModel(const QString& model) {
  if (!has_document_ || !analysis_) return;
  const std::string now = analysis_->request.model.empty() ? analysis_->settings.fit.model
                                                           : analysis_->request.model;
  const AnalysisRequest current = document_.CurrentRequest();
  pushSettingChange(ChangeKind::kModel, model.toStdString(),
                    current.model.empty() ? now : current.model, "Model " + model);
}

void AnalysisSession::setIntervalMethod(const QString& method) {
  if (!has_document_ || !analysis_) return;
  const AnalysisRequest current = document_.CurrentRequest();
  const IntervalMethod now = current.interval_method.value_or(analysis_->settings.fit.interval);
  pushSettingChange(ChangeKind::kIntervalMethod, method.toStdString(), IntervalMethodToString(now),
                    "Intervals " + method);
}

void AnalysisSession::setWeighting(const QString& weighting) {
  if (!has_document_ || !analysis_) return;
  const Weighting now = analysis_->request.weighting.value_or(analysis_->settings.fit.weighting);
  pushSettingChange(ChangeKind::kWeighting, weighting.toStdString(), WeightingToString(now),
                    "Weighting " + weighting);
}

void AnalysisSession::pushSettingChange(ChangeKind kind, const std::string& value,
                                        const std::string& now, const QString& text) {
  if (value == now) return;
  ManualChange change;
  change.kind = kind;
  change.value = value;
  ManualChange back = change;
  back.value = now;
  back.reason = kUndoReason;
  pushChange(change, back, text);
}

void AnalysisSession::applyRecorded(const ManualChange& change) {
  try {
    document_.Record(change);
  } catch (const std::exception& error) {
    emit failed(QString("change not recorded: ") + error.what());
    return;
  }
  markModified();
  runOnWorker([change](Analysis* a, const ProgressCallback& progress) {
    ApplyChange(a, change);
    FitKinetics(a, progress);
  });
}

// --- Worker ------------------------------------------------------------------

void AnalysisSession::runOnWorker(std::function<void(Analysis*, const ProgressCallback&)> job) {
  if (++pending_ == 1) emit busyChanged(true);
  Worker* worker = worker_;
  QPointer<AnalysisSession> self(this);
  QMetaObject::invokeMethod(
      worker,
      [worker, self, job = std::move(job)] {
        double last_reported = -1.0;
        const ProgressCallback progress = [&](double fraction, const std::string& what) {
          if (fraction - last_reported < 0.02 && fraction < 1.0) return;
          last_reported = fraction;
          const QString text = QString::fromStdString(what);
          QMetaObject::invokeMethod(
              self, [self, fraction, text] {
                if (self) emit self->progress(fraction, text);
              },
              Qt::QueuedConnection);
        };
        std::shared_ptr<const Analysis> result;
        QString error;
        Analysis backup = worker->current;
        try {
          job(&worker->current, progress);
          result = std::make_shared<const Analysis>(worker->current);
        } catch (const InputError& e) {
          worker->current = std::move(backup);
          error = QString::fromStdString(e.what());
        } catch (const std::exception& e) {
          worker->current = std::move(backup);
          error = QString::fromStdString(e.what());
        }
        QMetaObject::invokeMethod(
            self, [self, result, error] {
              if (self) self->deliver(result, error);
            },
            Qt::QueuedConnection);
      },
      Qt::QueuedConnection);
}

void AnalysisSession::deliver(std::shared_ptr<const Analysis> analysis, const QString& error) {
  --pending_;
  if (!error.isEmpty()) emit failed(error);
  if (analysis) analysis_ = std::move(analysis);
  // Show only the state after the last queued change.
  if (pending_ == 0) {
    emit busyChanged(false);
    if (analysis_) emit analysisChanged();
  }
}

bool AnalysisSession::waitUntilIdle(int timeout_ms) {
  QDeadlineTimer deadline(timeout_ms);
  while (pending_ > 0) {
    if (deadline.hasExpired()) return false;
    QCoreApplication::processEvents(QEventLoop::AllEvents, 20);
    QThread::msleep(1);
  }
  QCoreApplication::processEvents();
  return true;
}

}  // namespace ratewell::gui
