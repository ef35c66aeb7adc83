// The shared charts: what each picture holds, checked on small hand-made
// plates and analyses whose every number is known.
#include "charts/charts.h"

#include <gtest/gtest.h>

#include <QAbstractAxis>
#include <QApplication>
#include <QAreaSeries>
#include <QChart>
#include <QImage>
#include <QLineSeries>
#include <QLogValueAxis>
#include <QPainter>
#include <QScatterSeries>
#include <QValueAxis>

#include <cmath>
#include <memory>
#include <set>

#include "charts/chart_style.h"

namespace ratewell {
namespace {

// Qt Charts items are QGraphicsWidgets: one QApplication for the whole run
// (offscreen: CTest sets QT_QPA_PLATFORM for the suite).
class QtEnvironment : public ::testing::Environment {
 public:
  void SetUp() override {
    if (QCoreApplication::instance() == nullptr) {
      if (qEnvironmentVariableIsEmpty("QT_QPA_PLATFORM")) qputenv("QT_QPA_PLATFORM", "offscreen");
      static int argc = 1;
      static char name[] = "charts_tests";
      static char* argv[] = {name, nullptr};
      app_ = std::make_unique<QApplication>(argc, argv);
    }
  }
  void TearDown() override { app_.reset(); }

 private:
  std::unique_ptr<QApplication> app_;
};
const auto* const kQtEnvironment = ::testing::AddGlobalTestEnvironment(new QtEnvironment);

// Exact arithmetic on doubles that went through QPointF (doubles too).
constexpr double kExact = 1e-12;

QXYSeries* FindSeries(QChart* chart, const QString& name) {
  for (QAbstractSeries* s : chart->series()) {
    if (s->name() == name) return qobject_cast<QXYSeries*>(s);
  }
  return nullptr;
}

QAbstractSeries* FindAnySeries(QChart* chart, const QString& name) {
  for (QAbstractSeries* s : chart->series()) {
    if (s->name() == name) return s;
  }
  return nullptr;
}

int CountSeries(QChart* chart, const QString& suffix) {
  int n = 0;
  for (QAbstractSeries* s : chart->series()) n += s->name().endsWith(suffix) ? 1 : 0;
  return n;
}

std::pair<double, double> AxisRange(QAbstractAxis* axis) {
  if (auto* v = qobject_cast<QValueAxis*>(axis)) return {v->min(), v->max()};
  if (auto* l = qobject_cast<QLogValueAxis*>(axis)) return {l->min(), l->max()};
  return {NAN, NAN};
}

// Every point of every XY series lies within the chart's axes.
void ExpectAxesHoldEveryPoint(QChart* chart) {
  const auto x = AxisRange(chart->axes(Qt::Horizontal).front());
  const auto y = AxisRange(chart->axes(Qt::Vertical).front());
  for (QAbstractSeries* s : chart->series()) {
    auto* xy = qobject_cast<QXYSeries*>(s);
    if (xy == nullptr) continue;
    for (const QPointF& p : xy->points()) {
      EXPECT_GE(p.x(), x.first) << s->name().toStdString();
      EXPECT_LE(p.x(), x.second) << s->name().toStdString();
      EXPECT_GE(p.y(), y.first) << s->name().toStdString();
      EXPECT_LE(p.y(), y.second) << s->name().toStdString();
    }
  }
}

// ---------------------------------------------------------------------------
// Trace.

// One well (B02) read 20 times, every 0.5 min: A = 1.2 − 0.02·t exactly, with
// read 3 saturated and read 17 a spike of 2.8 over the 2.5 ceiling. The
// estimate used the window [2.0, 7.0] min.
struct TraceFixture {
  Plate plate;
  WellRate well;
  static constexpr double kSlope = -0.02;
  static constexpr double kStart = 2.0;
  static constexpr double kEnd = 7.0;

