// The workbench window driven as a person would: open the demo plates, set
// a well aside, undo, drag a rate window, save and reopen.
#include <QAction>
#include <QApplication>
#include <QChart>
#include <QComboBox>
#include <QDialogButtonBox>
#include <QLineEdit>
#include <QPushButton>
#include <QSettings>
#include <QStandardPaths>
#include <QTableWidget>
#include <QTemporaryDir>
#include <QTimer>
#include <QUndoStack>
#include <QtTest>
#include <cmath>
#include <memory>

#include "charts/charts.h"
#include "gui/analysis_session.h"
#include "gui/audit_panel.h"
#include "gui/dialogs.h"
#include "gui/plate_panel.h"
#include "gui/saturation_panel.h"
#include "gui/trace_panel.h"
#include "gui/workbench_window.h"
#include "session/autosave.h"

using namespace ratewell;
using namespace ratewell::gui;

namespace {

// A refit and the full recomputation from the saved document run the same
// code on the same numbers; only the order of floating-point work may
// differ between the two paths.
constexpr double kSameComputationRelTolerance = 1e-9;
// Longest wait for the worker (a slow machine shared with other builds).
constexpr int kWorkerTimeoutMs = 300000;

QString DemoDir(const char* name) {
  return QString(RATEWELL_SOURCE_DIR) + "/demo-plates/" + name;
}

AnalysisRequest Mut7Request() {
  const QString dir = DemoDir("mut7-mutase");
  AnalysisRequest request;
  request.plate_paths = {(dir + "/mut7_wide.txt").toStdString()};
  request.layout_path = (dir + "/layout.csv").toStdString();
  request.assay_path = (dir + "/ASSAY.json").toStdString();
  // Fast intervals: the interval method is not what these tests look at.
  request.interval_method = IntervalMethod::kAsymptotic;
  return request;
}

double Parameter(const Analysis& analysis, const char* name) {
  const KineticFit* fit = analysis.kinetics.choice.Preferred();
  if (!fit || !fit->Find(name)) return std::nan("");
  return fit->Find(name)->value;
}

const WellRate* Well(const Analysis& analysis, const std::string& name) {
  for (const WellRate& w : analysis.plate_rates.front().wells) {
    if (w.name == name) return &w;
  }
  return nullptr;
}

QPointF WellCentre(PlateMapView* map, const PlateGeometry& geometry, int well) {
  const PlateMapGeometry g = LayOutPlateMap(QRectF(map->rect()).adjusted(4, 4, -4, -4), geometry, {});
  return g.well_centres[static_cast<std::size_t>(well)];
}

}  // namespace

class WorkbenchTest : public QObject {
  Q_OBJECT

 private slots:
  void initTestCase() {
    QStandardPaths::setTestModeEnabled(true);
    // Recent files and the dock layout go into the scratch folder, not the
    // user's settings.
    QSettings::setPath(QSettings::NativeFormat, QSettings::UserScope, dir_.path());
    QCoreApplication::setOrganizationName("ratewell-tests");
    QCoreApplication::setApplicationName("workbench-test");
  }

  void init() {
    window_ = std::make_unique<WorkbenchWindow>();
    window_->resize(1400, 900);
    window_->show();
    QVERIFY(QTest::qWaitForWindowExposed(window_.get()));
    window_->session()->setAutosaveFolder(dir_.path());
    QVERIFY(window_->startAnalysis(Mut7Request(), /*quiet=*/true));
    QVERIFY(window_->session()->waitUntilIdle(kWorkerTimeoutMs));
  }

  void cleanup() {
    window_->session()->discardAutosave();
    window_.reset();
  }

