// Chart style: the colours and fonts every ratewell picture shares, so that
// the PDF report and the window look alike.
//
// Series colours
// --------------
// Series that stand for categories (one inhibitor level each) take their
// colour from the eight-colour set of Okabe & Ito (2008, "Color Universal
// Design"), chosen because its members stay distinguishable under the common
// forms of colour-vision deficiency. Black is left out (it is our ink for
// axes and text) and the order below puts strong contrasts first, so that
// two or three series already differ in lightness as well as hue. A ninth
// series and beyond repeat the list; the charts then also vary the marker.
//
// Sequential scale
// ----------------
// Quantities on a continuous scale (a well's rate on the plate map) use
// viridis (van der Walt & Smith, 2015; the default colour map of matplotlib
// since 2.0), a perceptually uniform map whose lightness rises monotonically
// from dark violet to yellow, so that the scale also reads in grey. The table
// in chart_style.cc holds 33 samples at t = 0, 1/32, …, 1 (matplotlib 3.6.3,
// computed) and ViridisColour interpolates linearly in sRGB between them.
//
// Fonts
// -----
// DejaVu Sans (fonts-dejavu-core; every Debian desktop has it, and it carries
// µ, ², Δ and the other signs our units need). Sizes are points, chosen for
// an A4 page; the window may scale them.
#pragma once

#include <QColor>
#include <QFont>
#include <QtGlobal>

QT_BEGIN_NAMESPACE
class QChart;
QT_END_NAMESPACE

namespace ratewell {

// Colour of the index-th category series (0, 1, 2, …); cycles after
// kCategoryColourCount.
inline constexpr int kCategoryColourCount = 7;
QColor CategoryColour(int index);

// Viridis at t ∈ [0, 1] (t is clamped; NaN gives kNoValueColour).
QColor ViridisColour(double t);

// Fixed colours for the parts every chart has.
inline constexpr QRgb kInkColour = 0xff1a1a1a;          // text, axes, the zero line
inline constexpr QRgb kGridColour = 0xffd9d9d9;         // grid lines
inline constexpr QRgb kUsedPointColour = 0xff0072b2;    // points inside the rate window
inline constexpr QRgb kUnusedPointColour = 0xff9a9a9a;  // valid points outside it
inline constexpr QRgb kRejectedPointColour = 0xffd55e00;  // saturated / over the ceiling
inline constexpr QRgb kWindowShadeColour = 0x330072b2;  // rate window band (20 % alpha)
inline constexpr QRgb kFitLineColour = 0xffcc3311;      // fitted line or curve
inline constexpr QRgb kNoValueColour = 0xffe3e3e3;      // empty wells, no value
inline constexpr QRgb kFlagMarkColour = 0xffe69f00;     // flagged-well mark on the plate map

// What a piece of text is, which decides its size and weight.
enum class ChartText {
  kTitle,   // chart title: 10 pt bold
  kAxis,    // axis titles: 8.5 pt
  kTick,    // tick labels and legend: 7.5 pt
  kSmall,   // small multiples and plate labels: 6 pt
};
// DejaVu Sans at the size and weight of `role`.
QFont ChartFont(ChartText role);

// Sets the chart's theme-independent look: white background without a
// drop shadow, small margins, our fonts on title and legend. `compact`
// shrinks fonts and margins for small multiples.
void ApplyChartStyle(QChart* chart, bool compact = false);

}  // namespace ratewell
