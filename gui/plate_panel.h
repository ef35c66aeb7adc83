// Plate panel: the plate as a grid of wells coloured by a chosen quantity
// (charts/charts.h PaintPlateMap), with selection by click, Ctrl/Shift-click,
// drag rectangle, row letter or column number click, and keyboard (arrows
// move, Shift+arrows extend, Space toggles, Ctrl+A all, Esc clears).
#pragma once

#include <QWidget>
#include <memory>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include "charts/charts.h"
#include "fitting/analysis.h"

QT_BEGIN_NAMESPACE
class QComboBox;
class QLabel;
class QPushButton;
QT_END_NAMESPACE

namespace ratewell::gui {

// The map itself.
class PlateMapView : public QWidget {
  Q_OBJECT

 public:
  explicit PlateMapView(QWidget* parent = nullptr);

  void setAnalysis(std::shared_ptr<const Analysis> analysis, int plate);
  void setQuantity(PlateMapQuantity quantity);
  PlateMapQuantity quantity() const { return quantity_; }

  // Selected wells (indices on the plate), and the well with keyboard focus.
  const std::set<int>& selection() const { return selection_; }
  void setSelection(const std::set<int>& wells, int current);
  int currentWell() const { return current_; }

  QSize sizeHint() const override { return {560, 380}; }
  QSize minimumSizeHint() const override { return {280, 190}; }

 signals:
  void selectionChanged();

 protected:
  void paintEvent(QPaintEvent* event) override;
  void mousePressEvent(QMouseEvent* event) override;
  void mouseMoveEvent(QMouseEvent* event) override;
  void mouseReleaseEvent(QMouseEvent* event) override;
  void keyPressEvent(QKeyEvent* event) override;
  bool event(QEvent* event) override;  // tooltips

 private:
  PlateMapOptions options() const;
  PlateMapGeometry layout() const;
  const PlateGeometry* geometry() const;
  const WellRate* rateOf(int well) const;
  // Row or column whose label is at the point (-1 when none).
  int rowLabelAt(const PlateMapGeometry& g, const QPointF& p) const;
  int columnLabelAt(const PlateMapGeometry& g, const QPointF& p) const;
  void selectRectangle(const QRectF& rect, bool add);

  std::shared_ptr<const Analysis> analysis_;
  int plate_ = 0;
  PlateMapQuantity quantity_ = PlateMapQuantity::kRate;
  std::set<int> selection_;
  std::set<int> selection_before_drag_;
  int current_ = -1;
  int anchor_ = -1;
  bool dragging_ = false;
  QPointF drag_start_;
  QRectF drag_rect_;
};

// The dock's content: plate and quantity choosers, the map, and the
// exclude/restore buttons.
class PlatePanel : public QWidget {
  Q_OBJECT

 public:
  explicit PlatePanel(QWidget* parent = nullptr);

  void setAnalysis(std::shared_ptr<const Analysis> analysis);
  PlateMapView* map() const { return map_; }
  int plateIndex() const { return plate_; }
  // (plate, well name) of every selected well.
  std::vector<std::pair<int, std::string>> selectedWells() const;
  // The well traces and windows are shown for (-1 when none).
  int currentWell() const { return map_->currentWell(); }

 signals:
  void selectionChanged();
  void excludeRequested();
  void restoreRequested();

 private:
  void updateSummary();

  std::shared_ptr<const Analysis> analysis_;
  int plate_ = 0;
  QComboBox* plate_box_ = nullptr;
  QComboBox* quantity_box_ = nullptr;
  PlateMapView* map_ = nullptr;
  QLabel* summary_ = nullptr;
  QPushButton* exclude_button_ = nullptr;
  QPushButton* restore_button_ = nullptr;
};

}  // namespace ratewell::gui
