// Charts: the pictures of an analysis, shared by the PDF report and the
// window.
//
// Every number drawn comes from fitting/ (well rates, windows, fits and their
// residuals); nothing here estimates anything. The charts are Qt Charts
// objects, so one picture can be shown in a QChartView or rendered as vectors
// onto a QPdfWriter or QSvgGenerator page. The plate map is painted straight
// onto a QPainter (a grid of circles needs no chart machinery).
//
//   MakeTraceChart       one well: absorbance at the detection wavelength
//                        against time (min). Points used for the rate (inside
//                        the window, valid, at or below the absorbance
//                        ceiling) are filled; valid points outside the window
//                        are grey; saturated points (no value) are drawn as
//                        hollow diamonds just above the highest reading, and
//                        points over the ceiling as hollow diamonds where
//                        they lie. The rate
//                        window is shaded. The rate methods do not hand back
//                        their fitted curve, so the line drawn is the straight
//                        line over the window with the estimate's least-squares
//                        slope (RateEstimate::slope_A_per_min) through the
//                        mean of the used points — the least-squares line of
//                        the window. Its legend entry says so.
//   MakeSaturationChart  initial rate against [S] for the sample wells of
//                        every plate, one colour per inhibitor level
//                        ("I = 2.5 µM"), 95 % interval whiskers of each well
//                        rate, and the fitted model per level (KineticFit::
//                        Predict, group 0). Excluded wells are hollow squares
//                        (Qt Charts has no cross marker). Optional log [S] axis (wells at S ≤ 0
//                        are then left out, and the title says how many).
//   MakeResidualChart    the fit's residuals (v − f) against [S], coloured by
//                        inhibitor level as above, with a zero line.
//   PaintPlateMap        the plate as a grid of circles coloured by rate,
//                        R² of the rate fit, or role; row letters and column
//                        numbers; a colour bar (or role legend); excluded wells
//                        crossed out, flagged wells marked with a dot, wells
//                        without a value grey.
//
// Every chart is a new QChart owned by the caller (hand it to a QChartView,
// which takes ownership, or delete it). Qt Charts items are QGraphicsWidgets:
// a QApplication must exist before any chart is made.
//
// Axis ranges hold every point drawn with a 5 % margin (log axes: a factor
// of 10^(5 % of the decades spanned)) and are then rounded by
// QValueAxis::applyNiceNumbers().
//
// Example:
//   QChart* chart = MakeSaturationChart(analysis, analysis.kinetics.choice.Preferred(), {});
//   auto* view = new QChartView(chart, parent);
#pragma once

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include <QColor>
#include <QPointF>
#include <QRectF>
#include <QString>
#include <QtGlobal>

#include "fitting/analysis.h"
#include "fitting/nonlinear_fit.h"
#include "fitting/plate_rates.h"
#include "importers/plate.h"

QT_BEGIN_NAMESPACE
class QChart;
class QPainter;
QT_END_NAMESPACE

