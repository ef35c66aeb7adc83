#include "charts/charts.h"

#include <QAreaSeries>
#include <QChart>
#include <QLegend>
#include <QLineSeries>
#include <QLogValueAxis>
#include <QPen>
#include <QScatterSeries>
#include <QValueAxis>

#include <algorithm>
#include <cmath>

#include "charts/chart_style.h"
#include "charts/detail/chart_axes.h"

namespace ratewell {
namespace {

using detail::AddSeries;
using detail::Extent;
using detail::FormatSignificant;
using detail::HideFromLegend;

constexpr double kLevelRelativeTolerance = 1e-9;

bool SameLevel(double a, double b) {
  return std::abs(a - b) <= kLevelRelativeTolerance * std::max({1.0, std::abs(a), std::abs(b)});
}

// Index of `inhibitor_uM` in `levels`, or levels.size() when absent.
int LevelIndex(const std::vector<double>& levels, double inhibitor_uM) {
  for (std::size_t k = 0; k < levels.size(); ++k) {
    if (SameLevel(levels[k], inhibitor_uM)) return static_cast<int>(k);
  }
  return static_cast<int>(levels.size());
}

QScatterSeries* NewScatter(const QString& name, QColor fill, QColor edge, double size,
                           QScatterSeries::MarkerShape shape) {
  auto* series = new QScatterSeries();
  series->setName(name);
  series->setMarkerShape(shape);
  series->setMarkerSize(size);
  series->setColor(fill);
  QPen pen(edge);
  pen.setWidthF(std::max(0.6, size / 8.0));
  series->setPen(pen);
  series->setBorderColor(edge);
  if (fill.alpha() == 0) series->setBrush(Qt::NoBrush);
  return series;
}

QLineSeries* NewLine(const QString& name, QColor colour, double width, Qt::PenStyle style = Qt::SolidLine) {
  auto* series = new QLineSeries();
  series->setName(name);
  QPen pen(colour);
  pen.setWidthF(width);
  pen.setStyle(style);
  pen.setCapStyle(Qt::FlatCap);
  series->setPen(pen);
  return series;
}

QString ShortReason(const std::string& message) {
  QString text = QString::fromStdString(message);
  constexpr int kMaxChars = 28;
  if (text.size() > kMaxChars) text = text.left(kMaxChars - 1) + QChar(0x2026);
  return text;
}

}  // namespace

// ---------------------------------------------------------------------------
// Trace.

QChart* MakeTraceChart(const Plate& plate, const WellRate& well, const TraceChartOptions& options) {
  const bool compact = options.compact;
  auto* chart = new QChart();
  ApplyChartStyle(chart, compact);

  const RateEstimate& e = well.estimate;
  QString title = options.title;
  if (title.isEmpty()) {
    title = QString::fromStdString(well.name) + QStringLiteral("  ");
    if (well.excluded) {
      title += QStringLiteral("excluded");
    } else if (well.HasRate()) {
      title += FormatSignificant(well.rate_uM_per_min, 3) + QStringLiteral(" µM/min");
    } else if (well.role == WellRole::kBlank && e.ok) {
      title += QStringLiteral("blank ") + FormatSignificant(e.rate_uM_per_min, 3) +
               QStringLiteral(" µM/min");
    } else {
      title += compact ? QStringLiteral("no rate")
                       : QStringLiteral("no rate: ") + ShortReason(e.message);
    }
  }
  chart->setTitle(title);

  const int channel = plate.ChannelOf(options.wavelength_nm);
  const bool has_series = channel >= 0 && well.well >= 0 && well.well < plate.geometry.num_wells();
  const bool has_window = e.ok && e.points > 0 && e.window_end_min >= e.window_start_min;
  // Times are compared with a tolerance of a microsecond's worth of minutes
  // (reads are written with at most millisecond resolution).
  constexpr double kTimeTolerance = 1e-8;

  QList<QPointF> used, unused, over_ceiling;
  QList<double> saturated_times;
  Extent x_extent, y_extent;
  if (has_series) {
    const Series& s = plate.at(channel, well.well);
    for (std::size_t i = 0; i < s.size(); ++i) {
      const double t = s.time_min[i];
      if (s.status[i] == PointStatus::kSaturated) {
        saturated_times.push_back(t);
        x_extent.Add(t);
        continue;
      }
      if (s.status[i] != PointStatus::kValid || !std::isfinite(s.value[i])) continue;
      const QPointF p(t, s.value[i]);
      x_extent.Add(t);
      y_extent.Add(s.value[i]);
      if (s.value[i] > options.absorbance_ceiling) {
        over_ceiling.push_back(p);
      } else if (has_window && t >= e.window_start_min - kTimeTolerance &&
                 t <= e.window_end_min + kTimeTolerance) {
        used.push_back(p);
      } else {
        unused.push_back(p);
      }
    }
  }
  // Saturated reads have no value: drawn just above the highest reading.
  double saturated_y = 0.0;
  if (!saturated_times.isEmpty()) {
    const double span = y_extent.empty() ? 1.0 : std::max(y_extent.hi - y_extent.lo, 0.05);
    saturated_y = y_extent.empty() ? options.absorbance_ceiling : y_extent.hi + 0.04 * span;
    y_extent.Add(saturated_y);
  }

  // The least-squares line of the window: slope from the estimate, through
  // the centroid of the used points.
  QList<QPointF> slope_line;
  if (has_window && used.size() >= 2 && std::isfinite(e.slope_A_per_min)) {
    double mean_t = 0.0, mean_a = 0.0;
    for (const QPointF& p : used) {
      mean_t += p.x();
      mean_a += p.y();
    }
    mean_t /= used.size();
    mean_a /= used.size();
    for (double t : {e.window_start_min, e.window_end_min}) {
      const double a = mean_a + e.slope_A_per_min * (t - mean_t);
      slope_line.push_back(QPointF(t, a));
      y_extent.Add(a);
    }
  }
  if (has_window) {
    x_extent.Add(e.window_start_min);
    x_extent.Add(e.window_end_min);
  }

  const int ticks = compact ? 3 : 6;
  QValueAxis* x_axis = detail::MakeLinearAxis(x_extent, QStringLiteral("time (min)"), compact, ticks, true);
  QValueAxis* y_axis = detail::MakeLinearAxis(
      y_extent, QStringLiteral("A (%1 nm)").arg(options.wavelength_nm, 0, 'g', 4), compact,
      compact ? 3 : 5);
  if (compact) {
    x_axis->setLabelFormat(QStringLiteral("%.3g"));
    y_axis->setLabelFormat(QStringLiteral("%.3g"));
  }
  chart->addAxis(x_axis, Qt::AlignBottom);
  chart->addAxis(y_axis, Qt::AlignLeft);

  const double marker = compact ? 2.6 : 6.0;
  if (has_window) {
    // QAreaSeries does not own its edge series: parent them to it.
    auto* band = new QAreaSeries();
    auto* upper = new QLineSeries(band);
    auto* lower = new QLineSeries(band);
    upper->append(e.window_start_min, y_axis->max());
    upper->append(e.window_end_min, y_axis->max());
    lower->append(e.window_start_min, y_axis->min());
    lower->append(e.window_end_min, y_axis->min());
    band->setUpperSeries(upper);
    band->setLowerSeries(lower);
    band->setName(QString::fromLatin1(kTraceWindowSeries));
    band->setBrush(QColor::fromRgba(kWindowShadeColour));
    band->setPen(Qt::NoPen);
    chart->addSeries(band);
    band->attachAxis(x_axis);
    band->attachAxis(y_axis);
  }
  if (!used.isEmpty()) {
    auto* series = NewScatter(QString::fromLatin1(kTraceUsedSeries), QColor::fromRgba(kUsedPointColour),
                              QColor::fromRgba(kUsedPointColour), marker,
                              QScatterSeries::MarkerShapeCircle);
    series->replace(used);
    AddSeries(chart, series, x_axis, y_axis);
  }
  if (!unused.isEmpty()) {
    auto* series = NewScatter(QString::fromLatin1(kTraceUnusedSeries), QColor::fromRgba(kUnusedPointColour),
                              QColor::fromRgba(kUnusedPointColour), marker,
                              QScatterSeries::MarkerShapeCircle);
    series->replace(unused);
    AddSeries(chart, series, x_axis, y_axis);
  }
  if (!over_ceiling.isEmpty() || !saturated_times.isEmpty()) {
    auto* series = NewScatter(QString::fromLatin1(kTraceRejectedSeries), QColor(Qt::transparent),
                              QColor::fromRgba(kRejectedPointColour), marker * 1.3,
                              QScatterSeries::MarkerShapeRotatedRectangle);
    QList<QPointF> points = over_ceiling;
    for (double t : saturated_times) points.push_back(QPointF(t, saturated_y));
    series->replace(points);
    AddSeries(chart, series, x_axis, y_axis);
  }
  if (!slope_line.isEmpty()) {
    auto* series = NewLine(QString::fromLatin1(kTraceSlopeSeries), QColor::fromRgba(kFitLineColour),
                           compact ? 1.0 : 1.6);
    series->replace(slope_line);
    AddSeries(chart, series, x_axis, y_axis);
  }
  if (!compact && options.show_legend) {
    chart->legend()->setAlignment(Qt::AlignBottom);
    chart->legend()->show();
  } else {
    chart->legend()->hide();
  }
  return chart;
}

// ---------------------------------------------------------------------------
// Inhibitor levels.

std::vector<double> InhibitorLevels(const Analysis& analysis) {
  std::vector<double> levels;
  for (const PlateRates& plate : analysis.plate_rates) {
    for (const WellRate& w : plate.wells) {
      if (w.role != WellRole::kSample || !w.HasRate() || !std::isfinite(w.substrate_uM)) continue;
      const double level = std::isfinite(w.inhibitor_uM) ? w.inhibitor_uM : 0.0;
      if (LevelIndex(levels, level) == static_cast<int>(levels.size())) levels.push_back(level);
    }
  }
  std::sort(levels.begin(), levels.end());
  return levels;
}

QString InhibitorLevelLabel(double inhibitor_uM) {
  return QStringLiteral("I = ") + FormatSignificant(inhibitor_uM, 3) + QStringLiteral(" µM");
}

namespace {

QScatterSeries::MarkerShape LevelShape(int level) {
  // Past the colour list the shape changes too, so no two levels look alike.
  static constexpr QScatterSeries::MarkerShape kShapes[] = {
      QScatterSeries::MarkerShapeCircle, QScatterSeries::MarkerShapeTriangle,
      QScatterSeries::MarkerShapeRotatedRectangle, QScatterSeries::MarkerShapePentagon};
  return kShapes[(level / kCategoryColourCount) % 4];
}

QString ModelName(const KineticFit* fit) {
  return fit ? QString::fromLatin1(KineticModelToString(fit->model)) : QString();
}

}  // namespace

// ---------------------------------------------------------------------------
// Rate against [S].

QChart* MakeSaturationChart(const Analysis& analysis, const KineticFit* fit,
                            const SaturationChartOptions& options) {
  auto* chart = new QChart();
  ApplyChartStyle(chart, false);
  const bool log_x = options.log_substrate_axis;
  const std::vector<double> levels = InhibitorLevels(analysis);
  const int num_levels = static_cast<int>(levels.size());

  struct Whisker {
    int level;
    double s, lo, hi;
  };
  std::vector<QList<QPointF>> used(levels.size()), excluded(levels.size());
  std::vector<Whisker> whiskers;
  Extent x_extent, y_extent;
  x_extent.positive_only = log_x;
  int left_out = 0;
  for (const PlateRates& plate : analysis.plate_rates) {
    for (const WellRate& w : plate.wells) {
      if (w.role != WellRole::kSample || !w.HasRate() || !std::isfinite(w.substrate_uM)) continue;
      if (w.excluded && !options.show_excluded) continue;
      if (log_x && w.substrate_uM <= 0.0) {
        ++left_out;
        continue;
      }
      const int level = LevelIndex(levels, std::isfinite(w.inhibitor_uM) ? w.inhibitor_uM : 0.0);
      if (level >= num_levels) continue;
      const QPointF p(w.substrate_uM, w.rate_uM_per_min);
      (w.excluded ? excluded : used)[static_cast<std::size_t>(level)].push_back(p);
      x_extent.Add(p.x());
      y_extent.Add(p.y());
      if (options.show_intervals && std::isfinite(w.ci95_lo_uM_per_min) &&
          std::isfinite(w.ci95_hi_uM_per_min)) {
        whiskers.push_back({level, w.substrate_uM, w.ci95_lo_uM_per_min, w.ci95_hi_uM_per_min});
        y_extent.Add(w.ci95_lo_uM_per_min);
        y_extent.Add(w.ci95_hi_uM_per_min);
      }
    }
  }

  // Fitted curves, evenly spaced in [S] (or log [S]).
  std::vector<QList<QPointF>> curves(levels.size());
  const bool draw_fit = fit != nullptr && !fit->group_values.empty() && !x_extent.empty();
  if (draw_fit) {
    const int n = std::max(2, options.curve_points);
    const double s_hi = x_extent.hi;
    const double s_lo = log_x ? x_extent.lo : 0.0;
    for (int k = 0; k < num_levels; ++k) {
      for (int i = 0; i < n; ++i) {
        const double f = static_cast<double>(i) / (n - 1);
        const double s = log_x ? s_lo * std::pow(s_hi / s_lo, f) : s_lo + f * (s_hi - s_lo);
        const double v = fit->Predict(s, levels[static_cast<std::size_t>(k)], 0);
        if (!std::isfinite(v)) continue;
        curves[static_cast<std::size_t>(k)].push_back(QPointF(s, v));
        y_extent.Add(v);
      }
    }
  }
  if (!log_x) x_extent.Add(0.0);
  y_extent.Add(0.0);

  QString title = options.title;
  if (title.isEmpty()) {
    title = QStringLiteral("Initial rate against [S]");
    if (draw_fit) title += QStringLiteral(", ") + ModelName(fit);
    if (left_out > 0) title += QStringLiteral(" (%1 wells at [S] = 0 not shown)").arg(left_out);
    if (levels.empty()) title += QStringLiteral(": no sample wells with a rate");
  }
  chart->setTitle(title);

  QAbstractAxis* x_axis = log_x ? static_cast<QAbstractAxis*>(detail::MakeLogAxis(
                                      x_extent, QStringLiteral("[S] (µM)"), false))
                                : detail::MakeLinearAxis(x_extent, QStringLiteral("[S] (µM)"), false, 6, true);
  QValueAxis* y_axis =
      detail::MakeLinearAxis(y_extent, QStringLiteral("initial rate (µM/min)"), false, 6, true);
  chart->addAxis(x_axis, Qt::AlignBottom);
  chart->addAxis(y_axis, Qt::AlignLeft);

  for (const Whisker& w : whiskers) {
    QColor colour = CategoryColour(w.level);
    colour.setAlphaF(0.7f);
    auto* series = NewLine(InhibitorLevelLabel(levels[static_cast<std::size_t>(w.level)]) +
                               QStringLiteral(" interval"),
                           colour, 0.8);
    series->append(w.s, w.lo);
    series->append(w.s, w.hi);
    AddSeries(chart, series, x_axis, y_axis);
    HideFromLegend(chart, series);
  }
  for (int k = 0; k < num_levels; ++k) {
    const std::size_t kk = static_cast<std::size_t>(k);
    const QString label = InhibitorLevelLabel(levels[kk]);
    const QColor colour = CategoryColour(k);
    if (draw_fit && curves[kk].size() >= 2) {
      auto* series = NewLine(label + QStringLiteral(" fit"), colour, 1.4);
      series->replace(curves[kk]);
      AddSeries(chart, series, x_axis, y_axis);
      HideFromLegend(chart, series);
    }
    if (!used[kk].isEmpty()) {
      auto* series = NewScatter(label, colour, colour.darker(130), 7.0, LevelShape(k));
      series->replace(used[kk]);
      AddSeries(chart, series, x_axis, y_axis);
    }
    if (!excluded[kk].isEmpty()) {
      auto* series = NewScatter(label + QStringLiteral(" excluded"), QColor(Qt::transparent), colour,
                                8.0, QScatterSeries::MarkerShapeRectangle);
      series->replace(excluded[kk]);
      AddSeries(chart, series, x_axis, y_axis);
    }
  }
  if (options.show_legend && num_levels > 0) {
    chart->legend()->setAlignment(Qt::AlignRight);
    chart->legend()->show();
  } else {
    chart->legend()->hide();
  }
  return chart;
}

// ---------------------------------------------------------------------------
// Residuals.

QChart* MakeResidualChart(const Analysis& analysis, const KineticFit& fit,
                          const ResidualChartOptions& options) {
  auto* chart = new QChart();
  ApplyChartStyle(chart, false);
  const bool log_x = options.log_substrate_axis;
  const std::vector<double> levels = InhibitorLevels(analysis);
  const std::vector<KineticObservation>& points = analysis.kinetics.data.points;
  const bool has_residuals = !fit.residuals.empty() && fit.residuals.size() == points.size();

  std::vector<QList<QPointF>> by_level(levels.size() + 1);
  Extent x_extent, y_extent;
  x_extent.positive_only = log_x;
  if (has_residuals) {
    for (std::size_t i = 0; i < points.size(); ++i) {
      const double s = points[i].substrate_uM;
      const double r = fit.residuals[i];
      if (!std::isfinite(s) || !std::isfinite(r) || (log_x && s <= 0.0)) continue;
      by_level[static_cast<std::size_t>(LevelIndex(levels, points[i].inhibitor_uM))].push_back(
          QPointF(s, r));
      x_extent.Add(s);
      y_extent.Add(r);
    }
  }
  if (!log_x) x_extent.Add(0.0);
  y_extent.Add(0.0);
  // Symmetric about zero, so the eye can compare the two signs.
  if (!y_extent.empty()) {
    const double m = std::max(std::abs(y_extent.lo), std::abs(y_extent.hi));
    y_extent.Add(-m);
    y_extent.Add(m);
  }

  QString title = options.title;
  if (title.isEmpty()) {
    title = QStringLiteral("Residuals (v − fit, µM/min), ") + ModelName(&fit);
    if (!has_residuals) title += QStringLiteral(": no residuals");
  }
  chart->setTitle(title);
  QAbstractAxis* x_axis = log_x ? static_cast<QAbstractAxis*>(detail::MakeLogAxis(
                                      x_extent, QStringLiteral("[S] (µM)"), false))
                                : detail::MakeLinearAxis(x_extent, QStringLiteral("[S] (µM)"), false, 6, true);
  QValueAxis* y_axis = detail::MakeLinearAxis(y_extent, QStringLiteral("v − fit"), false, 5);
  chart->addAxis(x_axis, Qt::AlignBottom);
  chart->addAxis(y_axis, Qt::AlignLeft);

  auto* zero = NewLine(QStringLiteral("zero"), QColor::fromRgba(kInkColour), 0.8, Qt::DashLine);
  if (log_x) {
    auto* axis = static_cast<QLogValueAxis*>(x_axis);
    zero->append(axis->min(), 0.0);
    zero->append(axis->max(), 0.0);
  } else {
    auto* axis = static_cast<QValueAxis*>(x_axis);
    zero->append(axis->min(), 0.0);
    zero->append(axis->max(), 0.0);
  }
  AddSeries(chart, zero, x_axis, y_axis);
  HideFromLegend(chart, zero);

  for (std::size_t k = 0; k < by_level.size(); ++k) {
    if (by_level[k].isEmpty()) continue;
    const int level = static_cast<int>(k);
    const QString label = k < levels.size() ? InhibitorLevelLabel(levels[k]) : QStringLiteral("other");
    const QColor colour = CategoryColour(level);
    auto* series = NewScatter(label, colour, colour.darker(130), 6.0, LevelShape(level));
    series->replace(by_level[k]);
    AddSeries(chart, series, x_axis, y_axis);
  }
  if (options.show_legend) {
    chart->legend()->setAlignment(Qt::AlignRight);
    chart->legend()->show();
  } else {
    chart->legend()->hide();
  }
  return chart;
}

}  // namespace ratewell
