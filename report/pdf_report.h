// The PDF report: one A4 document a lab can file with an analysis.
//
// Contents, in order:
//   1. the job: title, software version, date, plate files; the caution
//      sentence (kPdfReportCaution); every input with its SHA-256 and detected
//      format (from results.json, not hashed again); a summary of the wells
//      and the preferred model;
//   2. every setting used (results.json "settings", flattened to key paths);
//   3. kinetics: rate against [S] with the fitted curve of the preferred
//      model and its residual panel; the parameter table (value, unit, SE,
//      95 % interval and its method, or "not determined: <reason>") and the
//      derived quantities (kcat, kcat/Km, specific activity, Ki, …); the model
//      comparison (n, parameters, SSR, AICc, ΔAICc, Akaike weight), the
//      nested F tests and the sentence saying why the preferred model was
//      chosen. When the kinetic fit was not attempted these pages say why;
//   4. one plate map of the well rates per plate, with excluded and flagged
//      wells marked, and the plate's pathlength and background;
//   5. warnings, excluded wells with their reasons, and wells without a rate;
//   6. every well's trace with its rate window, 6 × 8 per page, sample wells
//      first, then blanks, no-substrate and standard wells (wells with no
//      data and empty wells are left out).
// Every page has a footer with the caution, the software version, the date
// and "page k of N". Text is real text (selectable, searchable) and charts
// are vectors (Qt Charts rendered onto the PDF painter).
//
// Numbers in the tables: parameter values, SEs and interval limits with 4
// significant digits (printf "%.4g"); SSR, AICc and ΔAICc with 4 significant
// digits; Akaike weights and p values with 3.
//
// The PDF needs a QApplication (Qt Charts are QGraphicsWidgets); a
// command-line program calls EnsureGuiApplication() first.
//
// Example:
//   EnsureGuiApplication();
//   Analysis analysis = RunAnalysis(request);
//   WritePdfReport(analysis, ResultsJson(analysis), "out/report.pdf");
#pragma once

#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "fitting/analysis.h"

// Declared here so that users of this header need no Qt include path (Qt on
// Debian is built without a Qt namespace).
class QApplication;

namespace ratewell {

// The sentence on the first page and in every footer.
inline constexpr const char* kPdfReportCaution =
    "These results support, and do not replace, the laboratory's approved procedures and review "
    "by a qualified person.";

struct PdfReportOptions {
  // The document title on the first page and in the PDF's metadata.
  std::string title = "Enzyme kinetics report";
  // The date printed on every page; "" : the local date and time when the
  // report is written ("2025-03-14 09:26").
  std::string date;
  // Small multiples of the traces: columns × rows per page. ≥ 1 each.
  int trace_columns = 6;
  int trace_rows = 8;
  // Leave the trace pages out (a short report).
  bool include_traces = true;
  // log10 [S] axis on the rate-against-[S] and residual charts.
  bool log_substrate_axis = false;
  // Files the report must never replace, besides the analysis' own inputs
  // (plates, layout, assay settings), which are always protected.
  std::vector<std::string> protected_paths;
};

// Writes the report to `path` atomically (importers/file_io.h): nothing is
// written until the whole document is ready, and a failure leaves any
// earlier file at `path` as it was. `results` is ResultsJson(analysis).
// Throws InputError when `path` is one of the inputs (or a protected path),
// std::invalid_argument for invalid options, std::runtime_error when no
// QApplication exists or the file cannot be written.
void WritePdfReport(const Analysis& analysis, const nlohmann::json& results, const std::string& path,
                    const PdfReportOptions& options = {});

// The report as bytes (what WritePdfReport writes).
std::string RenderPdfReport(const Analysis& analysis, const nlohmann::json& results,
                            const PdfReportOptions& options = {});

// Makes sure a QApplication exists and returns it. When there is none, one
// is created (and kept until the program ends); without a display (no
// DISPLAY or WAYLAND_DISPLAY, and QT_QPA_PLATFORM not set) it uses Qt's
// "offscreen" platform, so it works in a terminal, over ssh and in tests.
// Throws std::runtime_error when a QCoreApplication that is not a
// QApplication already exists (charts cannot be drawn then).
QApplication* EnsureGuiApplication();

}  // namespace ratewell
