// Trace panel: the current well's absorbance against time (charts/
// MakeTraceChart) with the other selected wells drawn faintly behind it, the
// rate window shaded, and its two edges draggable with the mouse; below, the
// used points' departure from the window's straight line. A drag ends in
// windowEdited(); "Set window…" does the same from the keyboard.
#pragma once

#include <QChartView>
#include <QWidget>
#include <memory>
#include <optional>
#include <utility>
#include <vector>

#include "fitting/analysis.h"

QT_BEGIN_NAMESPACE
class QLabel;
class QPushButton;
QT_END_NAMESPACE

namespace ratewell::gui {

// A chart view whose shaded rate window can be dragged by its edges.
class TraceChartView : public QChartView {
  Q_OBJECT

 public:
  explicit TraceChartView(QWidget* parent = nullptr);

  // Takes ownership of chart. window: [start, end] on the reader's clock
  // (minutes), or nullopt when the chart has no window.
  void showChart(QChart* chart, std::optional<std::pair<double, double>> window);
  std::optional<std::pair<double, double>> window() const { return window_; }

 signals:
  // The user dragged an edge: the new window on the reader's clock.
  void windowEdited(double start_min, double end_min);

 protected:
  void mousePressEvent(QMouseEvent* event) override;
  void mouseMoveEvent(QMouseEvent* event) override;
  void mouseReleaseEvent(QMouseEvent* event) override;

 private:
  // 0: none, 1: start edge, 2: end edge under the point.
  int edgeAt(const QPointF& point) const;
  void moveBand(double start, double end);

  std::optional<std::pair<double, double>> window_;
  int dragging_ = 0;
};

class TracePanel : public QWidget {
  Q_OBJECT

 public:
  explicit TracePanel(QWidget* parent = nullptr);

  // Shows `current` (a well index on plate `plate`) and up to eight more of
  // `others` behind it.
  void showWells(std::shared_ptr<const Analysis> analysis, int plate, int current,
                 const std::vector<int>& others);
  TraceChartView* traceView() const { return trace_; }

 signals:
  // Minutes from the well's first read (what SetWindow takes); nullopt:
  // automatic.
  void windowRequested(int plate, const std::string& well,
                       const std::optional<std::pair<double, double>>& window_min);

 private:
  void askForWindow();
  double firstRead() const;

  std::shared_ptr<const Analysis> analysis_;
  int plate_ = 0;
  int well_ = -1;
  QLabel* header_ = nullptr;
  TraceChartView* trace_ = nullptr;
  QChartView* residuals_ = nullptr;
  QPushButton* set_window_ = nullptr;
  QPushButton* automatic_window_ = nullptr;
};

}  // namespace ratewell::gui