  void opensTheDemoPlatesStraightIntoTheAnalysis() {
    const auto analysis = window_->session()->analysis();
    QVERIFY(analysis);
    QCOMPARE(analysis->plates.front().geometry.num_wells(), 96);
    QVERIFY(analysis->kinetics.choice.Preferred() != nullptr);
    QCOMPARE(window_->auditPanel()->table()->rowCount(), 1);
    QVERIFY(window_->saturationPanel()->parameterTable()->rowCount() >= 2);
    QCOMPARE(window_->saturationPanel()->parameterTable()->item(0, 0)->text(), QString("Vmax"));
  }

  void excludingAWellChangesKmAndGrowsTheAudit() {
    AnalysisSession* session = window_->session();
    const auto before = session->analysis();
    const double km_before = Parameter(*before, "Km");
    QVERIFY(std::isfinite(km_before));

    // Click A03 on the map, press Ctrl+E, choose a reason, accept.
    PlateMapView* map = window_->platePanel()->map();
    const PlateGeometry& geometry = before->plates.front().geometry;
    QTest::mouseClick(map, Qt::LeftButton, {}, WellCentre(map, geometry, 2).toPoint());
    QCOMPARE(window_->platePanel()->selectedWells().size(), std::size_t{1});
    QCOMPARE(window_->platePanel()->selectedWells().front().second, std::string("A03"));
    bool dialog_seen = false;
    QTimer::singleShot(0, this, [&] {
      auto* dialog = qobject_cast<ExclusionDialog*>(QApplication::activeModalWidget());
      if (!dialog) return;
      dialog_seen = true;
      auto* box = dialog->findChild<QComboBox*>();
      box->setCurrentText("pipetting error");
      dialog->findChild<QDialogButtonBox*>()->button(QDialogButtonBox::Ok)->click();
    });
    window_->excludeAction()->trigger();
    QVERIFY(dialog_seen);
    QVERIFY(session->isBusy() || session->analysis() != before);  // the refit did not block the click
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));

    const auto after = session->analysis();
    QVERIFY(Well(*after, "A03")->excluded);
    QCOMPARE(QString::fromStdString(Well(*after, "A03")->exclusion_reason), QString("pipetting error"));
    const double km_after = Parameter(*after, "Km");
    QVERIFY2(std::abs(km_after - km_before) > 1e-6 * km_before,
             qPrintable(QString("Km %1 -> %2").arg(km_before).arg(km_after)));
    QCOMPARE(window_->auditPanel()->table()->rowCount(), 2);
    QCOMPARE(window_->auditPanel()->table()->item(1, 4)->text(), QString("pipetting error"));
    QVERIFY(window_->isWindowModified());
  }

  void undoRestoresTheEarlierNumbersExactly() {
    AnalysisSession* session = window_->session();
    const double km_before = Parameter(*session->analysis(), "Km");
    const double vmax_before = Parameter(*session->analysis(), "Vmax");
    session->excludeWells({{0, "B05"}, {0, "C05"}}, "outlier confirmed by repeat");
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    const double km_excluded = Parameter(*session->analysis(), "Km");
    QVERIFY(km_excluded != km_before);

    window_->undoAction()->trigger();  // Ctrl+Z
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    QCOMPARE(Parameter(*session->analysis(), "Km"), km_before);  // exact, not approximately
    QCOMPARE(Parameter(*session->analysis(), "Vmax"), vmax_before);
    QVERIFY(!Well(*session->analysis(), "B05")->excluded);
    // Undo is recorded, not erased: created, 2 exclusions, 2 restores.
    QCOMPARE(session->document().audit().size(), std::size_t{5});
    QCOMPARE(session->document().audit().back().change->reason, std::string("undo"));
    QVERIFY(session->document().Verify().intact);

    window_->redoAction()->trigger();
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    QCOMPARE(Parameter(*session->analysis(), "Km"), km_excluded);
  }

  void draggingTheWindowEdgeChangesThatWellsRate() {
    AnalysisSession* session = window_->session();
    const auto before = session->analysis();
    const WellRate* a05 = Well(*before, "A05");
    QVERIFY(a05 && a05->HasRate());
    window_->platePanel()->map()->setSelection({a05->well}, a05->well);
    QApplication::processEvents();
    TraceChartView* view = window_->tracePanel()->traceView();
    QVERIFY(view->window().has_value());
    const auto [start, end] = *view->window();
    QChart* chart = view->chart();
    // Drag the end edge to 40 % of the window.
    const double new_end = start + 0.4 * (end - start);
    const QPoint from = view->mapFromScene(chart->mapToPosition(QPointF(end, 0.0)));
    const QPoint to = view->mapFromScene(chart->mapToPosition(QPointF(new_end, 0.0)));
    const int y = view->mapFromScene(chart->plotArea().center()).y();
    QTest::mousePress(view->viewport(), Qt::LeftButton, {}, QPoint(from.x(), y));
    QTest::mouseMove(view->viewport(), QPoint((from.x() + to.x()) / 2, y));
    QTest::mouseMove(view->viewport(), QPoint(to.x(), y));
    QTest::mouseRelease(view->viewport(), Qt::LeftButton, {}, QPoint(to.x(), y));
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));

    const auto after = session->analysis();
    QCOMPARE(after->request.windows.size(), std::size_t{1});
    const WindowOverride& w = after->request.windows.front();
    QCOMPARE(w.well, std::string("A05"));
    const double first_read = before->plates.front().at(0, a05->well).time_min.front();
    // One pixel of the trace chart is well under 0.2 min on a 30 min axis.
    constexpr double kPixelToleranceMin = 0.2;
    QVERIFY2(std::abs(w.end_min - (new_end - first_read)) < kPixelToleranceMin,
             qPrintable(QString("end %1, expected %2").arg(w.end_min).arg(new_end - first_read)));
    const WellRate* changed = Well(*after, "A05");
    QVERIFY(changed->estimate.window_end_min < end - 0.3 * (end - start));
    QVERIFY(changed->rate_uM_per_min != a05->rate_uM_per_min);
    QCOMPARE(session->document().Changes().back().kind, ChangeKind::kWindow);
  }

  void saveAndLoadRoundTripEveryManualChange() {
    AnalysisSession* session = window_->session();
    session->excludeWells({{0, "A02"}}, "bubble or meniscus artefact");
    session->setWindow(0, "A06", std::make_pair(1.0, 8.0));
    session->setWindow(0, "B06", std::make_pair(0.5, 12.0));
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    session->setWindow(0, "B06", std::nullopt);
    session->setModel("michaelis-menten");
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    session->setWeighting("relative");
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    session->setIntervalMethod("profile");
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    session->excludeWells({{0, "C01"}}, "wrong well filled");
    session->restoreWells({{0, "C01"}});
    QVERIFY(session->waitUntilIdle(kWorkerTimeoutMs));
    const std::vector<ManualChange> changes = session->document().Changes();
    QCOMPARE(changes.size(), std::size_t{9});

    const QString path = dir_.filePath("round-trip.ratewell");
    session->saveAs(path);
    QVERIFY(!window_->isWindowModified());
    const auto saved = session->analysis();

    WorkbenchWindow reopened;
    QVERIFY(reopened.openDocumentFile(path, /*quiet=*/true));
    QVERIFY(reopened.session()->waitUntilIdle(kWorkerTimeoutMs));
    const auto loaded = reopened.session()->analysis();
    QVERIFY(reopened.session()->document() == session->document());
    QVERIFY(reopened.session()->documentWarnings().isEmpty());
    QCOMPARE(loaded->request.exclusions, saved->request.exclusions);
    QCOMPARE(loaded->request.windows, saved->request.windows);
    QCOMPARE(loaded->request.model, std::string("michaelis-menten"));
    QVERIFY(loaded->request.weighting == Weighting::kRelative);
    QCOMPARE(loaded->kinetics.options.weighting, Weighting::kRelative);
    QVERIFY(loaded->request.interval_method == IntervalMethod::kProfile);
    for (const char* name : {"Vmax", "Km"}) {
      const double expected = Parameter(*saved, name);
      QVERIFY2(std::abs(Parameter(*loaded, name) - expected) <= kSameComputationRelTolerance * std::abs(expected),
               name);
    }
    QCOMPARE(reopened.auditPanel()->table()->rowCount(), 10);
  }

  void keyboardMovesAndExtendsTheSelection() {
    PlateMapView* map = window_->platePanel()->map();
    map->setFocus();
    map->setSelection({0}, 0);
    QTest::keyClick(map, Qt::Key_Right);
    QCOMPARE(map->currentWell(), 1);
    QCOMPARE(map->selection(), std::set<int>({1}));
    QTest::keyClick(map, Qt::Key_Down, Qt::ShiftModifier);
    QCOMPARE(map->selection(), std::set<int>({1, 13}));
    QTest::keyClick(map, Qt::Key_A, Qt::ControlModifier);
    QCOMPARE(static_cast<int>(map->selection().size()), 96);
    QTest::keyClick(map, Qt::Key_Escape);
    QVERIFY(map->selection().empty());
  }

  void aRowLetterSelectsTheWholeRow() {
    PlateMapView* map = window_->platePanel()->map();
    const PlateGeometry& geometry = window_->session()->analysis()->plates.front().geometry;
    const PlateMapGeometry g = LayOutPlateMap(QRectF(map->rect()).adjusted(4, 4, -4, -4), geometry, {});
    const QPointF b01 = g.well_centres[12];
    QTest::mouseClick(map, Qt::LeftButton, {},
                      QPoint(static_cast<int>(g.grid_rect.left() - g.well_radius), static_cast<int>(b01.y())));
    QCOMPARE(static_cast<int>(map->selection().size()), 12);
    QCOMPARE(*map->selection().begin(), 12);
  }

  void unsavedChangesAreAutosavedAndOfferedBack() {
    AnalysisSession* session = window_->session();
    session->excludeWells({{0, "A04"}}, "signal saturated");
    QVERIFY(session->autosaveNow());
    const QString autosave = session->autosavePath();
    QVERIFY(QFile::exists(autosave));
    const auto found = FindUnsavedRecoveries(dir_.path().toStdString());
    QVERIFY(!found.empty());
    QCOMPARE(QString::fromStdString(found.front().autosave_path), autosave);
    QCOMPARE(found.front().audit_entries, 2);

    WorkbenchWindow recovered;
    recovered.session()->openRecovered(autosave);
    QVERIFY(recovered.session()->waitUntilIdle(kWorkerTimeoutMs));
    QVERIFY(Well(*recovered.session()->analysis(), "A04")->excluded);
    QVERIFY(recovered.session()->isModified());

    session->saveAs(dir_.filePath("kept.ratewell"));
    QVERIFY(!QFile::exists(autosave));  // a save removes the autosave
  }

  void theImportDialogPreviewsWhatWasDetected() {
    const QString dir = DemoDir("cbx-inhibitor-series");
    const SortedFiles files = SortFiles({dir + "/cbx214_grid.csv", dir + "/layout.csv", dir + "/ASSAY.json"});
    QCOMPARE(files.plates.size(), 1);
    QVERIFY(files.layout.endsWith("layout.csv"));
    QVERIFY(files.assay.endsWith("ASSAY.json"));
    ImportDialog dialog(files);
    const QString preview = dialog.previewText();
    QVERIFY2(preview.contains("384 wells (16 × 24)"), qPrintable(preview));
    QVERIFY2(preview.contains("decimal comma"), qPrintable(preview));
    QVERIFY(dialog.findChild<QDialogButtonBox*>()->button(QDialogButtonBox::Ok)->isEnabled());
    QCOMPARE(dialog.request().plate_paths.size(), std::size_t{1});
  }

 private:
  QTemporaryDir dir_;
  std::unique_ptr<WorkbenchWindow> window_;
};

QTEST_MAIN(WorkbenchTest)
#include "workbench_test.moc"
