// Saturation panel: initial rate against [S] with one series per inhibitor
// level and the fitted model (charts/MakeSaturationChart), its residuals
// below (MakeResidualChart), a log [S] toggle, the parameter table with
// standard errors and intervals ("not determined" with the reason), and the
// fit choices: model (automatic or one named), weighting, interval method.
#pragma once

#include <QWidget>
#include <memory>

#include "fitting/analysis.h"

QT_BEGIN_NAMESPACE
class QCheckBox;
class QChartView;
class QComboBox;
class QLabel;
class QTableWidget;
QT_END_NAMESPACE

namespace ratewell::gui {

class SaturationPanel : public QWidget {
  Q_OBJECT

 public:
  explicit SaturationPanel(QWidget* parent = nullptr);

  void setAnalysis(std::shared_ptr<const Analysis> analysis, const QString& weighting);
  QTableWidget* parameterTable() const { return table_; }
  QComboBox* modelBox() const { return model_box_; }

 signals:
  void modelRequested(const QString& model);
  void weightingRequested(const QString& weighting);
  void intervalMethodRequested(const QString& method);

 private:
  void redrawCharts();
  void fillTable();

  std::shared_ptr<const Analysis> analysis_;
  QComboBox* model_box_ = nullptr;
  QComboBox* weighting_box_ = nullptr;
  QComboBox* interval_box_ = nullptr;
  QCheckBox* log_axis_ = nullptr;
  QChartView* chart_view_ = nullptr;
  QChartView* residual_view_ = nullptr;
  QTableWidget* table_ = nullptr;
  QLabel* summary_ = nullptr;
};

}  // namespace ratewell::gui
