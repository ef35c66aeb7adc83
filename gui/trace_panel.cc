#include "gui/trace_panel.h"

#include <QAreaSeries>
#include <QChart>
#include <QDialog>
#include <QDialogButtonBox>
#include <QDoubleSpinBox>
#include <QFormLayout>
#include <QHBoxLayout>
#include <QLabel>
#include <QLegend>
#include <QLineSeries>
#include <QMouseEvent>
#include <QPushButton>
#include <QScatterSeries>
#include <QValueAxis>
#include <QVBoxLayout>
#include <algorithm>
#include <cmath>
#include <limits>

#include "charts/chart_style.h"
#include "charts/charts.h"
#include "gui/display_text.h"

namespace ratewell::gui {
namespace {

constexpr int kMaxOtherTraces = 8;
// Pixels either side of a window edge that pick it up.
constexpr double kEdgeGrabPixels = 6.0;

QXYSeries* SeriesNamed(QChart* chart, const char* name) {
  for (QAbstractSeries* s : chart->series()) {
    if (s->name() == name) return qobject_cast<QXYSeries*>(s);
  }
  return nullptr;
}

QValueAxis* Axis(QChart* chart, Qt::Orientation orientation) {
  const auto axes = chart->axes(orientation);
  return axes.isEmpty() ? nullptr : qobject_cast<QValueAxis*>(axes.first());
}

const WellRate* FindWell(const PlateRates& rates, int well) {
  for (const WellRate& w : rates.wells) {
    if (w.well == well) return &w;
  }
  return nullptr;
}

}  // namespace

TraceChartView::TraceChartView(QWidget* parent) : QChartView(parent) {
  setRenderHint(QPainter::Antialiasing);
  setMouseTracking(true);
  setRubberBand(QChartView::NoRubberBand);
}

void TraceChartView::showChart(QChart* chart, std::optional<std::pair<double, double>> window) {
  QChart* old = this->chart();
  setChart(chart);
  delete old;
  window_ = window;
  dragging_ = 0;
  if (window_) moveBand(window_->first, window_->second);
}

int TraceChartView::edgeAt(const QPointF& point) const {
  if (!window_ || !chart()) return 0;
  const double x_start = chart()->mapToPosition(QPointF(window_->first, 0)).x();
  const double x_end = chart()->mapToPosition(QPointF(window_->second, 0)).x();
  const QPointF scene = mapToScene(point.toPoint());
  if (!chart()->plotArea().adjusted(-kEdgeGrabPixels, 0, kEdgeGrabPixels, 0).contains(scene)) return 0;
  const double d_start = std::abs(scene.x() - x_start);
  const double d_end = std::abs(scene.x() - x_end);
  if (std::min(d_start, d_end) > kEdgeGrabPixels) return 0;
  return d_start <= d_end ? 1 : 2;
}

void TraceChartView::moveBand(double start, double end) {
  QXYSeries* band_upper = nullptr;
  QXYSeries* band_lower = nullptr;
  for (QAbstractSeries* s : chart()->series()) {
    if (auto* area = qobject_cast<QAreaSeries*>(s); area && s->name() == kTraceWindowSeries) {
      band_upper = area->upperSeries();
      band_lower = area->lowerSeries();
    }
  }
  const QValueAxis* y_axis = Axis(chart(), Qt::Vertical);
  for (QXYSeries* edge : {band_upper, band_lower}) {
    if (!edge || edge->count() < 2) continue;
    // The band spans the whole height of the plot, whatever the y range now is.
    double y = edge->at(0).y();
    if (y_axis) y = edge == band_upper ? y_axis->max() : y_axis->min();
    edge->replace(QList<QPointF>{QPointF(start, y), QPointF(end, y)});
  }
}

void TraceChartView::mousePressEvent(QMouseEvent* event) {
  dragging_ = event->button() == Qt::LeftButton ? edgeAt(event->position()) : 0;
  if (!dragging_) QChartView::mousePressEvent(event);
}

void TraceChartView::mouseMoveEvent(QMouseEvent* event) {
  if (!dragging_) {
    setCursor(edgeAt(event->position()) ? Qt::SizeHorCursor : Qt::ArrowCursor);
    QChartView::mouseMoveEvent(event);
    return;
  }
  const QPointF value = chart()->mapToValue(mapToScene(event->position().toPoint()));
  const QValueAxis* x_axis = Axis(chart(), Qt::Horizontal);
  double x = value.x();
  if (x_axis) x = std::clamp(x, x_axis->min(), x_axis->max());
  constexpr double kMinimumWidthMin = 1e-3;
  if (dragging_ == 1) {
    window_->first = std::min(x, window_->second - kMinimumWidthMin);
  } else {
    window_->second = std::max(x, window_->first + kMinimumWidthMin);
  }
  moveBand(window_->first, window_->second);
}

void TraceChartView::mouseReleaseEvent(QMouseEvent* event) {
  if (!dragging_) {
    QChartView::mouseReleaseEvent(event);
    return;
  }
  dragging_ = 0;
  emit windowEdited(window_->first, window_->second);
}

// --- TracePanel ------------------------------------------------------------------

TracePanel::TracePanel(QWidget* parent) : QWidget(parent) {
  header_ = new QLabel("Select a well on the plate to see its trace.", this);
  header_->setWordWrap(true);
  header_->setTextInteractionFlags(Qt::TextSelectableByMouse);
  trace_ = new TraceChartView(this);
  trace_->setToolTip("Drag either edge of the shaded band to choose the rate window");
  residuals_ = new QChartView(this);
  residuals_->setRenderHint(QPainter::Antialiasing);
  residuals_->setMinimumHeight(110);
  set_window_ = new QPushButton("Set &window…", this);
  automatic_window_ = new QPushButton("&Automatic window", this);
  auto* buttons = new QHBoxLayout;
  buttons->addWidget(header_, 1);
  buttons->addWidget(set_window_);
  buttons->addWidget(automatic_window_);
  auto* layout = new QVBoxLayout(this);
  layout->setContentsMargins(4, 4, 4, 4);
  layout->addLayout(buttons);
  layout->addWidget(trace_, 3);
  layout->addWidget(residuals_, 1);

  connect(trace_, &TraceChartView::windowEdited, this, [this](double start, double end) {
    if (!analysis_ || well_ < 0) return;
    const double first = firstRead();
    const double from = std::max(0.0, start - first);
    const double to = end - first;
    if (!(to > from)) return;
    emit windowRequested(plate_, WellName(well_, analysis_->plates[plate_].geometry),
                         std::make_pair(from, to));
  });
  connect(set_window_, &QPushButton::clicked, this, &TracePanel::askForWindow);
  connect(automatic_window_, &QPushButton::clicked, this, [this] {
    if (!analysis_ || well_ < 0) return;
    emit windowRequested(plate_, WellName(well_, analysis_->plates[plate_].geometry), std::nullopt);
  });
  showWells(nullptr, 0, -1, {});
}

double TracePanel::firstRead() const {
  const Plate& plate = analysis_->plates[static_cast<std::size_t>(plate_)];
  int channel = plate.ChannelOf(analysis_->settings.detection.wavelength_nm);
  if (channel < 0) channel = 0;
  const Series& series = plate.at(channel, well_);
  return series.empty() ? 0.0 : series.time_min.front();
}

void TracePanel::showWells(std::shared_ptr<const Analysis> analysis, int plate, int current,
                           const std::vector<int>& others) {
  analysis_ = std::move(analysis);
  plate_ = plate;
  well_ = -1;
  const WellRate* w = nullptr;
  if (analysis_ && plate >= 0 && plate < static_cast<int>(analysis_->plate_rates.size()) && current >= 0) {
    w = FindWell(analysis_->plate_rates[static_cast<std::size_t>(plate)], current);
  }
  set_window_->setEnabled(w != nullptr);
  automatic_window_->setEnabled(w != nullptr);
  if (!w) {
    auto* empty = new QChart;
    ApplyChartStyle(empty);
    empty->setTitle(analysis_ ? "No readings for this well" : "No analysis open");
    trace_->showChart(empty, std::nullopt);
    auto* empty_residuals = new QChart;
    ApplyChartStyle(empty_residuals, true);
    QChart* old = residuals_->chart();
    residuals_->setChart(empty_residuals);
    delete old;
    header_->setText(analysis_ ? "Select a well on the plate to see its trace." : "");
    return;
  }
  well_ = current;
  const Plate& p = analysis_->plates[static_cast<std::size_t>(plate)];
  TraceChartOptions options;
  options.wavelength_nm = analysis_->settings.detection.wavelength_nm;
  options.absorbance_ceiling = analysis_->settings.absorbance_ceiling;
  QChart* chart = MakeTraceChart(p, *w, options);

  // Other selected wells, faint, behind the current one.
  QValueAxis* x_axis = Axis(chart, Qt::Horizontal);
  QValueAxis* y_axis = Axis(chart, Qt::Vertical);
  const int channel = p.ChannelOf(options.wavelength_nm);
  int drawn = 0;
  double y_lo = y_axis ? y_axis->min() : 0.0, y_hi = y_axis ? y_axis->max() : 1.0;
  for (int other : others) {
    if (other == current || channel < 0 || drawn >= kMaxOtherTraces) continue;
    const Series& s = p.at(channel, other);
    if (s.empty()) continue;
    auto* line = new QLineSeries;
    line->setName(QString::fromStdString(WellName(other, p.geometry)));
    QColor colour = CategoryColour(drawn + 1);
    colour.setAlpha(150);
    line->setPen(QPen(colour, 1.2));
    QList<QPointF> points;
    for (std::size_t i = 0; i < s.size(); ++i) {
      if (s.status[i] != PointStatus::kValid || !std::isfinite(s.value[i])) continue;
      points << QPointF(s.time_min[i], s.value[i]);
      y_lo = std::min(y_lo, s.value[i]);
      y_hi = std::max(y_hi, s.value[i]);
    }
    line->replace(points);
    chart->addSeries(line);
    if (x_axis) line->attachAxis(x_axis);
    if (y_axis) line->attachAxis(y_axis);
    ++drawn;
  }
  if (y_axis && drawn > 0) {
    const double margin = 0.05 * (y_hi - y_lo);
    y_axis->setRange(y_lo - margin, y_hi + margin);
    y_axis->applyNiceNumbers();
    trace_->setToolTip("Drag either edge of the shaded band to choose the rate window; faint lines "
                       "are the other selected wells");
  }
  std::optional<std::pair<double, double>> window;
  if (w->estimate.ok && w->estimate.window_end_min > w->estimate.window_start_min) {
    window = std::make_pair(w->estimate.window_start_min, w->estimate.window_end_min);
  }
  trace_->showChart(chart, window);

  // Residuals: used points against the window's straight line.
  auto* res_chart = new QChart;
  ApplyChartStyle(res_chart, true);
  res_chart->legend()->hide();
  res_chart->setTitle("Departure of the used points from the window's straight line (A)");
  res_chart->setTitleFont(ChartFont(ChartText::kTick));
  QXYSeries* used = SeriesNamed(chart, kTraceUsedSeries);
  QXYSeries* slope = SeriesNamed(chart, kTraceSlopeSeries);
  auto* dots = new QScatterSeries;
  dots->setMarkerSize(5);
  dots->setColor(QColor::fromRgba(kUsedPointColour));
  dots->setBorderColor(QColor::fromRgba(kUsedPointColour));
  double extent = 0.0;
  if (used && slope && slope->count() >= 2) {
    const QPointF a = slope->at(0), b = slope->at(slope->count() - 1);
    const double gradient = (b.y() - a.y()) / (b.x() - a.x());
    QList<QPointF> points;
    for (int i = 0; i < used->count(); ++i) {
      const QPointF q = used->at(i);
      const double r = q.y() - (a.y() + gradient * (q.x() - a.x()));
      points << QPointF(q.x(), r);
      extent = std::max(extent, std::abs(r));
    }
    dots->replace(points);
  }
  auto* zero = new QLineSeries;
  zero->setPen(QPen(QColor::fromRgba(kInkColour), 0.8));
  auto* rx = new QValueAxis;
  auto* ry = new QValueAxis;
  rx->setRange(x_axis ? x_axis->min() : 0.0, x_axis ? x_axis->max() : 1.0);
  zero->append(rx->min(), 0.0);
  zero->append(rx->max(), 0.0);
  extent = extent > 0.0 ? extent * 1.15 : 1e-3;
  ry->setRange(-extent, extent);
  ry->setTickCount(3);
  ry->setLabelFormat("%.1e");
  rx->setLabelFormat("%g");
  for (QValueAxis* axis : {rx, ry}) {
    axis->setLabelsFont(ChartFont(ChartText::kSmall));
    axis->setGridLineColor(QColor::fromRgba(kGridColour));
  }
  rx->setTitleText("time (min)");
  rx->setTitleFont(ChartFont(ChartText::kSmall));
  res_chart->addAxis(rx, Qt::AlignBottom);
  res_chart->addAxis(ry, Qt::AlignLeft);
  for (QXYSeries* s : std::initializer_list<QXYSeries*>{zero, dots}) {
    res_chart->addSeries(s);
    s->attachAxis(rx);
    s->attachAxis(ry);
  }
  QChart* old = residuals_->chart();
  residuals_->setChart(res_chart);
  delete old;

  QString text = "<b>" + DescribeWell(*w).toHtmlEscaped() + "</b><br>" + DescribeRate(*w).toHtmlEscaped();
  if (w->estimate.ok) {
    const bool by_hand = std::find(w->flags.begin(), w->flags.end(), "user-window") != w->flags.end();
    text += QString(" · window %1–%2 min (%3), %4 points")
                .arg(FormatValue(w->estimate.window_start_min, 3), FormatValue(w->estimate.window_end_min, 3),
                     by_hand ? "chosen by hand" : "automatic")
                .arg(w->estimate.points);
  }
  if (w->excluded) {
    text += "<br><span style='color:#a33'>set aside: " +
            QString::fromStdString(w->exclusion_reason).toHtmlEscaped() + "</span>";
  }
  header_->setText(text);
}

void TracePanel::askForWindow() {
  if (!analysis_ || well_ < 0) return;
  const double first = firstRead();
  const Plate& p = analysis_->plates[static_cast<std::size_t>(plate_)];
  int channel = std::max(0, p.ChannelOf(analysis_->settings.detection.wavelength_nm));
  const Series& s = p.at(channel, well_);
  const double span = s.empty() ? 60.0 : s.time_min.back() - first;
  QDialog dialog(this);
  dialog.setWindowTitle("Rate window");
  auto* start = new QDoubleSpinBox(&dialog);
  auto* end = new QDoubleSpinBox(&dialog);
  for (QDoubleSpinBox* box : {start, end}) {
    box->setDecimals(2);
    box->setRange(0.0, span);
    box->setSingleStep(0.25);
    box->setSuffix(" min");
  }
  const auto current = trace_->window();
  start->setValue(current ? current->first - first : 0.0);
  end->setValue(current ? current->second - first : span);
  auto* form = new QFormLayout(&dialog);
  form->addRow(new QLabel("Minutes from the well's first read:", &dialog));
  form->addRow("&Start:", start);
  form->addRow("&End:", end);
  auto* buttons = new QDialogButtonBox(QDialogButtonBox::Ok | QDialogButtonBox::Cancel, &dialog);
  form->addRow(buttons);
  connect(buttons, &QDialogButtonBox::accepted, &dialog, &QDialog::accept);
  connect(buttons, &QDialogButtonBox::rejected, &dialog, &QDialog::reject);
  if (dialog.exec() != QDialog::Accepted || !(end->value() > start->value())) return;
  emit windowRequested(plate_, WellName(well_, p.geometry), std::make_pair(start->value(), end->value()));
}

}  // namespace ratewell::gui
