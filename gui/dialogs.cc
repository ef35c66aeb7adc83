#include "gui/dialogs.h"

#include <QComboBox>
#include <QDialogButtonBox>
#include <QFileDialog>
#include <QFileInfo>
#include <QFormLayout>
#include <QHBoxLayout>
#include <QLabel>
#include <QLineEdit>
#include <QListWidget>
#include <QPlainTextEdit>
#include <QPushButton>
#include <QVBoxLayout>
#include <exception>

#include "gui/display_text.h"
#include "importers/layout.h"
#include "importers/read_plate.h"

namespace ratewell::gui {

QStringList CommonExclusionReasons() {
  return {"bubble or meniscus artefact", "pipetting error", "signal saturated",
          "outlier confirmed by repeat", "wrong well filled", "condensation on the lid"};
}

ExclusionDialog::ExclusionDialog(const QStringList& wells, QWidget* parent) : QDialog(parent) {
  setWindowTitle("Set wells aside");
  reason_box_ = new QComboBox(this);
  reason_box_->setEditable(true);
  reason_box_->addItems(CommonExclusionReasons());
  reason_box_->setCurrentIndex(-1);
  reason_box_->lineEdit()->setPlaceholderText("choose or type a reason");
  reason_box_->setMinimumWidth(320);
  buttons_ = new QDialogButtonBox(QDialogButtonBox::Ok | QDialogButtonBox::Cancel, this);
  buttons_->button(QDialogButtonBox::Ok)->setText("Set aside");
  buttons_->button(QDialogButtonBox::Ok)->setEnabled(false);
  auto* layout = new QVBoxLayout(this);
  QString names = wells.mid(0, 12).join(", ");
  if (wells.size() > 12) names += QString(" and %1 more").arg(wells.size() - 12);
  auto* label = new QLabel("Wells " + names + " will be left out of the kinetic fit. The reason is "
                           "recorded in the audit trail.", this);
  label->setWordWrap(true);
  layout->addWidget(label);
  auto* reason_label = new QLabel("&Reason:", this);
  reason_label->setBuddy(reason_box_);
  layout->addWidget(reason_label);
  layout->addWidget(reason_box_);
  layout->addWidget(buttons_);
  connect(reason_box_, &QComboBox::editTextChanged, this, [this](const QString& text) {
    buttons_->button(QDialogButtonBox::Ok)->setEnabled(!text.trimmed().isEmpty());
  });
  connect(buttons_, &QDialogButtonBox::accepted, this, &QDialog::accept);
  connect(buttons_, &QDialogButtonBox::rejected, this, &QDialog::reject);
}

QString ExclusionDialog::reason() const { return reason_box_->currentText().trimmed(); }

SortedFiles SortFiles(const QStringList& paths) {
  SortedFiles sorted;
  for (const QString& path : paths) {
    const QFileInfo info(path);
    const QString name = info.fileName().toLower();
    if (name.endsWith(".ratewell") || name.endsWith(".ratewell.autosave")) {
      sorted.documents << info.absoluteFilePath();
    } else if (name.endsWith(".json")) {
      sorted.assay = info.absoluteFilePath();
    } else if (name.contains("layout")) {
      sorted.layout = info.absoluteFilePath();
    } else {
      sorted.plates << info.absoluteFilePath();
    }
  }
  return sorted;
}

ImportDialog::ImportDialog(const SortedFiles& files, QWidget* parent) : QDialog(parent) {
  setWindowTitle("New analysis from plate files");
  resize(760, 560);
  plates_ = new QListWidget(this);
  plates_->addItems(files.plates);
  plates_->setAccessibleName("Plate files");
  auto* add = new QPushButton("&Add plates…", this);
  auto* remove = new QPushButton("Re&move", this);
  layout_ = new QLineEdit(files.layout, this);
  assay_ = new QLineEdit(files.assay, this);
  assay_->setPlaceholderText("optional: the defaults are used without it");
  auto* browse_layout = new QPushButton("Browse…", this);
  auto* browse_assay = new QPushButton("Browse…", this);
  preview_ = new QPlainTextEdit(this);
  preview_->setReadOnly(true);
  preview_->setAccessibleName("What was detected");
  QFont mono("DejaVu Sans Mono");
  mono.setStyleHint(QFont::Monospace);
  preview_->setFont(mono);
  buttons_ = new QDialogButtonBox(QDialogButtonBox::Ok | QDialogButtonBox::Cancel, this);
  buttons_->button(QDialogButtonBox::Ok)->setText("Analyse");

  auto* plate_buttons = new QVBoxLayout;
  plate_buttons->addWidget(add);
  plate_buttons->addWidget(remove);
  plate_buttons->addStretch(1);
  auto* plate_row = new QHBoxLayout;
  plate_row->addWidget(plates_, 1);
  plate_row->addLayout(plate_buttons);
  auto* layout_row = new QHBoxLayout;
  layout_row->addWidget(layout_, 1);
  layout_row->addWidget(browse_layout);
  auto* assay_row = new QHBoxLayout;
  assay_row->addWidget(assay_, 1);
  assay_row->addWidget(browse_assay);
  auto* form = new QFormLayout;
  form->addRow("Plate files:", plate_row);
  form->addRow("&Layout:", layout_row);
  form->addRow("Assay &settings:", assay_row);
  auto* layout = new QVBoxLayout(this);
  layout->addLayout(form);
  layout->addWidget(new QLabel("What the importers found (select a plate to see it):", this));
  layout->addWidget(preview_, 1);
  layout->addWidget(buttons_);

  connect(add, &QPushButton::clicked, this, &ImportDialog::addPlates);
  connect(remove, &QPushButton::clicked, this, [this] {
    delete plates_->currentItem();
    updatePreview();
  });
  connect(browse_layout, &QPushButton::clicked, this, &ImportDialog::browseLayout);
  connect(browse_assay, &QPushButton::clicked, this, &ImportDialog::browseAssay);
  connect(plates_, &QListWidget::currentRowChanged, this, [this] { updatePreview(); });
  connect(layout_, &QLineEdit::editingFinished, this, &ImportDialog::updatePreview);
  connect(assay_, &QLineEdit::editingFinished, this, &ImportDialog::updatePreview);
  connect(buttons_, &QDialogButtonBox::accepted, this, &QDialog::accept);
  connect(buttons_, &QDialogButtonBox::rejected, this, &QDialog::reject);
  if (plates_->count() > 0) plates_->setCurrentRow(0);
  updatePreview();
}

void ImportDialog::addPlates() {
  const QStringList files = QFileDialog::getOpenFileNames(
      this, "Plate files", QString(), "Plate files (*.csv *.txt *.tsv *.xlsx);;All files (*)");
  plates_->addItems(files);
  if (!files.isEmpty()) plates_->setCurrentRow(plates_->count() - 1);
  updatePreview();
}

void ImportDialog::browseLayout() {
  const QString file = QFileDialog::getOpenFileName(this, "Layout", QString(),
                                                    "Layouts (*.csv *.txt);;All files (*)");
  if (!file.isEmpty()) layout_->setText(file);
  updatePreview();
}

void ImportDialog::browseAssay() {
  const QString file = QFileDialog::getOpenFileName(this, "Assay settings", QString(),
                                                    "Assay settings (*.json);;All files (*)");
  if (!file.isEmpty()) assay_->setText(file);
  updatePreview();
}

void ImportDialog::updatePreview() {
  QString text;
  bool plates_ok = plates_->count() > 0;
  std::optional<PlateGeometry> geometry;
  for (int i = 0; i < plates_->count(); ++i) {
    const QString path = plates_->item(i)->text();
    try {
      const Plate plate = ReadPlateFile(path.toStdString());
      if (!geometry) geometry = plate.geometry;
      if (i != plates_->currentRow()) continue;
      const ImportReport& r = plate.report;
      text += "Plate  " + QFileInfo(path).fileName() + "\n";
      text += "  table          " + QString::fromStdString(r.format) + ", " +
              QString::fromStdString(r.encoding);
      if (!r.delimiter.empty()) text += ", " + QString::fromStdString(r.delimiter) + " separated";
      if (r.decimal_comma) text += ", decimal comma";
      text += "\n";
      text += QString("  plate          %1 wells (%2 × %3), %4 with data\n")
                  .arg(plate.geometry.num_wells())
                  .arg(plate.geometry.rows)
                  .arg(plate.geometry.columns)
                  .arg(plate.WellsWithData());
      text += QString("  reads          %1").arg(plate.Reads());
      if (const auto span = plate.TimeSpanMin()) {
        text += QString(", %1 to %2 min (times as %3)")
                    .arg(FormatValue(span->first), FormatValue(span->second),
                         QString::fromStdString(r.time_unit));
      }
      text += "\n  wavelengths    ";
      QStringList nm;
      for (double w : plate.wavelengths_nm) nm << FormatValue(w, 6) + " nm";
      text += nm.join(", ") + "\n";
      text += QString("  saturated      %1 points; missing %2 points\n")
                  .arg(plate.CountPoints(PointStatus::kSaturated))
                  .arg(plate.CountPoints(PointStatus::kMissing));
      for (const std::string& w : r.warnings) text += "  ⚠ " + QString::fromStdString(w) + "\n";
    } catch (const std::exception& error) {
      plates_ok = false;
      text += "Plate  " + QFileInfo(path).fileName() + "\n  cannot be read: " + error.what() + "\n";
    }
  }
  bool layout_ok = false;
  if (layout_->text().isEmpty()) {
    text += "\nLayout  (none chosen: a layout is required)\n";
  } else {
    try {
      const Layout layout = ReadLayoutFile(layout_->text().toStdString(), geometry);
      layout_ok = true;
      text += "\nLayout  " + QFileInfo(layout_->text()).fileName() + " (" +
              QString::fromStdString(layout.form) + ")\n";
      text += QString("  %1 sample, %2 blank, %3 no-substrate, %4 standard wells\n")
                  .arg(layout.CountRole(WellRole::kSample))
                  .arg(layout.CountRole(WellRole::kBlank))
                  .arg(layout.CountRole(WellRole::kNoSubstrate))
                  .arg(layout.CountRole(WellRole::kStandard));
      for (const std::string& w : layout.warnings) text += "  ⚠ " + QString::fromStdString(w) + "\n";
    } catch (const std::exception& error) {
      text += "\nLayout  cannot be read: " + QString(error.what()) + "\n";
    }
  }
  preview_->setPlainText(text);
  buttons_->button(QDialogButtonBox::Ok)->setEnabled(plates_ok && layout_ok);
}

QString ImportDialog::previewText() const { return preview_->toPlainText(); }

AnalysisRequest ImportDialog::request() const {
  AnalysisRequest request;
  for (int i = 0; i < plates_->count(); ++i) request.plate_paths.push_back(plates_->item(i)->text().toStdString());
  request.layout_path = layout_->text().toStdString();
  request.assay_path = assay_->text().toStdString();
  return request;
}

}  // namespace ratewell::gui
