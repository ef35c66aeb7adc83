#include "report/pdf_report.h"

#include <unistd.h>

#include <QApplication>
#include <QBuffer>
#include <QDateTime>
#include <QMarginsF>
#include <QPageLayout>
#include <QPageSize>
#include <QPainter>
#include <QPdfWriter>
#include <QPen>

#include <cstdlib>
#include <stdexcept>

#include "importers/file_io.h"
#include "report/detail/pdf_layout.h"
#include "report/detail/pdf_sections.h"
#include "report/results.h"

namespace ratewell {
namespace {

// Page geometry in millimetres (A4, 210 × 297).
constexpr double kMarginSideMm = 16.0;
constexpr double kMarginTopMm = 16.0;
constexpr double kMarginBottomMm = 20.0;  // room for the two footer lines
// Device units per inch. Qt Charts lay out text in screen pixels (96 per
// inch); drawing the PDF at the same resolution keeps a chart's fonts at
// their point size without rescaling. The output is vectors either way.
constexpr int kResolutionDpi = 96;

double MmToUnits(double mm) { return mm / 25.4 * kResolutionDpi; }

std::vector<std::string> ProtectedPaths(const Analysis& analysis, const PdfReportOptions& options) {
  std::vector<std::string> paths = analysis.request.plate_paths;
  paths.push_back(analysis.request.layout_path);
  if (!analysis.request.assay_path.empty()) paths.push_back(analysis.request.assay_path);
  paths.insert(paths.end(), options.protected_paths.begin(), options.protected_paths.end());
  return paths;
}

void CheckOptions(const PdfReportOptions& options) {
  if (options.trace_columns < 1 || options.trace_columns > 12) {
    throw std::invalid_argument("PdfReportOptions::trace_columns: expected 1 to 12");
  }
  if (options.trace_rows < 1 || options.trace_rows > 16) {
    throw std::invalid_argument("PdfReportOptions::trace_rows: expected 1 to 16");
  }
  if (options.title.empty()) throw std::invalid_argument("PdfReportOptions::title: expected a title");
}

}  // namespace

QApplication* EnsureGuiApplication() {
  if (QCoreApplication* existing = QCoreApplication::instance()) {
    if (auto* app = qobject_cast<QApplication*>(existing)) return app;
    throw std::runtime_error(
        "a QCoreApplication exists that is not a QApplication: charts cannot be drawn (create a "
        "QApplication instead)");
  }
  const bool has_display = !qEnvironmentVariableIsEmpty("DISPLAY") ||
                           !qEnvironmentVariableIsEmpty("WAYLAND_DISPLAY");
  if (qEnvironmentVariableIsEmpty("QT_QPA_PLATFORM") && !has_display) {
    qputenv("QT_QPA_PLATFORM", "offscreen");
  }
  // Qt warns on every start when the runtime folder is missing (a batch job,
  // a container); give it a private one under the temporary folder.
  if (qEnvironmentVariableIsEmpty("XDG_RUNTIME_DIR")) {
    std::error_code ec;
    const std::filesystem::path runtime =
        std::filesystem::temp_directory_path(ec) / ("ratewell-runtime-" + std::to_string(getuid()));
    if (!ec) {
      std::filesystem::create_directories(runtime, ec);
      std::filesystem::permissions(runtime, std::filesystem::perms::owner_all,
                                   std::filesystem::perm_options::replace, ec);
      if (!ec) qputenv("XDG_RUNTIME_DIR", QByteArray::fromStdString(runtime.string()));
    }
  }
  // Kept for the life of the program: Qt needs argc and argv to outlive it,
  // and destroying it at exit would race other static destructors.
  static int argc = 1;
  static char name[] = "ratewell";
  static char* argv[] = {name, nullptr};
  static QApplication* app = new QApplication(argc, argv);
  return app;
}

std::string RenderPdfReport(const Analysis& analysis, const nlohmann::json& results,
                            const PdfReportOptions& options) {
  CheckOptions(options);
  if (qobject_cast<QApplication*>(QCoreApplication::instance()) == nullptr) {
    throw std::runtime_error("the PDF report needs a QApplication (call EnsureGuiApplication first)");
  }
  QBuffer buffer;
  buffer.open(QIODevice::WriteOnly);
  QPdfWriter writer(&buffer);
  writer.setResolution(kResolutionDpi);
  writer.setPageLayout(QPageLayout(QPageSize(QPageSize::A4), QPageLayout::Portrait, QMarginsF(0, 0, 0, 0),
                                   QPageLayout::Millimeter));
  const QString version = QStringLiteral("ratewell ") + QString::fromLatin1(SoftwareVersion());
  writer.setTitle(QString::fromStdString(options.title));
  writer.setCreator(version);

  const QString date = options.date.empty()
                           ? QDateTime::currentDateTime().toString(QStringLiteral("yyyy-MM-dd HH:mm"))
                           : QString::fromStdString(options.date);
  const double page_w = MmToUnits(210.0);
  const double page_h = MmToUnits(297.0);
  const QRectF body(MmToUnits(kMarginSideMm), MmToUnits(kMarginTopMm), page_w - 2 * MmToUnits(kMarginSideMm),
                    page_h - MmToUnits(kMarginTopMm) - MmToUnits(kMarginBottomMm));

  detail::PageFlow flow(&writer, body);
  detail::ReportContext context{&analysis, &results, &options, date, version};
  detail::FlowJobSection(&flow, context);
  detail::FlowSettingsSection(&flow, context);
  detail::FlowKineticsSection(&flow, context);
  detail::FlowPlateMapSection(&flow, context);
  detail::FlowWellsSection(&flow, context);
  if (options.include_traces) detail::FlowTraceSection(&flow, context);

  QPainter painter;
  if (!painter.begin(&writer)) throw std::runtime_error("cannot start the PDF painter");
  const QString title = QString::fromStdString(options.title);
  const QString caution = QString::fromUtf8(kPdfReportCaution);
  auto decorate = [&](QPainter* p, int page, int pages) {
    const QColor ink(0x4a, 0x4a, 0x4a);
    p->setFont(detail::PdfFont(detail::PdfText::kFooter));
    p->setPen(ink);
    const double line = QFontMetricsF(p->font(), &writer).lineSpacing();
    const double top = body.bottom() + MmToUnits(4.0);
    QPen rule(QColor(0xb0, 0xb0, 0xb0));
    rule.setWidthF(0.5);
    p->setPen(rule);
    p->drawLine(QPointF(body.left(), top - MmToUnits(1.5)), QPointF(body.right(), top - MmToUnits(1.5)));
    p->setPen(ink);
    p->drawText(QRectF(body.left(), top, body.width(), line), Qt::AlignLeft | Qt::AlignVCenter, caution);
    p->drawText(QRectF(body.left(), top + line, body.width(), line), Qt::AlignLeft | Qt::AlignVCenter,
                version + QStringLiteral("  ·  ") + date);
    p->drawText(QRectF(body.left(), top + line, body.width(), line), Qt::AlignRight | Qt::AlignVCenter,
                QStringLiteral("page %1 of %2").arg(page + 1).arg(pages));
    if (page > 0) {
      p->drawText(QRectF(body.left(), MmToUnits(8.0), body.width(), line), Qt::AlignLeft | Qt::AlignVCenter,
                  title);
    }
  };
  flow.Render(&painter, [&writer]() { return writer.newPage(); }, decorate);
  painter.end();
  buffer.close();
  return std::string(buffer.data().constData(), static_cast<std::size_t>(buffer.data().size()));
}

void WritePdfReport(const Analysis& analysis, const nlohmann::json& results, const std::string& path,
                    const PdfReportOptions& options) {
  const std::vector<std::string> protected_paths = ProtectedPaths(analysis, options);
  // Checked first, so a refused path costs no rendering.
  RefuseToReplaceInput(path, protected_paths);
  const std::string bytes = RenderPdfReport(analysis, results, options);
  WriteFileAtomically(path, bytes, protected_paths);
}

}  // namespace ratewell
