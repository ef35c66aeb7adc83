#include "gui/workbench_window.h"

#include <QAction>
#include <QApplication>
#include <QCloseEvent>
#include <QDockWidget>
#include <QDragEnterEvent>
#include <QDropEvent>
#include <QFileDialog>
#include <QFileInfo>
#include <QKeySequence>
#include <QLabel>
#include <QMenu>
#include <QMenuBar>
#include <QMessageBox>
#include <QMimeData>
#include <QProgressBar>
#include <QSettings>
#include <QStatusBar>
#include <QUndoStack>
#include <exception>

#include "gui/analysis_session.h"
#include "gui/audit_panel.h"
#include "gui/dialogs.h"
#include "gui/plate_panel.h"
#include "gui/saturation_panel.h"
#include "gui/trace_panel.h"
#include "importers/file_io.h"
#include "importers/input_error.h"
#include "report/pdf_report.h"
#include "report/results.h"
#include "session/autosave.h"

namespace ratewell::gui {
namespace {

constexpr int kMaxRecentFiles = 8;
constexpr const char* kRecentKey = "recentFiles";
constexpr const char* kStateKey = "window/state";
constexpr const char* kGeometryKey = "window/geometry";
// Bump when the docks change so an old saved layout is not restored.
constexpr int kDockLayoutVersion = 1;

std::vector<std::string> InputPaths(const Analysis& analysis) {
  std::vector<std::string> paths = analysis.request.plate_paths;
  paths.push_back(analysis.request.layout_path);
  if (!analysis.request.assay_path.empty()) paths.push_back(analysis.request.assay_path);
  return paths;
}

}  // namespace

WorkbenchWindow::WorkbenchWindow(QWidget* parent) : QMainWindow(parent) {
  setObjectName("WorkbenchWindow");
  session_ = new AnalysisSession(this);
  setAcceptDrops(true);
  setDockNestingEnabled(true);
  buildDocks();
  buildActions();

  progress_ = new QProgressBar(this);
  progress_->setRange(0, 100);
  progress_->setMaximumWidth(220);
  progress_->setTextVisible(false);
  progress_->hide();
  status_ = new QLabel(this);
  statusBar()->addWidget(status_, 1);
  statusBar()->addPermanentWidget(progress_);

  connect(session_, &AnalysisSession::analysisChanged, this, &WorkbenchWindow::refreshAll);
  connect(session_, &AnalysisSession::documentChanged, this, [this] {
    audit_panel_->setDocument(session_->hasDocument() ? &session_->document() : nullptr);
    refreshTitle();
  });
  connect(session_, &AnalysisSession::busyChanged, this, [this](bool busy) {
    progress_->setVisible(busy);
    progress_->setValue(0);
    if (busy) status_->setText("Computing…");
  });
  connect(session_, &AnalysisSession::progress, this, [this](double fraction, const QString& what) {
    progress_->setValue(static_cast<int>(fraction * 100));
    status_->setText(what);
  });
  connect(session_, &AnalysisSession::failed, this, [this](const QString& message) {
    status_->setText("⚠ " + message);
    if (!session_->analysis()) {
      QMessageBox::warning(this, "The analysis could not be computed", message);
    }
  });
  connect(session_->undoStack(), &QUndoStack::cleanChanged, this, [this] { refreshTitle(); });

  connect(plate_panel_, &PlatePanel::selectionChanged, this, &WorkbenchWindow::refreshTrace);
  connect(plate_panel_, &PlatePanel::excludeRequested, this, &WorkbenchWindow::excludeSelected);
  connect(plate_panel_, &PlatePanel::restoreRequested, this, &WorkbenchWindow::restoreSelected);
  connect(trace_panel_, &TracePanel::windowRequested, session_,
          [this](int plate, const std::string& well, const std::optional<std::pair<double, double>>& w) {
            session_->setWindow(plate, well, w);
          });
  connect(saturation_panel_, &SaturationPanel::modelRequested, session_, &AnalysisSession::setModel);
  connect(saturation_panel_, &SaturationPanel::weightingRequested, session_,
          &AnalysisSession::setWeighting);
  connect(saturation_panel_, &SaturationPanel::intervalMethodRequested, session_,
          &AnalysisSession::setIntervalMethod);

  QSettings settings;
  resize(1400, 900);
  restoreGeometry(settings.value(kGeometryKey).toByteArray());
  restoreState(settings.value(kStateKey).toByteArray(), kDockLayoutVersion);
  refreshAll();
  refreshTitle();
}

WorkbenchWindow::~WorkbenchWindow() {
  // The session (a child) is destroyed after this object has stopped being a
  // WorkbenchWindow; its undo stack still signals from its destructor, so cut
  // every connection to this window first.
  if (session_ != nullptr) {
    session_->undoStack()->disconnect(this);
    session_->disconnect(this);
  }
}

void WorkbenchWindow::buildDocks() {
  plate_panel_ = new PlatePanel;
  trace_panel_ = new TracePanel;
  saturation_panel_ = new SaturationPanel;
  audit_panel_ = new AuditPanel;
  const auto dock = [this](QWidget* widget, const QString& title, const QString& name) {
    auto* d = new QDockWidget(title, this);
    d->setObjectName(name);  // saveState() needs names
    d->setWidget(widget);
    d->setFeatures(QDockWidget::DockWidgetMovable | QDockWidget::DockWidgetFloatable |
                   QDockWidget::DockWidgetClosable);
    docks_ << d;
    return d;
  };
  QDockWidget* plate = dock(plate_panel_, "Plate", "plateDock");
  QDockWidget* trace = dock(trace_panel_, "Trace", "traceDock");
  QDockWidget* saturation = dock(saturation_panel_, "Rate against [S]", "saturationDock");
  QDockWidget* audit = dock(audit_panel_, "Audit trail", "auditDock");
  addDockWidget(Qt::LeftDockWidgetArea, plate);
  addDockWidget(Qt::RightDockWidgetArea, saturation);
  splitDockWidget(plate, trace, Qt::Vertical);
  splitDockWidget(saturation, audit, Qt::Vertical);
  resizeDocks({plate, saturation}, {720, 680}, Qt::Horizontal);
  resizeDocks({plate, trace}, {400, 440}, Qt::Vertical);
  resizeDocks({saturation, audit}, {560, 280}, Qt::Vertical);
  // No central widget: the four panels share the window.
  auto* centre = new QWidget(this);
  centre->setMaximumSize(0, 0);
  setCentralWidget(centre);
}

void WorkbenchWindow::buildActions() {
  QMenu* file = menuBar()->addMenu("&File");
  QAction* new_action = file->addAction("&New analysis from plate files…", this,
                                        [this] { newFromFiles({}); });
  new_action->setShortcut(QKeySequence::New);
  QAction* open = file->addAction("&Open analysis…", this, &WorkbenchWindow::openDocumentDialog);
  open->setShortcut(QKeySequence::Open);
  recent_menu_ = file->addMenu("Open &recent");
  rebuildRecentMenu();
  file->addSeparator();
  save_action_ = file->addAction("&Save", this, [this] { saveDocument(false); });
  save_action_->setShortcut(QKeySequence::Save);
  QAction* save_as = file->addAction("Save &as…", this, [this] { saveDocument(true); });
  save_as->setShortcut(QKeySequence::SaveAs);
  file->addSeparator();
  QAction* tables = file->addAction("Export &tables (rates.csv, results.json)…", this,
                                    &WorkbenchWindow::exportTables);
  tables->setShortcut(QKeySequence("Ctrl+Shift+T"));
  QAction* report = file->addAction("Export &report (PDF)…", this, &WorkbenchWindow::exportReport);
  report->setShortcut(QKeySequence::Print);
  file->addSeparator();
  QAction* quit = file->addAction("&Quit", this, &QWidget::close);
  quit->setShortcut(QKeySequence::Quit);

  QMenu* edit = menuBar()->addMenu("&Edit");
  undo_action_ = session_->undoStack()->createUndoAction(this, "&Undo");
  undo_action_->setShortcut(QKeySequence::Undo);
  redo_action_ = session_->undoStack()->createRedoAction(this, "&Redo");
  redo_action_->setShortcut(QKeySequence::Redo);
  edit->addAction(undo_action_);
  edit->addAction(redo_action_);
  edit->addSeparator();
  exclude_action_ = edit->addAction("Set &aside selected wells…", this, &WorkbenchWindow::excludeSelected);
  exclude_action_->setShortcut(QKeySequence("Ctrl+E"));
  restore_action_ = edit->addAction("&Use selected wells again", this, &WorkbenchWindow::restoreSelected);
  restore_action_->setShortcut(QKeySequence("Ctrl+Shift+E"));

  QMenu* view = menuBar()->addMenu("&View");
  for (int i = 0; i < docks_.size(); ++i) {
    QDockWidget* d = docks_[i];
    QAction* toggle = d->toggleViewAction();
    view->addAction(toggle);
    // Ctrl+1…4 shows the panel and moves the keyboard focus into it.
    QAction* focus = view->addAction("Go to " + d->windowTitle(), this, [d] {
      d->show();
      d->raise();
      d->widget()->setFocus(Qt::ShortcutFocusReason);
      if (QWidget* next = d->widget()->nextInFocusChain()) next->setFocus(Qt::ShortcutFocusReason);
    });
    focus->setShortcut(QKeySequence(QString("Ctrl+%1").arg(i + 1)));
  }
}

void WorkbenchWindow::refreshTitle() {
  QString name = session_->documentPath().isEmpty() ? QString("unsaved analysis")
                                                    : QFileInfo(session_->documentPath()).fileName();
  if (!session_->hasDocument()) name = "no analysis";
  setWindowTitle(name + "[*] — ratewell workbench");
  setWindowModified(session_->hasDocument() && session_->isModified());
  save_action_->setEnabled(session_->hasDocument());
}

QString WorkbenchWindow::currentWeighting() const {
  const auto analysis = session_->analysis();
  if (!analysis) return "none";
  return WeightingToString(analysis->request.weighting.value_or(analysis->settings.fit.weighting));
}

void WorkbenchWindow::refreshAll() {
  const auto analysis = session_->analysis();
  plate_panel_->setAnalysis(analysis);
  refreshTrace();
  saturation_panel_->setAnalysis(analysis, currentWeighting());
  audit_panel_->setDocument(session_->hasDocument() ? &session_->document() : nullptr);
  QStringList warnings = session_->documentWarnings();
  if (analysis) {
    for (const std::string& w : analysis->warnings) warnings << QString::fromStdString(w);
    const KineticFit* fit = analysis->kinetics.choice.Preferred();
    status_->setText(QString("%1 sample wells used%2")
                         .arg(analysis->UsableSampleWells())
                         .arg(fit ? QString(", model %1").arg(KineticModelToString(fit->model))
                                  : QString(", no usable fit")));
  }
  audit_panel_->setWarnings(warnings);
  refreshTitle();
}

void WorkbenchWindow::refreshTrace() {
  const auto analysis = session_->analysis();
  std::vector<int> others;
  for (int w : plate_panel_->map()->selection()) others.push_back(w);
  trace_panel_->showWells(analysis, plate_panel_->plateIndex(), plate_panel_->currentWell(), others);
}

// --- Opening and saving -----------------------------------------------------------

bool WorkbenchWindow::maybeKeepChanges() {
  if (!session_->hasDocument() || !session_->isModified()) return true;
  const auto answer = QMessageBox::question(
      this, "Unsaved changes", "The analysis has changes that are not saved. Save them first?",
      QMessageBox::Save | QMessageBox::Discard | QMessageBox::Cancel, QMessageBox::Save);
  if (answer == QMessageBox::Cancel) return false;
  if (answer == QMessageBox::Save) return saveDocument(false);
  session_->discardAutosave();
  return true;
}

bool WorkbenchWindow::openDocumentFile(const QString& path, bool quiet) {
  if (!quiet && !maybeKeepChanges()) return false;
  try {
    const std::optional<RecoveryCandidate> recovery = FindRecovery(path.toStdString());
    if (recovery && !quiet) {
      const auto answer = QMessageBox::question(
          this, "Recover unsaved changes?",
          QString("%1 unsaved change(s) to %2, the last at %3 UTC, were kept by the autosave. "
                  "Recover them?")
              .arg(recovery->unsaved_entries)
              .arg(QFileInfo(path).fileName(), QString::fromStdString(recovery->last_change_time)),
          QMessageBox::Yes | QMessageBox::No, QMessageBox::Yes);
      if (answer == QMessageBox::Yes) {
        session_->openRecovered(QString::fromStdString(recovery->autosave_path));
        addRecent(path);
        return true;
      }
      RemoveAutosave(recovery->autosave_path);
    }
    session_->openDocument(path);
  } catch (const std::exception& error) {
    if (!quiet) QMessageBox::warning(this, "Cannot open the analysis", error.what());
    status_->setText(QString("⚠ ") + error.what());
    return false;
  }
  addRecent(path);
  return true;
}

void WorkbenchWindow::offerUnsavedRecovery() {
  std::vector<RecoveryCandidate> found;
  try {
    found = FindUnsavedRecoveries(UnsavedAutosaveFolder());
  } catch (const std::exception&) {
    return;
  }
  if (found.empty()) return;
  const RecoveryCandidate& newest = found.front();
  const auto answer = QMessageBox::question(
      this, "Recover an unsaved analysis?",
      QString("An analysis that was never saved has %1 recorded step(s), the last at %2 UTC. "
              "Recover it?")
          .arg(newest.audit_entries)
          .arg(QString::fromStdString(newest.last_change_time)),
      QMessageBox::Yes | QMessageBox::Discard | QMessageBox::Ignore, QMessageBox::Yes);
  if (answer == QMessageBox::Yes) {
    try {
      session_->openRecovered(QString::fromStdString(newest.autosave_path));
    } catch (const std::exception& error) {
      QMessageBox::warning(this, "Cannot recover", error.what());
    }
  } else if (answer == QMessageBox::Discard) {
    RemoveAutosave(newest.autosave_path);
  }
}

bool WorkbenchWindow::startAnalysis(const AnalysisRequest& request, bool quiet) {
  if (!quiet && !maybeKeepChanges()) return false;
  try {
    session_->startNew(request);
  } catch (const std::exception& error) {
    if (!quiet) QMessageBox::warning(this, "Cannot start the analysis", error.what());
    status_->setText(QString("⚠ ") + error.what());
    return false;
  }
  return true;
}

void WorkbenchWindow::newFromFiles(const QStringList& files) {
  ImportDialog dialog(SortFiles(files), this);
  if (dialog.exec() != QDialog::Accepted) return;
  startAnalysis(dialog.request());
}

void WorkbenchWindow::openDocumentDialog() {
  const QString path = QFileDialog::getOpenFileName(this, "Open analysis", QString(),
                                                    "ratewell analyses (*.ratewell)");
  if (!path.isEmpty()) openDocumentFile(path);
}

bool WorkbenchWindow::saveDocument(bool ask_for_name) {
  if (!session_->hasDocument()) return false;
  QString path = session_->documentPath();
  if (ask_for_name || path.isEmpty()) {
    path = QFileDialog::getSaveFileName(this, "Save analysis", path.isEmpty() ? "analysis.ratewell" : path,
                                        "ratewell analyses (*.ratewell)");
    if (path.isEmpty()) return false;
    if (!path.endsWith(".ratewell")) path += ".ratewell";
  }
  try {
    session_->saveAs(path);
  } catch (const std::exception& error) {
    QMessageBox::warning(this, "Cannot save", error.what());
    return false;
  }
  addRecent(path);
  status_->setText("Saved " + path);
  return true;
}

void WorkbenchWindow::exportTables() {
  const auto analysis = session_->analysis();
  if (!analysis) return;
  const QString folder = QFileDialog::getExistingDirectory(this, "Folder for rates.csv and results.json");
  if (folder.isEmpty()) return;
  try {
    const std::vector<std::string> inputs = InputPaths(*analysis);
    const std::string base = folder.toStdString() + "/";
    RefuseToReplaceInput(base + "rates.csv", inputs);
    RefuseToReplaceInput(base + "results.json", inputs);
    WriteFileAtomically(base + "rates.csv", RatesCsv(*analysis), inputs);
    WriteFileAtomically(base + "results.json", ResultsJson(*analysis).dump(2) + "\n", inputs);
    status_->setText("Wrote rates.csv and results.json to " + folder);
  } catch (const std::exception& error) {
    QMessageBox::warning(this, "Cannot export the tables", error.what());
  }
}

void WorkbenchWindow::exportReport() {
  const auto analysis = session_->analysis();
  if (!analysis) return;
  const QString path = QFileDialog::getSaveFileName(this, "Export report", "report.pdf", "PDF (*.pdf)");
  if (path.isEmpty()) return;
  try {
    PdfReportOptions options;
    if (!session_->documentPath().isEmpty()) {
      options.protected_paths.push_back(session_->documentPath().toStdString());
    }
    WritePdfReport(*analysis, ResultsJson(*analysis), path.toStdString(), options);
    status_->setText("Wrote " + path);
  } catch (const std::exception& error) {
    QMessageBox::warning(this, "Cannot export the report", error.what());
  }
}

// --- Changes --------------------------------------------------------------------

void WorkbenchWindow::excludeSelected() {
  const auto wells = plate_panel_->selectedWells();
  if (wells.empty()) return;
  QStringList names;
  for (const auto& [plate, well] : wells) names << QString::fromStdString(well);
  ExclusionDialog dialog(names, this);
  if (dialog.exec() != QDialog::Accepted) return;
  session_->excludeWells(wells, dialog.reason());
}

void WorkbenchWindow::restoreSelected() { session_->restoreWells(plate_panel_->selectedWells()); }

// --- Window events ------------------------------------------------------------------

void WorkbenchWindow::closeEvent(QCloseEvent* event) {
  if (!maybeKeepChanges()) {
    event->ignore();
    return;
  }
  if (!session_->isModified()) session_->discardAutosave();
  QSettings settings;
  settings.setValue(kGeometryKey, saveGeometry());
  settings.setValue(kStateKey, saveState(kDockLayoutVersion));
  event->accept();
}

void WorkbenchWindow::dragEnterEvent(QDragEnterEvent* event) {
  if (event->mimeData()->hasUrls()) event->acceptProposedAction();
}

void WorkbenchWindow::dropEvent(QDropEvent* event) {
  QStringList files;
  for (const QUrl& url : event->mimeData()->urls()) {
    if (url.isLocalFile()) files << url.toLocalFile();
  }
  if (files.isEmpty()) return;
  event->acceptProposedAction();
  const SortedFiles sorted = SortFiles(files);
  if (!sorted.documents.isEmpty()) {
    openDocumentFile(sorted.documents.front());
  } else {
    newFromFiles(files);
  }
}

// --- Recent files ----------------------------------------------------------------------

void WorkbenchWindow::addRecent(const QString& path) {
  QSettings settings;
  QStringList recent = settings.value(kRecentKey).toStringList();
  const QString absolute = QFileInfo(path).absoluteFilePath();
  recent.removeAll(absolute);
  recent.prepend(absolute);
  while (recent.size() > kMaxRecentFiles) recent.removeLast();
  settings.setValue(kRecentKey, recent);
  rebuildRecentMenu();
}

void WorkbenchWindow::rebuildRecentMenu() {
  recent_menu_->clear();
  const QStringList recent = QSettings().value(kRecentKey).toStringList();
  for (int i = 0; i < recent.size(); ++i) {
    const QString path = recent[i];
    QAction* a = recent_menu_->addAction(QString("&%1 %2").arg(i + 1).arg(QFileInfo(path).fileName()), this,
                                         [this, path] { openDocumentFile(path); });
    a->setToolTip(path);
  }
  recent_menu_->setEnabled(!recent.isEmpty());
}

}  // namespace ratewell::gui