namespace ratewell {

// ---------------------------------------------------------------------------
// Trace of one well.

struct TraceChartOptions {
  // The channel to draw: the plate's channel within 0.5 nm of this
  // wavelength (AssaySettings::detection.wavelength_nm). A plate without it
  // gives a chart with no points and a title saying so.
  double wavelength_nm = 340.0;
  // Valid readings above this absorbance were never used for the rate
  // (AssaySettings::absorbance_ceiling; 2.5 by default); they are drawn as
  // rejected points.
  double absorbance_ceiling = 2.5;
  // Title: "" gives "<well>  <rate> µM/min" (or "<well>  no rate: <why>"
  // with the reason cut to a few words; "excluded" when the user excluded
  // the well).
  QString title;
  // Small multiples: 6 pt text, three ticks per axis, no axis titles, no
  // legend, thin margins.
  bool compact = false;
  // Legend (ignored when compact).
  bool show_legend = true;
};

// Caller owns the chart. Series, in this order, each present only when it
// has something to draw, and named as follows (names are stable; tests and
// the window find series by them):
//   "rate window"   QAreaSeries over [window_start_min, window_end_min]
//   "used"          QScatterSeries, points inside the window that were used
//   "not used"      QScatterSeries, valid points outside the window
//   "rejected"      QScatterSeries, saturated and over-ceiling points
//   "window slope"  QLineSeries, the least-squares line over the window
QChart* MakeTraceChart(const Plate& plate, const WellRate& well, const TraceChartOptions& options);

// Series names of MakeTraceChart.
inline constexpr const char* kTraceWindowSeries = "rate window";
inline constexpr const char* kTraceUsedSeries = "used";
inline constexpr const char* kTraceUnusedSeries = "not used";
inline constexpr const char* kTraceRejectedSeries = "rejected";
inline constexpr const char* kTraceSlopeSeries = "window slope";

// ---------------------------------------------------------------------------
// Rate against [S], and the fit's residuals.

// The inhibitor levels (µM, ascending) of the sample wells with a rate and a
// known substrate concentration, over every plate; levels closer than 1e-9
// relative are one. Level k takes CategoryColour(k) in both charts below.
std::vector<double> InhibitorLevels(const Analysis& analysis);
// "I = 2.5 µM" (three significant digits; "I = 0 µM" for no inhibitor).
QString InhibitorLevelLabel(double inhibitor_uM);

struct SaturationChartOptions {
  // log10 [S] axis (QLogValueAxis). Wells and curve points at S ≤ 0 are
  // left out.
  bool log_substrate_axis = false;
  // 95 % interval whiskers of each well rate (WellRate::ci95_*).
  bool show_intervals = true;
  // Excluded wells as hollow crossed markers; false leaves them out.
  bool show_excluded = true;
  // Points along each fitted curve, evenly spaced in [S] (in log [S] on a
  // log axis), from 0 (log: the smallest [S]) to the largest [S]. ≥ 2.
  int curve_points = 160;
  bool show_legend = true;
  // "" gives "Initial rate against [S]" plus ", <model id>" when a fit is drawn.
  QString title;
};

// `fit` may be null (no curve drawn), e.g. when no fit is usable or the
// kinetic fit was not attempted. Caller owns the chart. Series names:
//   "<level label>"                QScatterSeries, wells used (one per level)
//   "<level label> excluded"       QScatterSeries, excluded wells (hollow)
//   "<level label> fit"            QLineSeries, the fitted model at that level
//   "<level label> interval"       QLineSeries per well, a 95 % whisker (not in
//                                  the legend)
// Only sample wells are drawn.
QChart* MakeSaturationChart(const Analysis& analysis, const KineticFit* fit,
                            const SaturationChartOptions& options);

struct ResidualChartOptions {
  bool log_substrate_axis = false;  // as SaturationChartOptions
  bool show_legend = false;         // the saturation chart above carries it
  QString title;                    // "" gives "Residuals (v − fit), <model id>"
};

// Residuals of `fit` (KineticFit::residuals, in KineticAnalysis::data order)
// against [S]; one QScatterSeries per inhibitor level named as the level
// label, and a QLineSeries "zero". `fit` must be a fit of
// analysis.kinetics.data (a candidate of analysis.kinetics.choice); a fit
// without residuals gives an empty chart titled so. Caller owns the chart.
QChart* MakeResidualChart(const Analysis& analysis, const KineticFit& fit,
                          const ResidualChartOptions& options);

// ---------------------------------------------------------------------------
// Plate map.

enum class PlateMapQuantity {
  kRate,      // corrected initial rate, µM/min (sample wells; see rate_all_roles)
  kRSquared,  // R² of the rate model over the window, any well with a rate
  kRole,      // the layout role, categorical
};
// "rate", "r-squared", "role"
const char* PlateMapQuantityToString(PlateMapQuantity quantity);

struct PlateMapOptions {
  // Colour scale limits; nullopt: the smallest and largest value of the
  // wells shown (excluded wells count too). Ignored for kRole. A scale of
  // zero width paints every valued well at its middle.
  std::optional<std::pair<double, double>> range;
  // Which wells get a value for kRate: false shows sample wells only, true
  // every well with a rate (blanks show their own, uncorrected rate).
  bool rate_all_roles = false;
  // Flags that do not earn a well the flagged mark. A resolved coupling lag
  // ("lag") is expected in a coupled assay, so by default it is not marked.
  std::vector<std::string> unmarked_flags = {"lag"};
  // Row letters and column numbers around the grid.
  bool show_labels = true;
  // Colour bar (kRate, kRSquared) or role key (kRole) to the right.
  bool show_legend = true;
  // A title line above the grid ("" none).
  QString title;
};

// Where PaintPlateMap puts things inside `rect`; exposed for hit testing in
// the window and for tests.
struct PlateMapGeometry {
  QRectF title_rect;    // empty when there is no title
  QRectF grid_rect;     // the wells' area
  QRectF legend_rect;   // colour bar or role key (empty when not shown)
  double well_radius = 0.0;
  std::vector<QPointF> well_centres;  // by well index (row * columns + column)
  // The well under a point, or -1.
  int WellAt(const QPointF& point) const;
};
PlateMapGeometry LayOutPlateMap(const QRectF& rect, const PlateGeometry& geometry,
                                const PlateMapOptions& options);

// Whether the well gets the flagged mark: it is not empty and has a flag
// outside options.unmarked_flags.
bool PlateMapFlagged(const WellRate& well, const PlateMapOptions& options);
// The value of one well for a quantity, nullopt when it has none (no rate;
// empty well; a role not shown for kRate). kRole gives the role's index in
// WellRole order.
std::optional<double> PlateMapValue(const WellRate& well, PlateMapQuantity quantity,
                                    const PlateMapOptions& options);
// The scale the map uses: options.range, or the wells' extent.
std::pair<double, double> PlateMapRange(const PlateRates& rates, PlateMapQuantity quantity,
                                        const PlateMapOptions& options);
// Colour of a value on a map with that scale (viridis; kRole: a category
// colour per role, empty grey).
QColor PlateMapColour(std::optional<double> value, PlateMapQuantity quantity,
                      std::pair<double, double> range);

// Paints into `rect`. Wells not in `rates` (no data) are drawn grey and
// unfilled. The painter's state is restored afterwards.
void PaintPlateMap(QPainter* painter, const QRectF& rect, const PlateRates& rates,
                   const PlateGeometry& geometry, PlateMapQuantity quantity,
                   const PlateMapOptions& options);

}  // namespace ratewell
