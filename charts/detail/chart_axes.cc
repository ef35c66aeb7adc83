#include "charts/detail/chart_axes.h"

#include <QChart>
#include <QLegend>
#include <QLegendMarker>
#include <QLogValueAxis>
#include <QPen>
#include <QValueAxis>
#include <QXYSeries>

#include <algorithm>
#include <cmath>

#include "charts/chart_style.h"

namespace ratewell::detail {

void Extent::Add(double value) {
  if (!std::isfinite(value)) return;
  if (positive_only && value <= 0.0) return;
  lo = std::min(lo, value);
  hi = std::max(hi, value);
}

void StyleAxis(QAbstractAxis* axis, const QString& title, bool compact) {
  const QColor ink = QColor::fromRgba(kInkColour);
  axis->setLabelsFont(ChartFont(compact ? ChartText::kSmall : ChartText::kTick));
  axis->setLabelsColor(ink);
  QPen line(ink);
  line.setWidthF(compact ? 0.6 : 0.8);
  axis->setLinePen(line);
  QPen grid(QColor::fromRgba(kGridColour));
  grid.setWidthF(compact ? 0.4 : 0.6);
  axis->setGridLinePen(grid);
  axis->setMinorGridLineVisible(false);
  if (compact || title.isEmpty()) {
    axis->setTitleVisible(false);
  } else {
    axis->setTitleText(title);
    axis->setTitleFont(ChartFont(ChartText::kAxis));
    axis->setTitleBrush(ink);
  }
}

QValueAxis* MakeLinearAxis(const Extent& extent, const QString& title, bool compact, int ticks,
                           bool floor_at_zero) {
  double lo = 0.0;
  double hi = 1.0;
  if (!extent.empty()) {
    lo = extent.lo;
    hi = extent.hi;
    const double span = hi - lo;
    if (span > 0.0) {
      lo -= kAxisMargin * span;
      hi += kAxisMargin * span;
    } else {
      const double half = lo != 0.0 ? 0.05 * std::abs(lo) : 1.0;
      lo -= half;
      hi += half;
    }
    if (floor_at_zero && extent.lo >= 0.0) lo = std::max(lo, 0.0);
  }
  auto* axis = new QValueAxis();
  axis->setTickCount(std::max(2, ticks));
  axis->setRange(lo, hi);
  axis->applyNiceNumbers();
  axis->setLabelFormat(QStringLiteral("%.4g"));
  StyleAxis(axis, title, compact);
  return axis;
}

QLogValueAxis* MakeLogAxis(const Extent& extent, const QString& title, bool compact) {
  double lo = 1.0;
  double hi = 10.0;
  if (!extent.empty()) {
    const double decades = std::log10(extent.hi) - std::log10(extent.lo);
    const double margin = std::max(0.05, kAxisMargin * decades);
    lo = extent.lo / std::pow(10.0, margin);
    hi = extent.hi * std::pow(10.0, margin);
  }
  auto* axis = new QLogValueAxis();
  axis->setBase(10.0);
  axis->setRange(lo, hi);
  axis->setLabelFormat(QStringLiteral("%g"));
  axis->setMinorTickCount(-1);  // Qt: automatic minor ticks between decades
  StyleAxis(axis, title, compact);
  return axis;
}

void AddSeries(QChart* chart, QXYSeries* series, QAbstractAxis* x, QAbstractAxis* y) {
  chart->addSeries(series);
  series->attachAxis(x);
  series->attachAxis(y);
}

void HideFromLegend(QChart* chart, QXYSeries* series) {
  for (QLegendMarker* marker : chart->legend()->markers(series)) marker->setVisible(false);
}

QString FormatSignificant(double value, int digits) {
  if (!std::isfinite(value)) return QStringLiteral("n/a");
  return QString::number(value, 'g', digits);
}

}  // namespace ratewell::detail
