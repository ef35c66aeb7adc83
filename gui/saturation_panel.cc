#include "gui/saturation_panel.h"

#include <QChart>
#include <QChartView>
#include <QCheckBox>
#include <QComboBox>
#include <QHBoxLayout>
#include <QHeaderView>
#include <QLabel>
#include <QSplitter>
#include <QTableWidget>
#include <QValueAxis>
#include <QVBoxLayout>

#include "charts/chart_style.h"
#include "charts/charts.h"
#include "gui/display_text.h"

namespace ratewell::gui {
namespace {

void SetChart(QChartView* view, QChart* chart) {
  QChart* old = view->chart();
  view->setChart(chart);
  delete old;
}

QString IntervalText(const ParameterEstimate& p) {
  if (!p.ci.determined) return "not determined";
  return QString("%1 to %2").arg(FormatValue(p.ci.lower), FormatValue(p.ci.upper));
}

QString NoteText(const ParameterEstimate& p) {
  QStringList parts;
  if (p.fixed) parts << "held fixed";
  if (p.at_bound) parts << "at a bound";
  if (p.ci.determined) {
    parts << IntervalMethodToString(p.ci.method);
    if (!p.ci.note.empty()) parts << QString::fromStdString(p.ci.note);
  } else if (!p.ci.reason.empty()) {
    parts << QString::fromStdString(p.ci.reason);
  }
  if (!p.se_determined && !p.se_reason.empty()) parts << "SE: " + QString::fromStdString(p.se_reason);
  return parts.join("; ");
}

}  // namespace

SaturationPanel::SaturationPanel(QWidget* parent) : QWidget(parent) {
  model_box_ = new QComboBox(this);
  model_box_->addItem("Choose from the data", "auto");
  for (ModelFamily family : {ModelFamily::kSubstrate, ModelFamily::kInhibition}) {
    for (KineticModel m : CandidateModels(family)) {
      model_box_->addItem(KineticModelToString(m), KineticModelToString(m));
    }
  }
  weighting_box_ = new QComboBox(this);
  weighting_box_->addItem("equal (none)", "none");
  weighting_box_->addItem("relative (1/v²)", "relative");
  weighting_box_->addItem("by rate SE (1/SE²)", "inverse-variance");
  interval_box_ = new QComboBox(this);
  interval_box_->addItem("asymptotic", "asymptotic");
  interval_box_->addItem("profile", "profile");
  interval_box_->addItem("bootstrap", "bootstrap");
  log_axis_ = new QCheckBox("&Log [S] axis", this);

  auto* controls = new QHBoxLayout;
  const auto labelled = [&](const QString& text, QWidget* w) {
    auto* label = new QLabel(text, this);
    label->setBuddy(w);
    controls->addWidget(label);
    controls->addWidget(w);
  };
  labelled("&Model:", model_box_);
  labelled("&Weights:", weighting_box_);
  labelled("&Intervals:", interval_box_);
  controls->addWidget(log_axis_);
  controls->addStretch(1);

  chart_view_ = new QChartView(this);
  chart_view_->setRenderHint(QPainter::Antialiasing);
  residual_view_ = new QChartView(this);
  residual_view_->setRenderHint(QPainter::Antialiasing);
  table_ = new QTableWidget(0, 6, this);
  table_->setHorizontalHeaderLabels({"Parameter", "Value", "Unit", "SE", "95 % interval", "How / why"});
  table_->horizontalHeader()->setStretchLastSection(true);
  table_->verticalHeader()->hide();
  table_->setEditTriggers(QAbstractItemView::NoEditTriggers);
  table_->setSelectionBehavior(QAbstractItemView::SelectRows);
  table_->setAlternatingRowColors(true);
  table_->setAccessibleName("Fitted parameters");
  summary_ = new QLabel(this);
  summary_->setWordWrap(true);
  summary_->setTextInteractionFlags(Qt::TextSelectableByMouse);

  auto* charts = new QSplitter(Qt::Vertical, this);
  charts->addWidget(chart_view_);
  charts->addWidget(residual_view_);
  charts->setStretchFactor(0, 3);
  charts->setStretchFactor(1, 1);
  auto* lower = new QWidget(this);
  auto* lower_layout = new QVBoxLayout(lower);
  lower_layout->setContentsMargins(0, 0, 0, 0);
  lower_layout->addWidget(summary_);
  lower_layout->addWidget(table_, 1);
  auto* split = new QSplitter(Qt::Vertical, this);
  split->addWidget(charts);
  split->addWidget(lower);
  split->setStretchFactor(0, 3);
  split->setStretchFactor(1, 1);
  split->setSizes({560, 200});
  charts->setSizes({380, 170});
  chart_view_->setMinimumHeight(220);
  residual_view_->setMinimumHeight(150);
  table_->setMinimumHeight(120);

  auto* layout = new QVBoxLayout(this);
  layout->setContentsMargins(4, 4, 4, 4);
  layout->addLayout(controls);
  layout->addWidget(split, 1);

  connect(model_box_, &QComboBox::activated, this,
          [this](int) { emit modelRequested(model_box_->currentData().toString()); });
  connect(weighting_box_, &QComboBox::activated, this,
          [this](int) { emit weightingRequested(weighting_box_->currentData().toString()); });
  connect(interval_box_, &QComboBox::activated, this,
          [this](int) { emit intervalMethodRequested(interval_box_->currentData().toString()); });
  connect(log_axis_, &QCheckBox::toggled, this, [this] { redrawCharts(); });
  setAnalysis(nullptr, "none");
}

void SaturationPanel::setAnalysis(std::shared_ptr<const Analysis> analysis, const QString& weighting) {
  analysis_ = std::move(analysis);
  const bool have = analysis_ != nullptr;
  for (QWidget* w : std::initializer_list<QWidget*>{model_box_, weighting_box_, interval_box_, log_axis_}) {
    w->setEnabled(have);
  }
  if (have) {
    const std::string model =
        analysis_->request.model.empty() ? analysis_->settings.fit.model : analysis_->request.model;
    model_box_->setCurrentIndex(std::max(0, model_box_->findData(QString::fromStdString(model))));
    weighting_box_->setCurrentIndex(std::max(0, weighting_box_->findData(weighting)));
    const IntervalMethod interval = analysis_->request.interval_method.value_or(analysis_->settings.fit.interval);
    interval_box_->setCurrentIndex(std::max(0, interval_box_->findData(IntervalMethodToString(interval))));
  }
  redrawCharts();
  fillTable();
}

void SaturationPanel::redrawCharts() {
  if (!analysis_) {
    auto* empty = new QChart;
    ApplyChartStyle(empty);
    empty->setTitle("Initial rate against [S]");
    SetChart(chart_view_, empty);
    auto* empty_residuals = new QChart;
    ApplyChartStyle(empty_residuals, true);
    SetChart(residual_view_, empty_residuals);
    return;
  }
  const KineticFit* fit = analysis_->kinetics.choice.Preferred();
  SaturationChartOptions options;
  options.log_substrate_axis = log_axis_->isChecked();
  SetChart(chart_view_, MakeSaturationChart(*analysis_, fit, options));
  if (fit) {
    ResidualChartOptions residual_options;
    residual_options.log_substrate_axis = options.log_substrate_axis;
    QChart* residuals = MakeResidualChart(*analysis_, *fit, residual_options);
    // The residual panel is short: three ticks in a compact format keep the
    // tick labels from being cut to "…".
    for (QAbstractAxis* axis : residuals->axes(Qt::Vertical)) {
      if (auto* value_axis = qobject_cast<QValueAxis*>(axis)) {
        value_axis->setTickCount(3);
        value_axis->setLabelFormat("%.2g");
      }
    }
    SetChart(residual_view_, residuals);
  } else {
    auto* empty = new QChart;
    ApplyChartStyle(empty, true);
    empty->setTitle("No fit to show residuals of");
    SetChart(residual_view_, empty);
  }
}

void SaturationPanel::fillTable() {
  table_->setRowCount(0);
  if (!analysis_) {
    summary_->setText("");
    return;
  }
  const KineticAnalysis& k = analysis_->kinetics;
  const KineticFit* fit = k.choice.Preferred();
  QString summary;
  if (!k.attempted) {
    summary = "No kinetic fit: " + QString::fromStdString(k.reason);
  } else if (!fit) {
    summary = "No usable fit. " + QString::fromStdString(k.choice.reason);
  } else {
    summary = QString("<b>%1</b> fitted to %2 wells (%3 degrees of freedom). ")
                  .arg(KineticModelToString(fit->model))
                  .arg(fit->n)
                  .arg(fit->dof) +
              QString::fromStdString(k.choice.reason).toHtmlEscaped();
    for (const FitWarning& w : fit->warnings) {
      summary += "<br><span style='color:#8a4b00'>⚠ " + QString::fromStdString(w.message).toHtmlEscaped() +
                 "</span>";
    }
  }
  summary_->setText(summary);
  if (!fit) return;
  const auto add_row = [&](const ParameterEstimate& p) {
    const int row = table_->rowCount();
    table_->insertRow(row);
    const bool has_value = std::isfinite(p.value);
    const QStringList cells = {
        QString::fromStdString(p.name).replace(QLatin1Char('_'), QLatin1Char(' ')),
        has_value ? FormatValue(p.value, 5) : QString("not determined"),
        DisplayUnit(p.unit),
        p.se_determined ? FormatValue(p.se, 3) : QString("not determined"),
        IntervalText(p),
        NoteText(p)};
    for (int c = 0; c < cells.size(); ++c) {
      auto* item = new QTableWidgetItem(cells[c]);
      if (c == 5) item->setToolTip(cells[c]);
      if (cells[c] == "not determined") item->setForeground(QColor(0xa3, 0x33, 0x33));
      table_->setItem(row, c, item);
    }
  };
  for (const ParameterEstimate& p : fit->parameters) add_row(p);
  for (const ParameterEstimate& p : fit->derived) add_row(p);
  table_->resizeColumnsToContents();
}

}  // namespace ratewell::gui
