#include "gui/plate_panel.h"

#include <QComboBox>
#include <QHBoxLayout>
#include <QHelpEvent>
#include <QKeyEvent>
#include <QLabel>
#include <QMouseEvent>
#include <QPainter>
#include <QPushButton>
#include <QToolTip>
#include <QVBoxLayout>
#include <algorithm>
#include <cmath>

#include "gui/display_text.h"

namespace ratewell::gui {

PlateMapView::PlateMapView(QWidget* parent) : QWidget(parent) {
  setFocusPolicy(Qt::StrongFocus);
  setMouseTracking(true);
  setAttribute(Qt::WA_OpaquePaintEvent);
  setAccessibleName("Plate map");
}

void PlateMapView::setAnalysis(std::shared_ptr<const Analysis> analysis, int plate) {
  const bool same_plate = analysis_ && analysis && plate == plate_ &&
                          analysis_->plates.size() == analysis->plates.size();
  analysis_ = std::move(analysis);
  plate_ = plate;
  if (!same_plate) {
    selection_.clear();
    current_ = -1;
    anchor_ = -1;
  }
  update();
}

void PlateMapView::setQuantity(PlateMapQuantity quantity) {
  quantity_ = quantity;
  update();
}

void PlateMapView::setSelection(const std::set<int>& wells, int current) {
  selection_ = wells;
  current_ = current;
  anchor_ = current;
  update();
  emit selectionChanged();
}

const PlateGeometry* PlateMapView::geometry() const {
  if (!analysis_ || plate_ < 0 || plate_ >= static_cast<int>(analysis_->plates.size())) return nullptr;
  return &analysis_->plates[static_cast<std::size_t>(plate_)].geometry;
}

const WellRate* PlateMapView::rateOf(int well) const {
  if (!geometry()) return nullptr;
  for (const WellRate& w : analysis_->plate_rates[static_cast<std::size_t>(plate_)].wells) {
    if (w.well == well) return &w;
  }
  return nullptr;
}

PlateMapOptions PlateMapView::options() const {
  PlateMapOptions o;
  o.show_labels = true;
  o.show_legend = true;
  return o;
}

PlateMapGeometry PlateMapView::layout() const {
  const PlateGeometry* g = geometry();
  if (!g) return {};
  return LayOutPlateMap(QRectF(rect()).adjusted(4, 4, -4, -4), *g, options());
}

void PlateMapView::paintEvent(QPaintEvent*) {
  QPainter painter(this);
  painter.setRenderHint(QPainter::Antialiasing);
  painter.fillRect(rect(), Qt::white);
  const PlateGeometry* g = geometry();
  if (!g) {
    painter.setPen(palette().color(QPalette::PlaceholderText));
    painter.drawText(rect(), Qt::AlignCenter,
                     "No plate yet.\nOpen plate files and a layout (Ctrl+N) or drop them here.");
    return;
  }
  const PlateMapGeometry map = layout();
  PaintPlateMap(&painter, QRectF(rect()).adjusted(4, 4, -4, -4),
                analysis_->plate_rates[static_cast<std::size_t>(plate_)], *g, quantity_, options());

  // Selection: a dark ring with a white inner ring, visible on every colour
  // of the scale.
  const double r = map.well_radius;
  for (int well : selection_) {
    if (well < 0 || well >= static_cast<int>(map.well_centres.size())) continue;
    const QPointF c = map.well_centres[static_cast<std::size_t>(well)];
    painter.setBrush(Qt::NoBrush);
    painter.setPen(QPen(QColor(20, 20, 20), std::max(2.0, r * 0.18)));
    painter.drawEllipse(c, r * 1.12, r * 1.12);
    painter.setPen(QPen(Qt::white, std::max(1.0, r * 0.08)));
    painter.drawEllipse(c, r * 0.98, r * 0.98);
  }
  if (current_ >= 0 && current_ < static_cast<int>(map.well_centres.size())) {
    const QPointF c = map.well_centres[static_cast<std::size_t>(current_)];
    QPen pen(hasFocus() ? palette().color(QPalette::Highlight) : QColor(90, 90, 90),
             std::max(1.5, r * 0.12), Qt::DashLine);
    painter.setPen(pen);
    painter.setBrush(Qt::NoBrush);
    const double half = r * 1.3;
    painter.drawRect(QRectF(c.x() - half, c.y() - half, 2 * half, 2 * half));
  }
  if (dragging_ && !drag_rect_.isEmpty()) {
    QColor fill = palette().color(QPalette::Highlight);
    fill.setAlpha(40);
    painter.setBrush(fill);
    painter.setPen(QPen(palette().color(QPalette::Highlight), 1));
    painter.drawRect(drag_rect_);
  }
}

int PlateMapView::rowLabelAt(const PlateMapGeometry& g, const QPointF& p) const {
  const PlateGeometry* geo = geometry();
  if (!geo || p.x() >= g.grid_rect.left() || p.y() < g.grid_rect.top() || p.y() > g.grid_rect.bottom()) {
    return -1;
  }
  if (p.x() < g.grid_rect.left() - 4 * g.well_radius - 8) return -1;
  const double cell = g.grid_rect.height() / geo->rows;
  return std::clamp(static_cast<int>((p.y() - g.grid_rect.top()) / cell), 0, geo->rows - 1);
}

int PlateMapView::columnLabelAt(const PlateMapGeometry& g, const QPointF& p) const {
  const PlateGeometry* geo = geometry();
  if (!geo || p.y() >= g.grid_rect.top() || p.x() < g.grid_rect.left() || p.x() > g.grid_rect.right()) {
    return -1;
  }
  if (p.y() < g.grid_rect.top() - 4 * g.well_radius - 8) return -1;
  const double cell = g.grid_rect.width() / geo->columns;
  return std::clamp(static_cast<int>((p.x() - g.grid_rect.left()) / cell), 0, geo->columns - 1);
}

void PlateMapView::mousePressEvent(QMouseEvent* event) {
  const PlateGeometry* geo = geometry();
  if (!geo || event->button() != Qt::LeftButton) return;
  setFocus(Qt::MouseFocusReason);
  const PlateMapGeometry g = layout();
  const QPointF p = event->position();
  const bool add = event->modifiers() & (Qt::ControlModifier | Qt::ShiftModifier);
  const int well = g.WellAt(p);
  if (well >= 0) {
    if (event->modifiers() & Qt::ShiftModifier && anchor_ >= 0) {
      // Rectangle from the anchor to this well.
      const int r0 = anchor_ / geo->columns, c0 = anchor_ % geo->columns;
      const int r1 = well / geo->columns, c1 = well % geo->columns;
      for (int r = std::min(r0, r1); r <= std::max(r0, r1); ++r) {
        for (int c = std::min(c0, c1); c <= std::max(c0, c1); ++c) selection_.insert(r * geo->columns + c);
      }
    } else if (event->modifiers() & Qt::ControlModifier) {
      if (!selection_.erase(well)) selection_.insert(well);
      anchor_ = well;
    } else {
      selection_ = {well};
      anchor_ = well;
    }
    current_ = well;
    update();
    emit selectionChanged();
    return;
  }
  const int row = rowLabelAt(g, p);
  const int column = columnLabelAt(g, p);
  if (row >= 0 || column >= 0) {
    if (!add) selection_.clear();
    for (int i = 0; i < geo->num_wells(); ++i) {
      if ((row >= 0 && i / geo->columns == row) || (column >= 0 && i % geo->columns == column)) {
        selection_.insert(i);
      }
    }
    current_ = row >= 0 ? row * geo->columns : column;
    anchor_ = current_;
    update();
    emit selectionChanged();
    return;
  }
  // Start a rubber band.
  dragging_ = true;
  drag_start_ = p;
  drag_rect_ = QRectF();
  selection_before_drag_ = add ? selection_ : std::set<int>{};
}

void PlateMapView::mouseMoveEvent(QMouseEvent* event) {
  if (!dragging_) return;
  drag_rect_ = QRectF(drag_start_, event->position()).normalized();
  selectRectangle(drag_rect_, true);
}

void PlateMapView::mouseReleaseEvent(QMouseEvent* event) {
  if (!dragging_) return;
  dragging_ = false;
  drag_rect_ = QRectF(drag_start_, event->position()).normalized();
  selectRectangle(drag_rect_, true);
  drag_rect_ = QRectF();
  update();
  emit selectionChanged();
}

void PlateMapView::selectRectangle(const QRectF& rect, bool) {
  const PlateMapGeometry g = layout();
  selection_ = selection_before_drag_;
  for (std::size_t i = 0; i < g.well_centres.size(); ++i) {
    if (rect.contains(g.well_centres[i])) {
      selection_.insert(static_cast<int>(i));
      current_ = static_cast<int>(i);
    }
  }
  update();
}

void PlateMapView::keyPressEvent(QKeyEvent* event) {
  const PlateGeometry* geo = geometry();
  if (!geo) return QWidget::keyPressEvent(event);
  if (event->matches(QKeySequence::SelectAll)) {
    selection_.clear();
    for (int i = 0; i < geo->num_wells(); ++i) selection_.insert(i);
    update();
    emit selectionChanged();
    return;
  }
  int dr = 0, dc = 0;
  switch (event->key()) {
    case Qt::Key_Left: dc = -1; break;
    case Qt::Key_Right: dc = 1; break;
    case Qt::Key_Up: dr = -1; break;
    case Qt::Key_Down: dr = 1; break;
    case Qt::Key_Space:
      if (current_ >= 0) {
        if (!selection_.erase(current_)) selection_.insert(current_);
        update();
        emit selectionChanged();
      }
      return;
    case Qt::Key_Escape:
      selection_.clear();
      update();
      emit selectionChanged();
      return;
    default:
      return QWidget::keyPressEvent(event);
  }
  if (current_ < 0) {
    current_ = 0;
    anchor_ = 0;
  } else {
    const int r = std::clamp(current_ / geo->columns + dr, 0, geo->rows - 1);
    const int c = std::clamp(current_ % geo->columns + dc, 0, geo->columns - 1);
    current_ = r * geo->columns + c;
  }
  if (event->modifiers() & Qt::ShiftModifier) {
    selection_.insert(current_);
  } else if (!(event->modifiers() & Qt::ControlModifier)) {
    selection_ = {current_};
    anchor_ = current_;
  }
  update();
  emit selectionChanged();
}

bool PlateMapView::event(QEvent* event) {
  if (event->type() == QEvent::ToolTip && geometry()) {
    auto* help = static_cast<QHelpEvent*>(event);
    const int well = layout().WellAt(help->pos());
    const WellRate* w = well >= 0 ? rateOf(well) : nullptr;
    if (!w) {
      QToolTip::hideText();
      event->ignore();
      return true;
    }
    QString text = DescribeWell(*w) + "\n" + DescribeRate(*w);
    if (!w->flags.empty()) {
      QStringList flags;
      for (const std::string& f : w->flags) flags << QString::fromStdString(f);
      text += "\nflags: " + flags.join(", ");
    }
    if (w->excluded) text += "\nexcluded: " + QString::fromStdString(w->exclusion_reason);
    QToolTip::showText(help->globalPos(), text, this);
    return true;
  }
  return QWidget::event(event);
}

// --- PlatePanel ----------------------------------------------------------------

PlatePanel::PlatePanel(QWidget* parent) : QWidget(parent) {
  plate_box_ = new QComboBox(this);
  plate_box_->setAccessibleName("Plate");
  quantity_box_ = new QComboBox(this);
  quantity_box_->addItem("Initial rate (µM/min)", static_cast<int>(PlateMapQuantity::kRate));
  quantity_box_->addItem("Trace fit quality (R²)", static_cast<int>(PlateMapQuantity::kRSquared));
  quantity_box_->addItem("Role in the layout", static_cast<int>(PlateMapQuantity::kRole));
  map_ = new PlateMapView(this);
  summary_ = new QLabel(this);
  summary_->setTextInteractionFlags(Qt::TextSelectableByMouse);
  summary_->setWordWrap(true);
  exclude_button_ = new QPushButton("Set aside…", this);
  exclude_button_->setToolTip("Exclude the selected wells from the kinetic fit, with a reason (Ctrl+E)");
  restore_button_ = new QPushButton("Use again", this);
  restore_button_->setToolTip("Restore the selected excluded wells (Ctrl+Shift+E)");

  auto* top = new QHBoxLayout;
  auto* plate_label = new QLabel("&Plate:", this);
  plate_label->setBuddy(plate_box_);
  auto* colour_label = new QLabel("&Colour by:", this);
  colour_label->setBuddy(quantity_box_);
  top->addWidget(plate_label);
  top->addWidget(plate_box_, 1);
  top->addWidget(colour_label);
  top->addWidget(quantity_box_);
  auto* bottom = new QHBoxLayout;
  bottom->addWidget(summary_, 1);
  bottom->addWidget(exclude_button_);
  bottom->addWidget(restore_button_);
  auto* layout = new QVBoxLayout(this);
  layout->setContentsMargins(4, 4, 4, 4);
  layout->addLayout(top);
  layout->addWidget(map_, 1);
  layout->addLayout(bottom);

  setTabOrder(plate_box_, quantity_box_);
  setTabOrder(quantity_box_, map_);
  setTabOrder(map_, exclude_button_);
  setTabOrder(exclude_button_, restore_button_);

  connect(plate_box_, &QComboBox::currentIndexChanged, this, [this](int index) {
    if (index < 0 || !analysis_) return;
    plate_ = index;
    map_->setAnalysis(analysis_, plate_);
    updateSummary();
    emit selectionChanged();
  });
  connect(quantity_box_, &QComboBox::currentIndexChanged, this, [this](int) {
    map_->setQuantity(static_cast<PlateMapQuantity>(quantity_box_->currentData().toInt()));
  });
  connect(map_, &PlateMapView::selectionChanged, this, [this] {
    updateSummary();
    emit selectionChanged();
  });
  connect(exclude_button_, &QPushButton::clicked, this, &PlatePanel::excludeRequested);
  connect(restore_button_, &QPushButton::clicked, this, &PlatePanel::restoreRequested);
  updateSummary();
}

void PlatePanel::setAnalysis(std::shared_ptr<const Analysis> analysis) {
  analysis_ = std::move(analysis);
  const int plates = analysis_ ? static_cast<int>(analysis_->plates.size()) : 0;
  if (plate_box_->count() != plates) {
    QSignalBlocker block(plate_box_);
    plate_box_->clear();
    for (int i = 0; i < plates; ++i) {
      const std::string& path = analysis_->request.plate_paths[static_cast<std::size_t>(i)];
      const std::size_t slash = path.find_last_of("/\\");
      plate_box_->addItem(QString("%1: %2").arg(i + 1).arg(
          QString::fromStdString(slash == std::string::npos ? path : path.substr(slash + 1))));
    }
    plate_ = 0;
  }
  plate_box_->setEnabled(plates > 1);
  map_->setAnalysis(analysis_, plate_);
  updateSummary();
}

std::vector<std::pair<int, std::string>> PlatePanel::selectedWells() const {
  std::vector<std::pair<int, std::string>> wells;
  if (!analysis_ || plate_ >= static_cast<int>(analysis_->plates.size())) return wells;
  const PlateGeometry& g = analysis_->plates[static_cast<std::size_t>(plate_)].geometry;
  for (int well : map_->selection()) wells.emplace_back(plate_, WellName(well, g));
  return wells;
}

void PlatePanel::updateSummary() {
  const auto wells = selectedWells();
  int excluded = 0;
  if (analysis_ && plate_ < static_cast<int>(analysis_->plate_rates.size())) {
    for (const WellRate& w : analysis_->plate_rates[static_cast<std::size_t>(plate_)].wells) {
      if (w.excluded && map_->selection().count(w.well)) ++excluded;
    }
  }
  QString text;
  if (wells.empty()) {
    text = analysis_ ? "Select wells: click, drag, or a row letter / column number." : "";
  } else {
    QStringList names;
    for (std::size_t i = 0; i < std::min<std::size_t>(wells.size(), 6); ++i) {
      names << QString::fromStdString(wells[i].second);
    }
    if (wells.size() > 6) names << "…";
    text = QString("%1 selected: %2").arg(wells.size()).arg(names.join(", "));
    if (excluded > 0) text += QString(" (%1 set aside)").arg(excluded);
  }
  summary_->setText(text);
  exclude_button_->setEnabled(!wells.empty() && excluded < static_cast<int>(wells.size()));
  restore_button_->setEnabled(excluded > 0);
}

}  // namespace ratewell::gui
