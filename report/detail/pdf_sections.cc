#include "report/detail/pdf_sections.h"

#include <QChart>
#include <QPainter>

#include <algorithm>
#include <cmath>
#include <memory>
#include <set>

#include "charts/charts.h"

namespace ratewell::detail {
namespace {

QString Q(const std::string& text) { return QString::fromStdString(text); }
QString Q(std::string_view text) { return QString::fromUtf8(text.data(), static_cast<qsizetype>(text.size())); }
QString Q(const char* text) { return QString::fromUtf8(text); }

// The last part of a path ("plate.csv"); the whole path is on page 1.
QString FileName(const std::string& path) {
  const QString text = Q(path);
  const qsizetype slash = std::max(text.lastIndexOf(QLatin1Char('/')), text.lastIndexOf(QLatin1Char('\\')));
  return slash >= 0 ? text.mid(slash + 1) : text;
}

QString JsonScalarText(const nlohmann::json& value) {
  if (value.is_null()) return QStringLiteral("null");
  if (value.is_string()) return Q(value.get<std::string>());
  if (value.is_boolean()) return value.get<bool>() ? QStringLiteral("true") : QStringLiteral("false");
  if (value.is_number_integer() || value.is_number_unsigned()) return Q(value.dump());
  if (value.is_number()) return FormatValue4(value.get<double>()).replace(QStringLiteral("n/a"), Q(value.dump()));
  return Q(value.dump());
}

void FlattenJson(const nlohmann::json& value, const std::string& prefix,
                 std::vector<std::vector<QString>>* rows) {
  if (value.is_object()) {
    if (value.empty()) rows->push_back({Q(prefix), QStringLiteral("{}")});
    for (auto it = value.begin(); it != value.end(); ++it) {
      FlattenJson(it.value(), prefix.empty() ? it.key() : prefix + "." + it.key(), rows);
    }
    return;
  }
  if (value.is_array()) {
    QStringList items;
    for (const nlohmann::json& item : value) {
      items.push_back(item.is_structured() ? Q(item.dump()) : JsonScalarText(item));
    }
    rows->push_back({Q(prefix), QStringLiteral("[") + items.join(QStringLiteral(", ")) + QStringLiteral("]")});
    return;
  }
  rows->push_back({Q(prefix), JsonScalarText(value)});
}

// Flags that call for a look. "lag" only says a coupling lag was resolved,
// which is expected in a coupled assay, so it does not mark a well.
bool HasAttentionFlag(const WellRate& w) { return PlateMapFlagged(w, PlateMapOptions()); }

QString FlagList(const WellRate& w) {
  QStringList flags;
  for (const std::string& f : w.flags) flags.push_back(Q(f));
  return flags.join(QStringLiteral(", "));
}

QString ConcentrationText(double uM) { return std::isfinite(uM) ? FormatValue4(uM) : QStringLiteral("—"); }

int RoleOrder(WellRole role) {
  switch (role) {
    case WellRole::kSample:
      return 0;
    case WellRole::kBlank:
      return 1;
    case WellRole::kNoSubstrate:
      return 2;
    case WellRole::kStandard:
      return 3;
    case WellRole::kEmpty:
      return 4;
  }
  return 4;
}

void FlowBullets(PageFlow* flow, const std::vector<std::string>& items) {
  for (const std::string& item : items) FlowParagraph(flow, QStringLiteral("•  ") + Q(item), PdfText::kBody);
}

// A drawn chart block of `height` in the flow.
void FlowChart(PageFlow* flow, double height, std::function<QChart*()> make) {
  const QRectF rect = flow->Reserve(height);
  flow->Draw([rect, make](QPainter* p) { RenderChart(p, make(), rect); });
}

}  // namespace

QString FormatValue4(double value) {
  if (!std::isfinite(value)) return QStringLiteral("n/a");
  return QString::asprintf("%.4g", value);
}

QString FormatValue3(double value) {
  if (!std::isfinite(value)) return QStringLiteral("n/a");
  return QString::asprintf("%.3g", value);
}

QString DisplayUnit(const std::string& unit) {
  QString text = Q(unit);
  text.replace(QStringLiteral("uM"), QStringLiteral("µM"));
  text.replace(QStringLiteral("umol"), QStringLiteral("µmol"));
  return text;
}

QString FormatInterval(const Interval& interval) {
  if (!interval.determined) return QStringLiteral("not determined: ") + Q(interval.reason);
  return QStringLiteral("[") + FormatValue4(interval.lower) + QStringLiteral(", ") +
         FormatValue4(interval.upper) + QStringLiteral("]");
}

// ---------------------------------------------------------------------------

void FlowJobSection(PageFlow* flow, const ReportContext& context) {
  const Analysis& a = *context.analysis;
  const nlohmann::json& results = *context.results;
  FlowHeading(flow, Q(context.options->title), PdfText::kTitle);
  QStringList plates;
  for (const std::string& p : a.request.plate_paths) plates.push_back(Q(p));
  FlowParagraph(flow, context.version + QStringLiteral("  ·  written ") + context.date);
  FlowParagraph(flow, (plates.size() == 1 ? QStringLiteral("Plate file: ") : QStringLiteral("Plate files: ")) +
                          plates.join(QStringLiteral(", ")));
  FlowParagraph(flow, QStringLiteral("Layout: ") + Q(a.request.layout_path) + QStringLiteral("   Assay settings: ") +
                          (a.request.assay_path.empty() ? QStringLiteral("defaults (no file)") : Q(a.request.assay_path)));
  FlowBoxedParagraph(flow, QString::fromUtf8(kPdfReportCaution), PdfText::kBody);

  FlowHeading(flow, QStringLiteral("Inputs"), PdfText::kHeading, flow->LineHeight(PdfText::kTable) * 3);
  std::vector<std::vector<QString>> rows;
  if (results.contains("inputs") && results["inputs"].is_array()) {
    for (const nlohmann::json& input : results["inputs"]) {
      rows.push_back({Q(input.value("kind", std::string())), Q(input.value("path", std::string())),
                      Q(input.value("format", std::string())), Q(input.value("sha256", std::string()))});
    }
  }
  FlowTable(flow,
            {{QStringLiteral("kind"), 0.08}, {QStringLiteral("path"), 0.27},
             {QStringLiteral("format"), 0.11}, {QStringLiteral("SHA-256"), 0.54, Qt::AlignLeft, true}},
            rows);

  FlowHeading(flow, QStringLiteral("Summary"), PdfText::kHeading, flow->LineHeight(PdfText::kTable) * 3);
  int wells = 0, samples = 0, excluded = 0, blanks = 0;
  for (const PlateRates& p : a.plate_rates) {
    for (const WellRate& w : p.wells) {
      ++wells;
      if (w.role == WellRole::kSample) ++samples;
      if (w.role == WellRole::kBlank) ++blanks;
      if (w.excluded) ++excluded;
    }
  }
  std::vector<std::vector<QString>> summary = {
      {QStringLiteral("plates"), QString::number(a.plates.size())},
      {QStringLiteral("wells with data"), QString::number(wells)},
      {QStringLiteral("sample wells"), QStringLiteral("%1 (%2 with a usable rate, %3 without a rate)")
                                            .arg(samples)
                                            .arg(a.UsableSampleWells())
                                            .arg(a.FailedSampleWells())},
      {QStringLiteral("blank wells"), QString::number(blanks)},
      {QStringLiteral("excluded wells"), QString::number(excluded)},
      {QStringLiteral("warnings"), QString::number(a.warnings.size())},
  };
  const KineticAnalysis& k = a.kinetics;
  if (!k.attempted) {
    summary.push_back({QStringLiteral("kinetic fit"), QStringLiteral("not attempted: ") + Q(k.reason)});
  } else if (const KineticFit* fit = k.choice.Preferred()) {
    summary.push_back({QStringLiteral("preferred model"), Q(KineticModelToString(fit->model)) +
                                                              QStringLiteral(" (%1 points)").arg(fit->n)});
    for (const ParameterEstimate& p : fit->parameters) {
      if (p.fixed) continue;
      summary.push_back({p.name.empty() ? QString() : Q(p.name),
                         FormatValue4(p.value) + QStringLiteral(" ") + DisplayUnit(p.unit) +
                             QStringLiteral(", %1 % interval ").arg(p.ci.level * 100.0, 0, 'g', 3) +
                             FormatInterval(p.ci)});
    }
  } else {
    summary.push_back({QStringLiteral("kinetic fit"), QStringLiteral("no usable fit: ") + Q(k.choice.reason)});
  }
  FlowTable(flow, {{QStringLiteral("item"), 0.25}, {QStringLiteral("value"), 0.75}}, summary);
}

void FlowSettingsSection(PageFlow* flow, const ReportContext& context) {
  const nlohmann::json& results = *context.results;
  FlowHeading(flow, QStringLiteral("Settings used"), PdfText::kHeading, flow->LineHeight(PdfText::kTable) * 4);
  FlowParagraph(flow,
                QStringLiteral("Every setting of the analysis, defaults included (as in results.json). "
                               "Concentrations in µM, times in minutes."),
                PdfText::kSmall);
  std::vector<std::vector<QString>> rows;
  if (results.contains("settings")) FlattenJson(results["settings"], "", &rows);
  const KineticAnalysis& k = context.analysis->kinetics;
  rows.push_back({QStringLiteral("kinetics.requested_model"), Q(k.requested_model)});
  rows.push_back({QStringLiteral("kinetics.interval_method"), Q(IntervalMethodToString(k.options.interval_method))});
  rows.push_back({QStringLiteral("kinetics.weighting"), Q(WeightingToString(k.options.weighting))});
  rows.push_back({QStringLiteral("kinetics.loss"), Q(RobustLossToString(k.options.loss))});
  FlowTable(flow, {{QStringLiteral("setting"), 0.42}, {QStringLiteral("value"), 0.58}}, rows);
}

void FlowKineticsSection(PageFlow* flow, const ReportContext& context) {
  const Analysis& a = *context.analysis;
  const KineticAnalysis& k = a.kinetics;
  const KineticFit* preferred = k.attempted ? k.choice.Preferred() : nullptr;
  flow->NewPage();
  FlowHeading(flow, QStringLiteral("Kinetics"));
  if (!k.attempted) {
    FlowBoxedParagraph(flow, QStringLiteral("The kinetic fit was not attempted: ") + Q(k.reason) +
                                 QStringLiteral(" No kinetic parameters are reported."));
  } else {
    FlowParagraph(flow, QStringLiteral("Model asked for: %1. %2 points (sample wells with a usable rate, "
                                       "not excluded). Weighting: %3. Intervals: %4 at %5 %.")
                            .arg(Q(k.requested_model))
                            .arg(k.data.points.size())
                            .arg(Q(WeightingToString(k.options.weighting)))
                            .arg(Q(IntervalMethodToString(k.options.interval_method)))
                            .arg(k.options.confidence_level * 100.0, 0, 'g', 3));
  }

  const bool any_rates = !InhibitorLevels(a).empty();
  if (any_rates) {
    const double h = flow->body().height();
    SaturationChartOptions so;
    so.log_substrate_axis = context.options->log_substrate_axis;
    FlowChart(flow, h * 0.40, [&a, preferred, so]() { return MakeSaturationChart(a, preferred, so); });
    if (preferred != nullptr && !preferred->residuals.empty()) {
      ResidualChartOptions ro;
      ro.log_substrate_axis = context.options->log_substrate_axis;
      FlowChart(flow, h * 0.19, [&a, preferred, ro]() { return MakeResidualChart(a, *preferred, ro); });
    }
    FlowParagraph(flow,
                  QStringLiteral("Points: initial rates of the sample wells with their 95 % intervals; hollow "
                                 "squares: excluded wells (not fitted). Lines: the preferred model at each "
                                 "inhibitor level."),
                  PdfText::kSmall);
  } else {
    FlowParagraph(flow, QStringLiteral("No sample well has a rate and a substrate concentration: nothing to plot."));
  }
  if (!k.attempted) return;

  if (preferred == nullptr) {
    FlowBoxedParagraph(flow, QStringLiteral("No candidate fit is usable. ") + Q(k.choice.reason));
  } else {
    const ModelDescription& d = DescribeModel(preferred->model);
    FlowHeading(flow, QStringLiteral("Parameters: ") + Q(d.id), PdfText::kSubheading,
                flow->LineHeight(PdfText::kTable) * 3);
    FlowParagraph(flow, Q(d.equation) + QStringLiteral("   (n = %1, residual SD %2)")
                                            .arg(preferred->n)
                                            .arg(FormatValue4(preferred->residual_sd)),
                  PdfText::kSmall);
    const double level = k.options.confidence_level * 100.0;
    const QString interval_header = QStringLiteral("%1 % interval").arg(level, 0, 'g', 3);
    auto parameter_rows = [](const std::vector<ParameterEstimate>& list) {
      std::vector<std::vector<QString>> rows;
      for (const ParameterEstimate& p : list) {
        QStringList notes;
        if (p.fixed) notes.push_back(QStringLiteral("fixed"));
        if (p.at_bound) notes.push_back(QStringLiteral("at a bound"));
        if (!p.ci.note.empty()) notes.push_back(Q(p.ci.note));
        // "specific_activity" is the key in the files; people read words.
        rows.push_back({Q(p.name).replace(QLatin1Char('_'), QLatin1Char(' ')), FormatValue4(p.value),
                        DisplayUnit(p.unit),
                        p.se_determined ? FormatValue4(p.se) : QStringLiteral("not determined: ") + Q(p.se_reason),
                        FormatInterval(p.ci), Q(IntervalMethodToString(p.ci.method)),
                        notes.join(QStringLiteral("; "))});
      }
      return rows;
    };
    const std::vector<TableColumn> columns = {
        {QStringLiteral("parameter"), 0.12}, {QStringLiteral("value"), 0.10, Qt::AlignRight},
        {QStringLiteral("unit"), 0.10},      {QStringLiteral("SE"), 0.14, Qt::AlignRight},
        {interval_header, 0.22},             {QStringLiteral("method"), 0.10},
        {QStringLiteral("note"), 0.22}};
    FlowTable(flow, columns, parameter_rows(preferred->parameters));
    FlowHeading(flow, QStringLiteral("Derived quantities"), PdfText::kSubheading, flow->LineHeight(PdfText::kTable) * 2);
    if (preferred->derived.empty()) {
      FlowParagraph(flow,
                    QStringLiteral("None computed: kcat, kcat/Km and the specific activity need the enzyme "
                                   "amount (ASSAY.json \"enzyme\" or the layout's enzyme column)."));
    } else {
      FlowTable(flow, columns, parameter_rows(preferred->derived));
    }
    if (!preferred->warnings.empty()) {
      FlowHeading(flow, QStringLiteral("Fit warnings"), PdfText::kSubheading, flow->LineHeight(PdfText::kBody) * 2);
      std::vector<std::string> items;
      for (const FitWarning& w : preferred->warnings) items.push_back(w.code + ": " + w.message);
      FlowBullets(flow, items);
    }
  }

  // Model comparison.
  const ModelChoice& choice = k.choice;
  if (!choice.fits.empty()) {
    FlowHeading(flow, QStringLiteral("Model comparison"), PdfText::kSubheading, flow->LineHeight(PdfText::kTable) * 4);
    std::vector<std::vector<QString>> rows;
    for (std::size_t i = 0; i < choice.fits.size(); ++i) {
      const KineticFit& f = choice.fits[i];
      const bool usable = f.summary.IsSolutionUsable();
      const double delta = i < choice.delta_aicc.size() ? choice.delta_aicc[i] : NAN;
      const double weight = i < choice.akaike_weights.size() ? choice.akaike_weights[i] : NAN;
      rows.push_back({Q(KineticModelToString(f.model)) +
                          (choice.chosen && f.model == choice.preferred ? QStringLiteral("  (preferred)") : QString()),
                      QString::number(f.n), QString::number(f.num_parameters), FormatValue4(f.ssr),
                      FormatValue4(f.aicc), usable ? FormatValue4(delta) : QStringLiteral("not usable"),
                      usable ? FormatValue3(weight) : QStringLiteral("—"),
                      usable ? QStringLiteral("yes") : QStringLiteral("no: ") + Q(f.summary.message)});
    }
    FlowTable(flow,
              {{QStringLiteral("model"), 0.22},
               {QStringLiteral("n"), 0.04, Qt::AlignRight},
               {QStringLiteral("parameters"), 0.12, Qt::AlignRight},
               {QStringLiteral("SSR"), 0.10, Qt::AlignRight},
               {QStringLiteral("AICc"), 0.09, Qt::AlignRight},
               {QStringLiteral("ΔAICc"), 0.09, Qt::AlignRight},
               {QStringLiteral("Akaike weight"), 0.15, Qt::AlignRight},
               {QStringLiteral("usable"), 0.19}},
              rows);
    if (!choice.tests.empty()) {
      FlowHeading(flow, QStringLiteral("Nested models: extra-sum-of-squares F tests"), PdfText::kSubheading,
                  flow->LineHeight(PdfText::kTable) * 3);
      std::vector<std::vector<QString>> test_rows;
      for (const NestedComparison& t : choice.tests) {
        const QString pair = Q(KineticModelToString(t.simpler)) + QStringLiteral(" within ") +
                             Q(KineticModelToString(t.larger));
        if (!t.computed) {
          test_rows.push_back({pair, QStringLiteral("—"), QStringLiteral("—"), QStringLiteral("—"),
                               t.proper_nesting ? QStringLiteral("interior") : QStringLiteral("limit"),
                               QStringLiteral("not computed: ") + Q(t.reason)});
          continue;
        }
        QString outcome = !t.proper_nesting ? QStringLiteral("not a proper test (limit): compared by AICc")
                          : t.rejects_simpler ? QStringLiteral("rejects ") + Q(KineticModelToString(t.simpler))
                                              : QStringLiteral("keeps ") + Q(KineticModelToString(t.simpler));
        if (!t.note.empty()) outcome += QStringLiteral("; ") + Q(t.note);
        test_rows.push_back({pair, FormatValue4(t.f), QStringLiteral("%1, %2").arg(t.df_numerator).arg(t.df_denominator),
                             FormatValue3(t.p_value),
                             t.proper_nesting ? QStringLiteral("interior") : QStringLiteral("limit"), outcome});
      }
      FlowTable(flow,
                {{QStringLiteral("simpler within larger"), 0.26},
                 {QStringLiteral("F"), 0.10, Qt::AlignRight},
                 {QStringLiteral("df"), 0.07, Qt::AlignRight},
                 {QStringLiteral("p"), 0.09, Qt::AlignRight},
                 {QStringLiteral("nesting"), 0.09},
                 {QStringLiteral("outcome (α = 0.05)"), 0.39}},
                test_rows);
    }
    FlowParagraph(flow, (choice.chosen ? QStringLiteral("Preferred model: ") + Q(KineticModelToString(choice.preferred)) +
                                             QStringLiteral(". ")
                                       : QStringLiteral("No model preferred. ")) +
                            Q(choice.reason));
    if (choice.fits.size() > 1) {
      FlowHeading(flow, QStringLiteral("Parameters of every candidate"), PdfText::kSubheading,
                  flow->LineHeight(PdfText::kTable) * 3);
      std::vector<std::vector<QString>> rows2;
      for (const KineticFit& f : choice.fits) {
        for (const ParameterEstimate& p : f.parameters) {
          rows2.push_back({Q(KineticModelToString(f.model)), Q(p.name), FormatValue4(p.value), DisplayUnit(p.unit),
                           p.se_determined ? FormatValue4(p.se) : QStringLiteral("not determined"),
                           FormatInterval(p.ci)});
        }
      }
      FlowTable(flow,
                {{QStringLiteral("model"), 0.2},
                 {QStringLiteral("parameter"), 0.11},
                 {QStringLiteral("value"), 0.11, Qt::AlignRight},
                 {QStringLiteral("unit"), 0.1},
                 {QStringLiteral("SE"), 0.12, Qt::AlignRight},
                 {QStringLiteral("interval"), 0.36}},
                rows2);
    }
  }
}

void FlowPlateMapSection(PageFlow* flow, const ReportContext& context) {
  const Analysis& a = *context.analysis;
  flow->NewPage();
  FlowHeading(flow, QStringLiteral("Plate maps"));
  FlowParagraph(flow,
                QStringLiteral("Initial rate of each sample well (µM/min, background subtracted) on a viridis "
                               "scale. Crossed: excluded by the user. Orange dot: flagged (any flag but \"lag\"; "
                               "see the wells section and rates.csv). Grey: no rate or not a sample well; white: "
                               "no data."),
                PdfText::kSmall);
  for (std::size_t i = 0; i < a.plate_rates.size() && i < a.plates.size(); ++i) {
    const PlateRates& rates = a.plate_rates[i];
    const PlateGeometry geometry = a.plates[i].geometry;
    const double width = flow->body().width();
    const double height = std::min(flow->body().height() * 0.42,
                                   width * (geometry.rows + 2.5) / (geometry.columns + 7.0));
    FlowHeading(flow, QStringLiteral("Plate %1: ").arg(i + 1) + FileName(rates.plate), PdfText::kSubheading, height);
    const QRectF rect = flow->Reserve(height);
    const PlateRates* shown = &rates;
    flow->Draw([rect, shown, geometry](QPainter* p) {
      PaintPlateMap(p, rect, *shown, geometry, PlateMapQuantity::kRate, PlateMapOptions());
    });
    flow->Space(flow->points() * 6.0);
    struct {
      double lo = INFINITY, hi = -INFINITY;
      bool empty() const { return !(lo <= hi); }
    } cm;
    for (const WellRate& wr : rates.wells) {
      if (wr.role == WellRole::kEmpty || !std::isfinite(wr.pathlength_cm)) continue;
      cm.lo = std::min(cm.lo, wr.pathlength_cm);
      cm.hi = std::max(cm.hi, wr.pathlength_cm);
    }
    std::vector<std::vector<QString>> rows = {
        {QStringLiteral("pathlength"),
         Q(rates.pathlength.mode) + QStringLiteral(": ") +
             (cm.empty() ? QStringLiteral("n/a")
                         : (cm.lo == cm.hi ? FormatValue4(cm.lo) : FormatValue4(cm.lo) + QStringLiteral(" – ") +
                                                                          FormatValue4(cm.hi))) +
             QStringLiteral(" cm")},
        {QStringLiteral("background (plate mean)"),
         FormatValue4(rates.background_uM_per_min) + QStringLiteral(" ± ") +
             FormatValue3(rates.background_se_uM_per_min) +
             QStringLiteral(" µM/min from %1 blank wells").arg(rates.blank_wells_used)},
        {QStringLiteral("coupling lag held"),
         rates.coupling_tau_min ? FormatValue3(*rates.coupling_tau_min) +
                                      QStringLiteral(" min (weighted mean over %1 wells)").arg(rates.coupling_tau_wells)
                                : QStringLiteral("not pooled")}};
    FlowTable(flow, {{QStringLiteral("plate"), 0.3}, {QStringLiteral("value"), 0.7}}, rows);
  }
}

void FlowWellsSection(PageFlow* flow, const ReportContext& context) {
  const Analysis& a = *context.analysis;
  flow->NewPage();
  FlowHeading(flow, QStringLiteral("Warnings"), PdfText::kHeading, flow->LineHeight(PdfText::kBody) * 2);
  std::vector<std::string> warnings = a.warnings;
  if (const KineticFit* fit = a.kinetics.attempted ? a.kinetics.choice.Preferred() : nullptr) {
    std::set<std::string> seen(warnings.begin(), warnings.end());
    for (const FitWarning& w : fit->warnings) {
      if (seen.insert(w.message).second) warnings.push_back(w.message);
    }
  }
  if (warnings.empty()) {
    FlowParagraph(flow, QStringLiteral("None."));
  } else {
    FlowBullets(flow, warnings);
  }

  FlowHeading(flow, QStringLiteral("Excluded wells"), PdfText::kHeading, flow->LineHeight(PdfText::kTable) * 3);
  std::vector<std::vector<QString>> excluded, failed, flagged;
  for (const PlateRates& p : a.plate_rates) {
    for (const WellRate& w : p.wells) {
      if (w.role == WellRole::kEmpty) continue;
      const std::vector<QString> id = {FileName(p.plate), Q(w.name), Q(WellRoleToString(w.role)),
                                       ConcentrationText(w.substrate_uM), ConcentrationText(w.inhibitor_uM)};
      auto row = [&id](const QString& last) {
        std::vector<QString> r = id;
        r.push_back(last);
        return r;
      };
      if (w.excluded) excluded.push_back(row(Q(w.exclusion_reason)));
      if (!w.estimate.ok) failed.push_back(row(Q(w.estimate.message)));
      if (w.estimate.ok && HasAttentionFlag(w)) flagged.push_back(row(FlagList(w)));
    }
  }
  const std::vector<TableColumn> columns = {{QStringLiteral("plate"), 0.22},       {QStringLiteral("well"), 0.06},
                                            {QStringLiteral("role"), 0.09},        {QStringLiteral("[S] µM"), 0.08, Qt::AlignRight},
                                            {QStringLiteral("[I] µM"), 0.08, Qt::AlignRight}, {QStringLiteral("reason"), 0.47}};
  if (excluded.empty()) {
    FlowParagraph(flow, QStringLiteral("None."));
  } else {
    FlowTable(flow, columns, excluded);
  }
  FlowHeading(flow, QStringLiteral("Wells without a rate"), PdfText::kHeading, flow->LineHeight(PdfText::kTable) * 3);
  if (failed.empty()) {
    FlowParagraph(flow, QStringLiteral("None."));
  } else {
    FlowTable(flow, columns, failed);
  }
  FlowHeading(flow, QStringLiteral("Flagged wells"), PdfText::kHeading, flow->LineHeight(PdfText::kTable) * 3);
  FlowParagraph(flow,
                QStringLiteral("Wells with a rate and a flag other than \"lag\" (a resolved coupling lag is "
                               "expected). A flag is information; it does not exclude a well."),
                PdfText::kSmall);
  std::vector<TableColumn> flag_columns = columns;
  flag_columns.back().header = QStringLiteral("flags");
  if (flagged.empty()) {
    FlowParagraph(flow, QStringLiteral("None."));
  } else {
    FlowTable(flow, flag_columns, flagged);
  }
}

void FlowTraceSection(PageFlow* flow, const ReportContext& context) {
  const Analysis& a = *context.analysis;
  const PdfReportOptions& options = *context.options;
  TraceChartOptions trace;
  trace.wavelength_nm = a.settings.detection.wavelength_nm;
  trace.absorbance_ceiling = a.settings.absorbance_ceiling;
  trace.compact = true;
  for (std::size_t i = 0; i < a.plate_rates.size() && i < a.plates.size(); ++i) {
    const PlateRates& rates = a.plate_rates[i];
    const Plate* plate = &a.plates[i];
    std::vector<const WellRate*> wells;
    for (const WellRate& w : rates.wells) {
      if (w.role != WellRole::kEmpty) wells.push_back(&w);
    }
    std::stable_sort(wells.begin(), wells.end(), [](const WellRate* x, const WellRate* y) {
      return RoleOrder(x->role) < RoleOrder(y->role);
    });
    if (wells.empty()) continue;
    flow->NewPage();
    FlowHeading(flow, QStringLiteral("Traces: plate %1, ").arg(i + 1) + FileName(rates.plate), PdfText::kHeading);
    FlowParagraph(flow,
                  QStringLiteral("A at %1 nm against time (min). Filled blue: reads used for the rate, inside the "
                                 "shaded rate window; grey: reads outside it; hollow orange diamonds: saturated "
                                 "reads (drawn above the trace) or reads over the absorbance ceiling. Red line: "
                                 "least-squares line over the window (the rate itself comes from the rate model, "
                                 "with the coupling lag and the substrate bend accounted for). Title: well and "
                                 "corrected rate in µM/min. Sample wells first, then blank, no-substrate and "
                                 "standard wells.")
                      .arg(trace.wavelength_nm, 0, 'g', 4),
                  PdfText::kSmall);
    const int columns = options.trace_columns;
    const double cell_w = flow->body().width() / columns;
    // Rows sized so that trace_rows fit a page below the heading.
    const double heading_space = flow->LineHeight(PdfText::kHeading) * 2.0 + flow->LineHeight(PdfText::kSmall) * 4.0;
    const double cell_h = (flow->body().height() - heading_space) / options.trace_rows;
    for (std::size_t start = 0; start < wells.size(); start += static_cast<std::size_t>(columns)) {
      const QRectF row = flow->Reserve(cell_h);
      for (int c = 0; c < columns && start + static_cast<std::size_t>(c) < wells.size(); ++c) {
        const WellRate* w = wells[start + static_cast<std::size_t>(c)];
        const QRectF cell(row.left() + c * cell_w, row.top(), cell_w, cell_h);
        const double gap = flow->points() * 1.5;
        flow->Draw([plate, w, trace, cell, gap](QPainter* p) {
          RenderChart(p, MakeTraceChart(*plate, *w, trace), cell.adjusted(gap, gap, -gap, -gap));
        });
      }
    }
  }
}

}  // namespace ratewell::detail
