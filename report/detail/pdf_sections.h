// The sections of the PDF report (report/pdf_report.h), each laid out into a
// PageFlow, and the number formats its tables use.
#pragma once

#include <string>

#include <QString>
#include <nlohmann/json.hpp>

#include "fitting/analysis.h"
#include "report/detail/pdf_layout.h"
#include "report/pdf_report.h"

namespace ratewell::detail {

// "%.4g" of a value; "n/a" when it is not finite.
QString FormatValue4(double value);
// "%.3g"; "n/a" when not finite.
QString FormatValue3(double value);
// A unit as written in the report: "uM/min" -> "µM/min", "uM" -> "µM".
QString DisplayUnit(const std::string& unit);
// "[lo, hi]" with FormatValue4, or "not determined: <reason>".
QString FormatInterval(const Interval& interval);

struct ReportContext {
  const Analysis* analysis = nullptr;
  const nlohmann::json* results = nullptr;
  const PdfReportOptions* options = nullptr;
  QString date;
  QString version;  // "ratewell 0.1.0"
};

void FlowJobSection(PageFlow* flow, const ReportContext& context);
void FlowSettingsSection(PageFlow* flow, const ReportContext& context);
void FlowKineticsSection(PageFlow* flow, const ReportContext& context);
void FlowPlateMapSection(PageFlow* flow, const ReportContext& context);
void FlowWellsSection(PageFlow* flow, const ReportContext& context);
void FlowTraceSection(PageFlow* flow, const ReportContext& context);

}  // namespace ratewell::detail
