// Axis helpers shared by the charts: data extents, ranges with a margin and
// nice numbers, and axis styling.
#pragma once

#include <limits>

#include <QString>
#include <QtGlobal>

QT_BEGIN_NAMESPACE
class QAbstractAxis;
class QChart;
class QLogValueAxis;
class QValueAxis;
class QXYSeries;
QT_END_NAMESPACE

namespace ratewell::detail {

// The smallest interval holding every finite value added (non-finite values
// are ignored); `positive_only` extents also ignore values ≤ 0 (log axes).
struct Extent {
  double lo = std::numeric_limits<double>::infinity();
  double hi = -std::numeric_limits<double>::infinity();
  bool positive_only = false;

  void Add(double value);
  bool empty() const { return !(lo <= hi); }
};

// Fraction of the span added on each side before nice numbers are applied.
inline constexpr double kAxisMargin = 0.05;

// A linear axis holding `extent` with kAxisMargin on each side (a span of
// zero is widened to ±5 % of the value, or ±1 at 0), rounded outwards by
// applyNiceNumbers(). `ticks` is the tick count asked for before rounding.
// An empty extent gives [0, 1]. With `floor_at_zero`, an extent that starts
// at 0 or above gets no margin below (time, [S] and rates start at 0; an
// axis running to −200 µM would mislead).
QValueAxis* MakeLinearAxis(const Extent& extent, const QString& title, bool compact, int ticks,
                           bool floor_at_zero = false);
// A log10 axis holding `extent` (positive values) with a margin of
// kAxisMargin × the decades spanned (at least 0.05 decade) on each side.
QLogValueAxis* MakeLogAxis(const Extent& extent, const QString& title, bool compact);

// Fonts, colours and grid of an axis.
void StyleAxis(QAbstractAxis* axis, const QString& title, bool compact);

// Adds the series to the chart and attaches both axes (already added).
void AddSeries(QChart* chart, QXYSeries* series, QAbstractAxis* x, QAbstractAxis* y);

// Hides the series' legend entry.
void HideFromLegend(QChart* chart, QXYSeries* series);

// Text of a number with `digits` significant digits ("1.23", "0.0456", "1.2e+03").
QString FormatSignificant(double value, int digits);

}  // namespace ratewell::detail
