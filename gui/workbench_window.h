// The workbench window: one analysis, four docked panels (plate, trace,
// rate against [S] with the parameters, audit), menus with keyboard
// shortcuts, undo/redo, recent files, drag-and-drop of plate files and
// documents, export of the report and tables, autosave and recovery.
#pragma once

#include <QMainWindow>
#include <QStringList>
#include <memory>

#include "fitting/analysis.h"

QT_BEGIN_NAMESPACE
class QAction;
class QDockWidget;
class QLabel;
class QMenu;
class QProgressBar;
QT_END_NAMESPACE

namespace ratewell::gui {

class AnalysisSession;
class AuditPanel;
class PlatePanel;
class SaturationPanel;
class TracePanel;

class WorkbenchWindow : public QMainWindow {
  Q_OBJECT

 public:
  explicit WorkbenchWindow(QWidget* parent = nullptr);
  ~WorkbenchWindow() override;

  AnalysisSession* session() const { return session_; }
  PlatePanel* platePanel() const { return plate_panel_; }
  TracePanel* tracePanel() const { return trace_panel_; }
  SaturationPanel* saturationPanel() const { return saturation_panel_; }
  AuditPanel* auditPanel() const { return audit_panel_; }

  // Opening without dialogs (command line, tests). Errors are shown in a
  // message box unless quiet, and returned as false.
  bool openDocumentFile(const QString& path, bool quiet = false);
  bool startAnalysis(const AnalysisRequest& request, bool quiet = false);
  // Offers autosaves of unsaved documents left by an earlier crash.
  void offerUnsavedRecovery();

  // The actions, for tests and keyboard use.
  QAction* undoAction() const { return undo_action_; }
  QAction* redoAction() const { return redo_action_; }
  QAction* excludeAction() const { return exclude_action_; }

 protected:
  void closeEvent(QCloseEvent* event) override;
  void dragEnterEvent(QDragEnterEvent* event) override;
  void dropEvent(QDropEvent* event) override;

 private:
  void buildActions();
  void buildDocks();
  void refreshAll();
  void refreshTrace();
  void refreshTitle();
  void newFromFiles(const QStringList& files);
  void openDocumentDialog();
  bool saveDocument(bool ask_for_name);
  void exportTables();
  void exportReport();
  void excludeSelected();
  void restoreSelected();
  bool maybeKeepChanges();
  void addRecent(const QString& path);
  void rebuildRecentMenu();
  QString currentWeighting() const;

  AnalysisSession* session_ = nullptr;
  PlatePanel* plate_panel_ = nullptr;
  TracePanel* trace_panel_ = nullptr;
  SaturationPanel* saturation_panel_ = nullptr;
  AuditPanel* audit_panel_ = nullptr;
  QList<QDockWidget*> docks_;
  QMenu* recent_menu_ = nullptr;
  QAction* undo_action_ = nullptr;
  QAction* redo_action_ = nullptr;
  QAction* exclude_action_ = nullptr;
  QAction* restore_action_ = nullptr;
  QAction* save_action_ = nullptr;
  QProgressBar* progress_ = nullptr;
  QLabel* status_ = nullptr;
};

}  // namespace ratewell::gui
