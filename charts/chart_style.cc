#include "charts/chart_style.h"

#include <QBrush>
#include <QChart>
#include <QGraphicsLayout>
#include <QLegend>
#include <QPen>

#include <algorithm>
#include <array>
#include <cmath>

namespace ratewell {
namespace {

// Okabe & Ito (2008) colours without black, strong contrasts first: blue,
// vermillion, bluish green, orange, reddish purple, sky blue, yellow.
constexpr std::array<QRgb, kCategoryColourCount> kCategory = {
    0xff0072b2, 0xffd55e00, 0xff009e73, 0xffe69f00, 0xffcc79a7, 0xff56b4e9, 0xfff0e442};

// Entries 0, 8, …, 248 and 255 of matplotlib's 256-entry viridis table
// (matplotlib 3.6.3, `matplotlib.colormaps['viridis'].colors`, computed),
// placed at t = entry / 255.
struct ViridisSample {
  int entry;
  double r, g, b;
};
constexpr std::array<ViridisSample, 33> kViridis = {{
    {0, 0.267004, 0.004874, 0.329415},   {8, 0.277018, 0.050344, 0.375715},
    {16, 0.282327, 0.094955, 0.417331},  {24, 0.282884, 0.135920, 0.453427},
    {32, 0.278826, 0.175490, 0.483397},  {40, 0.270595, 0.214069, 0.507052},
    {48, 0.258965, 0.251537, 0.524736},  {56, 0.244972, 0.287675, 0.537260},
    {64, 0.229739, 0.322361, 0.545706},  {72, 0.214298, 0.355619, 0.551184},
    {80, 0.199430, 0.387607, 0.554642},  {88, 0.185556, 0.418570, 0.556753},
    {96, 0.172719, 0.448791, 0.557885},  {104, 0.160665, 0.478540, 0.558115},
    {112, 0.149039, 0.508051, 0.557250}, {120, 0.137770, 0.537492, 0.554906},
    {128, 0.127568, 0.566949, 0.550556}, {136, 0.120565, 0.596422, 0.543611},
    {144, 0.120638, 0.625828, 0.533488}, {152, 0.132268, 0.655014, 0.519661},
    {160, 0.157851, 0.683765, 0.501686}, {168, 0.196571, 0.711827, 0.479221},
    {176, 0.246070, 0.738910, 0.452024}, {184, 0.304148, 0.764704, 0.419943},
    {192, 0.369214, 0.788888, 0.382914}, {200, 0.440137, 0.811138, 0.340967},
    {208, 0.515992, 0.831158, 0.294279}, {216, 0.595839, 0.848717, 0.243329},
    {224, 0.678489, 0.863742, 0.189503}, {232, 0.762373, 0.876424, 0.137064},
    {240, 0.845561, 0.887322, 0.099702}, {248, 0.926106, 0.897330, 0.104071},
    {255, 0.993248, 0.906157, 0.143936},
}};

}  // namespace

QColor CategoryColour(int index) {
  const int n = kCategoryColourCount;
  return QColor::fromRgba(kCategory[static_cast<std::size_t>(((index % n) + n) % n)]);
}

QColor ViridisColour(double t) {
  if (std::isnan(t)) return QColor::fromRgba(kNoValueColour);
  const double position = std::clamp(t, 0.0, 1.0) * 255.0;
  std::size_t upper = 1;
  while (upper + 1 < kViridis.size() && kViridis[upper].entry < position) ++upper;
  const ViridisSample& a = kViridis[upper - 1];
  const ViridisSample& b = kViridis[upper];
  const double f = std::clamp((position - a.entry) / (b.entry - a.entry), 0.0, 1.0);
  return QColor::fromRgbF(static_cast<float>(a.r + f * (b.r - a.r)),
                          static_cast<float>(a.g + f * (b.g - a.g)),
                          static_cast<float>(a.b + f * (b.b - a.b)));
}

QFont ChartFont(ChartText role) {
  QFont font(QStringLiteral("DejaVu Sans"));
  font.setStyleHint(QFont::SansSerif);
  // Any letter spacing other than zero keeps Qt's shaper from joining "fi"
  // into a ligature, so chart text stays searchable in a PDF.
  font.setLetterSpacing(QFont::AbsoluteSpacing, 1.0 / 32.0);  // not 0 in 1/64 fixed point
  switch (role) {
    case ChartText::kTitle:
      font.setPointSizeF(10.0);
      font.setBold(true);
      break;
    case ChartText::kAxis:
      font.setPointSizeF(8.5);
      break;
    case ChartText::kTick:
      font.setPointSizeF(7.5);
      break;
    case ChartText::kSmall:
      font.setPointSizeF(6.0);
      break;
  }
  return font;
}

void ApplyChartStyle(QChart* chart, bool compact) {
  chart->setTheme(QChart::ChartThemeLight);
  chart->setBackgroundBrush(Qt::white);
  chart->setBackgroundPen(Qt::NoPen);
  chart->setBackgroundRoundness(0);
  chart->setDropShadowEnabled(false);
  chart->setAnimationOptions(QChart::NoAnimation);
  chart->setTitleBrush(QColor::fromRgba(kInkColour));
  if (compact) {
    QFont title = ChartFont(ChartText::kSmall);
    title.setBold(true);
    chart->setTitleFont(title);
    chart->setMargins(QMargins(1, 1, 1, 1));
    chart->layout()->setContentsMargins(0, 0, 0, 0);
    chart->legend()->hide();
  } else {
    chart->setTitleFont(ChartFont(ChartText::kTitle));
    chart->setMargins(QMargins(4, 4, 4, 4));
    chart->layout()->setContentsMargins(0, 0, 0, 0);
    chart->legend()->setFont(ChartFont(ChartText::kTick));
    chart->legend()->setLabelColor(QColor::fromRgba(kInkColour));
  }
}

}  // namespace ratewell
