// ratewell-gui [ANALYSIS.ratewell]
// ratewell-gui PLATE_FILE... --layout LAYOUT [--assay ASSAY.json]
#include <QApplication>
#include <QCommandLineParser>
#include <QDir>
#include <QDockWidget>
#include <QFileInfo>
#include <QTimer>
#include <algorithm>
#include <cstdio>
#include <set>

#include "gui/analysis_session.h"
#include "gui/plate_panel.h"
#include "gui/workbench_window.h"

namespace {

// Writes the window and each panel as PNG files into folder (for checking
// the look without a display: QT_QPA_PLATFORM=offscreen).
void SaveScreenshots(ratewell::gui::WorkbenchWindow* window, const QString& folder) {
  QDir().mkpath(folder);
  window->grab().save(folder + "/workbench.png");
  for (QDockWidget* dock : window->findChildren<QDockWidget*>()) {
    dock->grab().save(folder + "/" + dock->objectName().remove("Dock") + ".png");
  }
}

}  // namespace

int main(int argc, char** argv) {
  QApplication app(argc, argv);
  QApplication::setOrganizationName("ratewell");
  QApplication::setApplicationName("ratewell");
  QApplication::setApplicationDisplayName("ratewell workbench");

  QCommandLineParser parser;
  parser.setApplicationDescription("The ratewell workbench: initial rates and kinetic fits of plate assays.");
  parser.addHelpOption();
  parser.addPositionalArgument("files", "An analysis (*.ratewell), or plate files with --layout.",
                               "[ANALYSIS.ratewell | PLATE_FILE...]");
  const QCommandLineOption layout_option("layout", "Layout of the plates (CSV).", "LAYOUT");
  const QCommandLineOption assay_option("assay", "Assay settings (JSON).", "ASSAY");
  const QCommandLineOption screenshot_option(
      "screenshot", "Save PNG pictures of the window and its panels into DIR once the analysis is shown, "
      "then quit.", "DIR");
  parser.addOptions({layout_option, assay_option, screenshot_option});
  parser.process(app);

  ratewell::gui::WorkbenchWindow window;
  window.show();
  const QStringList files = parser.positionalArguments();
  const bool screenshot = parser.isSet(screenshot_option);
  bool opened = false;
  if (files.size() == 1 && files.front().endsWith(".ratewell")) {
    opened = window.openDocumentFile(files.front(), screenshot);
  } else if (!files.isEmpty()) {
    if (!parser.isSet(layout_option)) {
      std::fprintf(stderr, "ratewell-gui: plate files need --layout LAYOUT\n");
      return 2;
    }
    ratewell::AnalysisRequest request;
    for (const QString& f : files) request.plate_paths.push_back(QFileInfo(f).absoluteFilePath().toStdString());
    request.layout_path = QFileInfo(parser.value(layout_option)).absoluteFilePath().toStdString();
    if (parser.isSet(assay_option)) {
      request.assay_path = QFileInfo(parser.value(assay_option)).absoluteFilePath().toStdString();
    }
    opened = window.startAnalysis(request, screenshot);
  } else if (!screenshot) {
    QTimer::singleShot(0, &window, [&window] { window.offerUnsavedRecovery(); });
  }

  if (screenshot) {
    const QString folder = parser.value(screenshot_option);
    auto* session = window.session();
    if (opened && !session->waitUntilIdle(10 * 60 * 1000)) return 1;
    // Show a trace: the first sample well with a rate, and its row.
    if (auto analysis = session->analysis()) {
      const auto& rates = analysis->plate_rates.front();
      for (const auto& w : rates.wells) {
        if (w.role == ratewell::WellRole::kSample && w.HasRate() && w.substrate_uM > 0) {
          const int columns = analysis->plates.front().geometry.columns;
          std::set<int> row;
          for (int c = 0; c < std::min(columns, 4); ++c) row.insert((w.well / columns) * columns + c);
          row.insert(w.well);
          window.platePanel()->map()->setSelection(row, w.well);
          break;
        }
      }
    }
    QApplication::processEvents();
    SaveScreenshots(&window, folder);
    window.session()->discardAutosave();
    return 0;
  }
  return app.exec();
}
