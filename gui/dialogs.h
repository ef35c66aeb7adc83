// Dialogs of the window: the reason for setting wells aside, and the
// import dialog that previews what the importers detected in plate and
// layout files before an analysis is started.
#pragma once

#include <QDialog>
#include <QStringList>

#include "fitting/analysis.h"

QT_BEGIN_NAMESPACE
class QComboBox;
class QDialogButtonBox;
class QLineEdit;
class QListWidget;
class QPlainTextEdit;
QT_END_NAMESPACE

namespace ratewell::gui {

// Reasons offered for setting a well aside (free text is accepted too).
QStringList CommonExclusionReasons();

class ExclusionDialog : public QDialog {
  Q_OBJECT

 public:
  ExclusionDialog(const QStringList& wells, QWidget* parent = nullptr);
  QString reason() const;

 private:
  QComboBox* reason_box_ = nullptr;
  QDialogButtonBox* buttons_ = nullptr;
};

// Sorts dropped or given files: *.json -> assay settings, a name with
// "layout" -> layout, anything else -> plate.
struct SortedFiles {
  QStringList plates;
  QString layout;
  QString assay;
  QStringList documents;  // *.ratewell
};
SortedFiles SortFiles(const QStringList& paths);

class ImportDialog : public QDialog {
  Q_OBJECT

 public:
  explicit ImportDialog(const SortedFiles& files, QWidget* parent = nullptr);

  AnalysisRequest request() const;
  // The preview text shown for the selected plate and the layout.
  QString previewText() const;

 private:
  void addPlates();
  void browseLayout();
  void browseAssay();
  void updatePreview();

  QListWidget* plates_ = nullptr;
  QLineEdit* layout_ = nullptr;
  QLineEdit* assay_ = nullptr;
  QPlainTextEdit* preview_ = nullptr;
  QDialogButtonBox* buttons_ = nullptr;
};

}  // namespace ratewell::gui
