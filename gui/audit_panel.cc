#include "gui/audit_panel.h"

#include <QHeaderView>
#include <QLabel>
#include <QListWidget>
#include <QSplitter>
#include <QTableWidget>
#include <QVBoxLayout>

namespace ratewell::gui {

AuditPanel::AuditPanel(QWidget* parent) : QWidget(parent) {
  status_ = new QLabel(this);
  status_->setWordWrap(true);
  table_ = new QTableWidget(0, 5, this);
  table_->setHorizontalHeaderLabels({"#", "Time (UTC)", "User", "Change", "Reason"});
  table_->horizontalHeader()->setStretchLastSection(true);
  table_->verticalHeader()->hide();
  table_->setEditTriggers(QAbstractItemView::NoEditTriggers);
  table_->setSelectionBehavior(QAbstractItemView::SelectRows);
  table_->setWordWrap(false);
  table_->setAccessibleName("Audit trail");
  warnings_ = new QListWidget(this);
  warnings_->setAccessibleName("Warnings");
  warnings_->setWordWrap(true);
  auto* warnings_box = new QWidget(this);
  auto* warnings_layout = new QVBoxLayout(warnings_box);
  warnings_layout->setContentsMargins(0, 0, 0, 0);
  warnings_layout->addWidget(new QLabel("Warnings", warnings_box));
  warnings_layout->addWidget(warnings_);
  auto* split = new QSplitter(Qt::Vertical, this);
  split->addWidget(table_);
  split->addWidget(warnings_box);
  split->setStretchFactor(0, 3);
  split->setStretchFactor(1, 1);
  split->setSizes({180, 60});
  auto* layout = new QVBoxLayout(this);
  layout->setContentsMargins(4, 4, 4, 4);
  layout->addWidget(status_);
  layout->addWidget(split, 1);
  setDocument(nullptr);
}

void AuditPanel::setDocument(const AnalysisDocument* document) {
  table_->setRowCount(0);
  if (!document) {
    status_->setText("No analysis open.");
    return;
  }
  const auto& audit = document->audit();
  table_->setRowCount(static_cast<int>(audit.size()));
  for (std::size_t i = 0; i < audit.size(); ++i) {
    const AuditEntry& e = audit[i];
    QString time = QString::fromStdString(e.time);
    time.replace('T', ' ').remove('Z');
    const QString reason = e.change ? QString::fromStdString(e.change->reason) : QString();
    const QStringList cells = {QString::number(e.sequence), time, QString::fromStdString(e.user),
                               QString::fromStdString(e.summary).section(": ", 0, 0), reason};
    for (int c = 0; c < cells.size(); ++c) {
      auto* item = new QTableWidgetItem(cells[c]);
      item->setToolTip(QString::fromStdString(e.summary) + "\nSHA-256 " + QString::fromStdString(e.sha256));
      table_->setItem(static_cast<int>(i), c, item);
    }
  }
  table_->resizeColumnsToContents();
  table_->scrollToBottom();
  const AuditVerification check = document->Verify();
  if (check.intact) {
    status_->setText(QString("%1 entries; each linked to the one before by its SHA-256 — chain intact.")
                         .arg(audit.size()));
    status_->setStyleSheet("");
  } else {
    status_->setText("Chain broken at entry " + QString::number(check.first_broken + 1) + ": " +
                     QString::fromStdString(check.message));
    status_->setStyleSheet("color: #a33; font-weight: bold");
  }
}

void AuditPanel::setWarnings(const QStringList& warnings) {
  warnings_->clear();
  warnings_->addItems(warnings);
}

}  // namespace ratewell::gui
