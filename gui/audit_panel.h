// Audit panel: every recorded change (time, user, change, reason), whether
// the hash chain still holds, and the warnings of the document and the
// analysis.
#pragma once

#include <QStringList>
#include <QWidget>

#include "session/analysis_document.h"

QT_BEGIN_NAMESPACE
class QLabel;
class QListWidget;
class QTableWidget;
QT_END_NAMESPACE

namespace ratewell::gui {

class AuditPanel : public QWidget {
  Q_OBJECT

 public:
  explicit AuditPanel(QWidget* parent = nullptr);

  void setDocument(const AnalysisDocument* document);  // null: none open
  void setWarnings(const QStringList& warnings);
  QTableWidget* table() const { return table_; }

 private:
  QLabel* status_ = nullptr;
  QTableWidget* table_ = nullptr;
  QListWidget* warnings_ = nullptr;
};

}  // namespace ratewell::gui