  TraceFixture() {
    plate.Allocate(PlateGeometry{8, 12}, {340.0});
    well.well = 13;  // B02
    well.name = "B02";
    well.role = WellRole::kSample;
    Series& s = plate.at(0, well.well);
    for (int i = 0; i < 20; ++i) {
      const double t = 0.5 * i;
      if (i == 3) {
        s.Append(t, NAN, PointStatus::kSaturated);
      } else if (i == 17) {
        s.Append(t, 2.8, PointStatus::kValid);
      } else {
        s.Append(t, 1.2 + kSlope * t, PointStatus::kValid);
      }
    }
    RateEstimate& e = well.estimate;
    e.ok = true;
    e.rate_uM_per_min = 3.215;
    e.slope_A_per_min = kSlope;
    e.window_start_min = kStart;
    e.window_end_min = kEnd;
    e.points = 11;
    well.rate_uM_per_min = 3.2;
    well.se_uM_per_min = 0.05;
  }
};

TEST(TraceChart, ShadedWindowSpansExactlyTheWellsRateWindow) {
  TraceFixture f;
  std::unique_ptr<QChart> chart(MakeTraceChart(f.plate, f.well, {}));
  auto* band = qobject_cast<QAreaSeries*>(FindAnySeries(chart.get(), kTraceWindowSeries));
  ASSERT_NE(band, nullptr);
  const QList<QPointF> upper = band->upperSeries()->points();
  ASSERT_EQ(upper.size(), 2);
  EXPECT_NEAR(upper.front().x(), TraceFixture::kStart, kExact);
  EXPECT_NEAR(upper.back().x(), TraceFixture::kEnd, kExact);
  // The band covers the whole height of the plot.
  auto* y = qobject_cast<QValueAxis*>(chart->axes(Qt::Vertical).front());
  EXPECT_NEAR(upper.front().y(), y->max(), kExact);
  EXPECT_NEAR(band->lowerSeries()->points().front().y(), y->min(), kExact);
}

TEST(TraceChart, UsedUnusedAndRejectedReadsAreSeparated) {
  TraceFixture f;
  std::unique_ptr<QChart> chart(MakeTraceChart(f.plate, f.well, {}));
  QXYSeries* used = FindSeries(chart.get(), kTraceUsedSeries);
  QXYSeries* unused = FindSeries(chart.get(), kTraceUnusedSeries);
  QXYSeries* rejected = FindSeries(chart.get(), kTraceRejectedSeries);
  ASSERT_NE(used, nullptr);
  ASSERT_NE(unused, nullptr);
  ASSERT_NE(rejected, nullptr);
  // Reads at 2.0, 2.5, …, 7.0 min: 11 used. Reads 0, 0.5 and 7.5 … 9.5 are
  // outside, less the saturated read at 1.5 and the spike at 8.5: 2 + 5.
  EXPECT_EQ(used->count(), 11);
  EXPECT_EQ(unused->count(), 7);
  EXPECT_EQ(rejected->count(), 2);
  for (const QPointF& p : used->points()) {
    EXPECT_GE(p.x(), TraceFixture::kStart);
    EXPECT_LE(p.x(), TraceFixture::kEnd);
  }
  // The saturated read (no value) is drawn above every reading.
  bool saturated_above = false;
  for (const QPointF& p : rejected->points()) {
    if (std::abs(p.x() - 1.5) < kExact) saturated_above = p.y() > 2.8;
  }
  EXPECT_TRUE(saturated_above);
  ExpectAxesHoldEveryPoint(chart.get());
}

TEST(TraceChart, WindowLineIsTheLeastSquaresLineOfAnExactlyStraightTrace) {
  // For readings exactly on A = 1.2 − 0.02 t the least-squares line is the
  // trace itself (closed form), so the line's ends lie on it.
  TraceFixture f;
  std::unique_ptr<QChart> chart(MakeTraceChart(f.plate, f.well, {}));
  QXYSeries* line = FindSeries(chart.get(), kTraceSlopeSeries);
  ASSERT_NE(line, nullptr);
  ASSERT_EQ(line->count(), 2);
  for (const QPointF& p : line->points()) EXPECT_NEAR(p.y(), 1.2 - 0.02 * p.x(), kExact);
  EXPECT_NEAR(line->at(0).x(), TraceFixture::kStart, kExact);
  EXPECT_NEAR(line->at(1).x(), TraceFixture::kEnd, kExact);
}

TEST(TraceChart, TimeAxisStartsAtZeroRatherThanBelowIt) {
  TraceFixture f;
  std::unique_ptr<QChart> chart(MakeTraceChart(f.plate, f.well, {}));
  const auto x = AxisRange(chart->axes(Qt::Horizontal).front());
  EXPECT_EQ(x.first, 0.0);
  EXPECT_GE(x.second, 9.5);
}

TEST(TraceChart, WellWithoutARateHasNoWindowNoLineAndSaysSo) {
  TraceFixture f;
  f.well.estimate = RateEstimate();
  f.well.estimate.message = "needs at least 3 usable reads";
  f.well.rate_uM_per_min = NAN;
  std::unique_ptr<QChart> chart(MakeTraceChart(f.plate, f.well, {}));
  EXPECT_EQ(FindAnySeries(chart.get(), kTraceWindowSeries), nullptr);
  EXPECT_EQ(FindSeries(chart.get(), kTraceSlopeSeries), nullptr);
  EXPECT_EQ(FindSeries(chart.get(), kTraceUsedSeries), nullptr);
  ASSERT_NE(FindSeries(chart.get(), kTraceUnusedSeries), nullptr);
  EXPECT_TRUE(chart->title().contains(QStringLiteral("no rate"))) << chart->title().toStdString();
}

TEST(TraceChart, ExcludedWellSaysSoInItsTitle) {
  TraceFixture f;
  f.well.excluded = true;
  f.well.exclusion_reason = "bubble";
  std::unique_ptr<QChart> chart(MakeTraceChart(f.plate, f.well, {}));
  EXPECT_TRUE(chart->title().contains(QStringLiteral("excluded")));
}

TEST(TraceChart, PlateWithoutTheWavelengthGivesAnEmptyChart) {
  TraceFixture f;
  TraceChartOptions options;
  options.wavelength_nm = 450.0;
  std::unique_ptr<QChart> chart(MakeTraceChart(f.plate, f.well, options));
  EXPECT_EQ(FindSeries(chart.get(), kTraceUsedSeries), nullptr);
  EXPECT_EQ(FindSeries(chart.get(), kTraceUnusedSeries), nullptr);
}

// ---------------------------------------------------------------------------
// Rate against [S] and residuals.

// Competitive inhibition, v = Vmax·S/(Km·(1 + I/Ki) + S) with Vmax 2, Km 50,
// Ki 4 (values of our own), at S = 10, 40, 160, 640 µM and I = 0, 2, 8 µM.
// One well (S = 40, I = 2) is excluded; S = 0 wells are left in one level
// for the log axis test.
constexpr double kVmax = 2.0, kKm = 50.0, kKi = 4.0;
double Competitive(double s, double i) { return kVmax * s / (kKm * (1.0 + i / kKi) + s); }

struct SaturationFixture {
  Analysis analysis;
  KineticFit fit;

  SaturationFixture() {
    PlateRates rates;
    rates.plate = "plate.csv";
    int index = 0;
    for (double i : {8.0, 0.0, 2.0}) {  // not in order: the chart sorts levels
      for (double s : {10.0, 40.0, 160.0, 640.0}) {
        WellRate w;
        w.well = index;
        w.name = WellName(index, PlateGeometry{8, 12});
        ++index;
        w.role = WellRole::kSample;
        w.substrate_uM = s;
        w.inhibitor_uM = i;
        w.estimate.ok = true;
        w.rate_uM_per_min = Competitive(s, i) * (1.0 + 0.01 * ((index % 3) - 1));
        w.se_uM_per_min = 0.02;
        w.ci95_lo_uM_per_min = w.rate_uM_per_min - 0.05;
        w.ci95_hi_uM_per_min = w.rate_uM_per_min + 0.05;
        w.excluded = (s == 40.0 && i == 2.0);
        rates.wells.push_back(w);
        if (!w.excluded) {
          KineticObservation o;
          o.substrate_uM = s;
          o.inhibitor_uM = i;
          o.rate = w.rate_uM_per_min;
          analysis.kinetics.data.points.push_back(o);
        }
      }
    }
    // A blank: never drawn.
    WellRate blank;
    blank.well = index;
    blank.name = "H12";
    blank.role = WellRole::kBlank;
    blank.substrate_uM = 100.0;
    blank.estimate.ok = true;
    blank.rate_uM_per_min = 0.01;
    rates.wells.push_back(blank);
    analysis.plate_rates.push_back(rates);

    fit.model = KineticModel::kCompetitive;
    fit.group_values = {{kVmax, kKm, kKi}};
    for (const KineticObservation& o : analysis.kinetics.data.points) {
      fit.fitted.push_back(Competitive(o.substrate_uM, o.inhibitor_uM));
      fit.residuals.push_back(o.rate - fit.fitted.back());
    }
    analysis.kinetics.attempted = true;
  }
};

TEST(SaturationChart, InhibitorLevelsAreSortedAndLabelled) {
  SaturationFixture f;
  const std::vector<double> levels = InhibitorLevels(f.analysis);
  ASSERT_EQ(levels.size(), 3u);
  EXPECT_EQ(levels[0], 0.0);
  EXPECT_EQ(levels[1], 2.0);
  EXPECT_EQ(levels[2], 8.0);
  EXPECT_EQ(InhibitorLevelLabel(0.0), QStringLiteral("I = 0 µM"));
  EXPECT_EQ(InhibitorLevelLabel(2.5), QStringLiteral("I = 2.5 µM"));
  EXPECT_EQ(InhibitorLevelLabel(0.123456), QStringLiteral("I = 0.123 µM"));
}

TEST(SaturationChart, OneSeriesAndOneCurvePerInhibitorLevelInItsOwnColour) {
  SaturationFixture f;
  std::unique_ptr<QChart> chart(MakeSaturationChart(f.analysis, &f.fit, {}));
  std::set<QRgb> colours;
  const std::vector<double> levels = InhibitorLevels(f.analysis);
  for (std::size_t k = 0; k < levels.size(); ++k) {
    const QString label = InhibitorLevelLabel(levels[k]);
    auto* points = qobject_cast<QScatterSeries*>(FindSeries(chart.get(), label));
    ASSERT_NE(points, nullptr) << label.toStdString();
    EXPECT_EQ(points->count(), levels[k] == 2.0 ? 3 : 4) << label.toStdString();
    EXPECT_EQ(points->color().rgb(), CategoryColour(static_cast<int>(k)).rgb());
    colours.insert(points->color().rgb());
    ASSERT_NE(FindSeries(chart.get(), label + QStringLiteral(" fit")), nullptr);
  }
  EXPECT_EQ(colours.size(), 3u);
  EXPECT_EQ(CountSeries(chart.get(), QStringLiteral(" fit")), 3);
  // A whisker per drawn well (11 used + 1 excluded); the blank is not drawn.
  EXPECT_EQ(CountSeries(chart.get(), QStringLiteral(" interval")), 12);
}

TEST(SaturationChart, FittedCurveIsTheModelAtEachLevel) {
  SaturationFixture f;
  std::unique_ptr<QChart> chart(MakeSaturationChart(f.analysis, &f.fit, {}));
  QXYSeries* curve = FindSeries(chart.get(), QStringLiteral("I = 8 µM fit"));
  ASSERT_NE(curve, nullptr);
  ASSERT_GE(curve->count(), 100);
  // Closed form above, evaluated here; the chart got it through Predict.
  constexpr double kCurveTolerance = 1e-12;
  for (const QPointF& p : curve->points()) {
    EXPECT_NEAR(p.y(), Competitive(p.x(), 8.0), kCurveTolerance * kVmax);
  }
  EXPECT_NEAR(curve->points().front().x(), 0.0, kExact);
  EXPECT_NEAR(curve->points().back().x(), 640.0, kExact);
}

TEST(SaturationChart, ExcludedWellIsAHollowMarkerOfItsLevel) {
  SaturationFixture f;
  std::unique_ptr<QChart> chart(MakeSaturationChart(f.analysis, &f.fit, {}));
  auto* excluded = qobject_cast<QScatterSeries*>(FindSeries(chart.get(), QStringLiteral("I = 2 µM excluded")));
  ASSERT_NE(excluded, nullptr);
  ASSERT_EQ(excluded->count(), 1);
  EXPECT_EQ(excluded->at(0).x(), 40.0);
  EXPECT_EQ(excluded->brush().style(), Qt::NoBrush);
  EXPECT_EQ(excluded->pen().color().rgb(), CategoryColour(1).rgb());

  SaturationChartOptions hide;
  hide.show_excluded = false;
  std::unique_ptr<QChart> without(MakeSaturationChart(f.analysis, &f.fit, hide));
  EXPECT_EQ(FindSeries(without.get(), QStringLiteral("I = 2 µM excluded")), nullptr);
}

TEST(SaturationChart, AxesHoldEveryPointWhiskerAndCurveAndStartAtZero) {
  SaturationFixture f;
  std::unique_ptr<QChart> chart(MakeSaturationChart(f.analysis, &f.fit, {}));
  ExpectAxesHoldEveryPoint(chart.get());
  EXPECT_EQ(AxisRange(chart->axes(Qt::Horizontal).front()).first, 0.0);
  EXPECT_EQ(AxisRange(chart->axes(Qt::Vertical).front()).first, 0.0);
}

TEST(SaturationChart, LogAxisLeavesOutZeroSubstrateAndHoldsTheRest) {
  SaturationFixture f;
  WellRate zero = f.analysis.plate_rates[0].wells[0];
  zero.substrate_uM = 0.0;
  zero.name = "G01";
  f.analysis.plate_rates[0].wells.push_back(zero);
  SaturationChartOptions options;
  options.log_substrate_axis = true;
  std::unique_ptr<QChart> chart(MakeSaturationChart(f.analysis, &f.fit, options));
  auto* axis = qobject_cast<QLogValueAxis*>(chart->axes(Qt::Horizontal).front());
  ASSERT_NE(axis, nullptr);
  EXPECT_GT(axis->min(), 0.0);
  EXPECT_LE(axis->min(), 10.0);
  EXPECT_GE(axis->max(), 640.0);
  EXPECT_TRUE(chart->title().contains(QStringLiteral("1 wells at [S] = 0 not shown")));
  ExpectAxesHoldEveryPoint(chart.get());
}

TEST(SaturationChart, WithoutAFitOnlyTheWellsAreDrawn) {
  SaturationFixture f;
  std::unique_ptr<QChart> chart(MakeSaturationChart(f.analysis, nullptr, {}));
  EXPECT_EQ(CountSeries(chart.get(), QStringLiteral(" fit")), 0);
  EXPECT_NE(FindSeries(chart.get(), QStringLiteral("I = 0 µM")), nullptr);
}

TEST(ResidualChart, OneSeriesPerLevelAndAZeroLineAcrossTheAxis) {
  SaturationFixture f;
  std::unique_ptr<QChart> chart(MakeResidualChart(f.analysis, f.fit, {}));
  int points = 0;
  for (const double level : InhibitorLevels(f.analysis)) {
    QXYSeries* s = FindSeries(chart.get(), InhibitorLevelLabel(level));
    ASSERT_NE(s, nullptr);
    points += s->count();
  }
  EXPECT_EQ(points, static_cast<int>(f.fit.residuals.size()));
  QXYSeries* zero = FindSeries(chart.get(), QStringLiteral("zero"));
  ASSERT_NE(zero, nullptr);
  const auto x = AxisRange(chart->axes(Qt::Horizontal).front());
  EXPECT_EQ(zero->at(0), QPointF(x.first, 0.0));
  EXPECT_EQ(zero->at(1), QPointF(x.second, 0.0));
  // Symmetric about zero.
  const auto y = AxisRange(chart->axes(Qt::Vertical).front());
  EXPECT_NEAR(y.first, -y.second, kExact);
  ExpectAxesHoldEveryPoint(chart.get());
}

// ---------------------------------------------------------------------------
// Colours.

// sRGB (IEC 61966-2-1) to CIE 1976 L*, D65 white: Y from the linearised
// channels with the Rec. 709 luminance weights, L* = 116·f(Y) − 16.
double Lightness(const QColor& c) {
  auto linear = [](double v) { return v <= 0.04045 ? v / 12.92 : std::pow((v + 0.055) / 1.055, 2.4); };
  const double y = 0.2126 * linear(c.redF()) + 0.7152 * linear(c.greenF()) + 0.0722 * linear(c.blueF());
  const double f = y > 216.0 / 24389.0 ? std::cbrt(y) : (24389.0 / 27.0 * y + 16.0) / 116.0;
  return 116.0 * f - 16.0;
}

TEST(Viridis, EndpointsAndAnInteriorEntryMatchMatplotlib) {
  // matplotlib 3.6.3, colormaps['viridis'].colors[k] × 255, computed:
  // entry 0 = (68.1, 1.2, 84.0), entry 37 = (69.9, 50.9, 127.2),
  // entry 255 = (253.3, 231.1, 36.7).
  constexpr int kTolerance8Bit = 1;  // rounding, and linear interpolation between our samples
  auto expect_rgb = [](const QColor& c, int r, int g, int b) {
    EXPECT_NEAR(c.red(), r, kTolerance8Bit);
    EXPECT_NEAR(c.green(), g, kTolerance8Bit);
    EXPECT_NEAR(c.blue(), b, kTolerance8Bit);
  };
  expect_rgb(ViridisColour(0.0), 68, 1, 84);
  expect_rgb(ViridisColour(37.0 / 255.0), 70, 51, 127);
  expect_rgb(ViridisColour(1.0), 253, 231, 37);
  // Clamped outside [0, 1].
  EXPECT_EQ(ViridisColour(-3.0).rgb(), ViridisColour(0.0).rgb());
  EXPECT_EQ(ViridisColour(7.0).rgb(), ViridisColour(1.0).rgb());
  EXPECT_EQ(ViridisColour(NAN).rgba(), kNoValueColour);
}

TEST(Viridis, LightnessRisesMonotonicallyFromDarkToLight) {
  double previous = -1.0;
  for (int k = 0; k <= 255; ++k) {
    const double l = Lightness(ViridisColour(k / 255.0));
    EXPECT_GT(l, previous) << "at " << k;
    previous = l;
  }
  EXPECT_LT(Lightness(ViridisColour(0.0)), 20.0);
  EXPECT_GT(Lightness(ViridisColour(1.0)), 85.0);
}

TEST(CategoryColours, AreTheOkabeItoSetWithoutBlackAndCycle) {
  // Okabe & Ito (2008), Color Universal Design, RGB values as published
  // (from memory): blue, vermillion, bluish green, orange, reddish purple,
  // sky blue, yellow.
  const QRgb expected[] = {qRgb(0, 114, 178),   qRgb(213, 94, 0),   qRgb(0, 158, 115), qRgb(230, 159, 0),
                           qRgb(204, 121, 167), qRgb(86, 180, 233), qRgb(240, 228, 66)};
  std::set<QRgb> distinct;
  for (int k = 0; k < kCategoryColourCount; ++k) {
    EXPECT_EQ(CategoryColour(k).rgb(), expected[k]) << k;
    distinct.insert(CategoryColour(k).rgb());
  }
  EXPECT_EQ(distinct.size(), static_cast<std::size_t>(kCategoryColourCount));
  EXPECT_EQ(CategoryColour(kCategoryColourCount).rgb(), CategoryColour(0).rgb());
  EXPECT_EQ(CategoryColour(-1).rgb(), CategoryColour(kCategoryColourCount - 1).rgb());
}

// ---------------------------------------------------------------------------
// Plate map.

// A 96-well plate's rates: A01 (slowest, 1.0) … A03 (fastest, 3.0); A02
// excluded; B01 flagged "noisy"; B02 flagged only "lag"; B03 a sample with
// no rate; C01 an empty well with readings; the rest not read.
PlateRates MapRates() {
  PlateRates rates;
  auto add = [&rates](int index, WellRole role, double rate) {
    WellRate w;
    w.well = index;
    w.name = WellName(index, PlateGeometry{8, 12});
    w.role = role;
    if (std::isfinite(rate)) {
      w.estimate.ok = true;
      w.estimate.r_squared = 0.99;
      w.rate_uM_per_min = rate;
    }
    rates.wells.push_back(w);
    return &rates.wells.back();
  };
  add(0, WellRole::kSample, 1.0);
  add(1, WellRole::kSample, 2.0)->excluded = true;
  add(2, WellRole::kSample, 3.0);
  add(12, WellRole::kSample, 2.0)->flags = {"noisy"};
  add(13, WellRole::kSample, 2.0)->flags = {"lag"};
  add(14, WellRole::kSample, NAN)->flags = {"no-rate"};
  add(24, WellRole::kEmpty, NAN);
  return rates;
}

TEST(PlateMap, LayoutPutsEveryWellOnAGridAndFindsItBack) {
  const PlateGeometry geometry{8, 12};
  const PlateMapGeometry g = LayOutPlateMap(QRectF(0, 0, 600, 400), geometry, {});
  ASSERT_EQ(g.well_centres.size(), 96u);
  const double pitch = g.well_centres[1].x() - g.well_centres[0].x();
  EXPECT_GT(pitch, 0.0);
  EXPECT_NEAR(g.well_centres[12].y() - g.well_centres[0].y(), pitch, 1e-9);
  for (std::size_t i = 0; i < g.well_centres.size(); ++i) {
    EXPECT_TRUE(g.grid_rect.contains(g.well_centres[i])) << i;
    EXPECT_EQ(g.WellAt(g.well_centres[i]), static_cast<int>(i));
  }
  EXPECT_FALSE(g.grid_rect.intersects(g.legend_rect));
  EXPECT_EQ(g.WellAt(QPointF(-5, -5)), -1);
}

TEST(PlateMap, ScaleRunsFromTheSlowestToTheFastestSampleWell) {
  const PlateRates rates = MapRates();
  const auto range = PlateMapRange(rates, PlateMapQuantity::kRate, {});
  EXPECT_EQ(range.first, 1.0);
  EXPECT_EQ(range.second, 3.0);
  EXPECT_EQ(PlateMapColour(1.0, PlateMapQuantity::kRate, range).rgb(), ViridisColour(0.0).rgb());
  EXPECT_EQ(PlateMapColour(3.0, PlateMapQuantity::kRate, range).rgb(), ViridisColour(1.0).rgb());
  EXPECT_EQ(PlateMapColour(std::nullopt, PlateMapQuantity::kRate, range).rgba(), kNoValueColour);
  PlateMapOptions fixed;
  fixed.range = std::make_pair(0.0, 10.0);
  EXPECT_EQ(PlateMapRange(rates, PlateMapQuantity::kRate, fixed), std::make_pair(0.0, 10.0));
}

TEST(PlateMap, OnlyFlagsOtherThanLagEarnTheMark) {
  const PlateRates rates = MapRates();
  const PlateMapOptions options;
  EXPECT_TRUE(PlateMapFlagged(rates.wells[3], options));   // noisy
  EXPECT_FALSE(PlateMapFlagged(rates.wells[4], options));  // lag only
  EXPECT_FALSE(PlateMapFlagged(rates.wells[6], options));  // empty well
  PlateMapOptions every;
  every.unmarked_flags.clear();
  EXPECT_TRUE(PlateMapFlagged(rates.wells[4], every));
}

TEST(PlateMap, PaintedWellsShowTheirColourCrossAndMark) {
  const PlateGeometry geometry{8, 12};
  const PlateRates rates = MapRates();
  QImage image(900, 600, QImage::Format_ARGB32);
  image.fill(Qt::white);
  const QRectF rect(0, 0, 900, 600);
  {
    QPainter painter(&image);
    PaintPlateMap(&painter, rect, rates, geometry, PlateMapQuantity::kRate, {});
  }
  const PlateMapGeometry g = LayOutPlateMap(rect, geometry, {});
  const double r = g.well_radius;
  auto pixel = [&](int well, double dx, double dy) {
    const QPointF p = g.well_centres[static_cast<std::size_t>(well)] + QPointF(dx * r, dy * r);
    return image.pixelColor(static_cast<int>(std::lround(p.x())), static_cast<int>(std::lround(p.y())));
  };
  // Away from the centre and the mark corner, a well shows its colour.
  constexpr int kColourTolerance = 2;  // antialiasing does not reach these pixels
  auto expect_colour = [](const QColor& got, const QColor& want) {
    EXPECT_NEAR(got.red(), want.red(), kColourTolerance);
    EXPECT_NEAR(got.green(), want.green(), kColourTolerance);
    EXPECT_NEAR(got.blue(), want.blue(), kColourTolerance);
  };
  expect_colour(pixel(0, -0.5, 0.3), ViridisColour(0.0));
  expect_colour(pixel(2, -0.5, 0.3), ViridisColour(1.0));
  expect_colour(pixel(14, -0.5, 0.3), QColor::fromRgba(kNoValueColour));  // no rate
  expect_colour(pixel(24, -0.5, 0.3), QColor::fromRgba(kNoValueColour));  // empty
  expect_colour(pixel(50, -0.5, 0.3), QColor(Qt::white));                 // not read
  // The excluded well's centre is covered by the dark cross; a well with a
  // value and no cross is not dark there.
  EXPECT_LT(pixel(1, 0.0, 0.0).lightness(), 80);
  EXPECT_GT(pixel(12, 0.0, 0.0).lightness(), 80);
  // The flag mark sits at the upper right of the flagged well only.
  expect_colour(pixel(12, 0.72, -0.72), QColor::fromRgba(kFlagMarkColour));
  const QColor lag_only = pixel(13, 0.72, -0.72);
  EXPECT_GT(std::abs(lag_only.red() - QColor::fromRgba(kFlagMarkColour).red()) +
                std::abs(lag_only.blue() - QColor::fromRgba(kFlagMarkColour).blue()),
            30);
}

TEST(PlateMap, RoleMapGivesEachRoleItsOwnColour) {
  std::set<QRgb> colours;
  for (int role = 0; role < 5; ++role) {
    colours.insert(PlateMapColour(static_cast<double>(role), PlateMapQuantity::kRole, {0.0, 4.0}).rgb());
  }
  EXPECT_EQ(colours.size(), 5u);
  EXPECT_STREQ(PlateMapQuantityToString(PlateMapQuantity::kRSquared), "r-squared");
}

}  // namespace
}  // namespace ratewell
