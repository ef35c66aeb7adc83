// Page flow for the PDF report: content is laid out first (measured with the
// writer's font metrics, split into pages), then painted with page numbers
// that know the total ("page k of N").
#pragma once

#include <functional>
#include <vector>

#include <QColor>
#include <QFont>
#include <QRectF>
#include <QString>
#include <QtGlobal>

QT_BEGIN_NAMESPACE
class QChart;
class QPaintDevice;
class QPainter;
QT_END_NAMESPACE

namespace ratewell::detail {

// Text styles of the report, in points (DejaVu Sans; DejaVu Sans Mono for hashes).
enum class PdfText { kTitle, kHeading, kSubheading, kBody, kSmall, kTableHeader, kTable, kMono, kFooter };
QFont PdfFont(PdfText style);

using DrawFn = std::function<void(QPainter*)>;

// Content laid out top to bottom in `body` (device units), page after page.
class PageFlow {
 public:
  PageFlow(QPaintDevice* device, const QRectF& body);

  // The rectangle of the next `height` units on the current page, on a new
  // page when the rest of this one is too short (an empty page takes any
  // height; what does not fit is clipped by the caller's drawing).
  QRectF Reserve(double height);
  // Adds a drawing to the page the last Reserve landed on.
  void Draw(DrawFn draw);
  // Vertical space; dropped at the top of a page.
  void Space(double height);
  // Starts a new page unless the current one is still empty.
  void NewPage();
  // Whether at least `height` is left on this page.
  bool Fits(double height) const { return y_ + height <= body_.bottom() + 1e-6; }

  int num_pages() const { return static_cast<int>(pages_.size()); }
  int current_page() const { return num_pages() - 1; }
  const QRectF& body() const { return body_; }
  QPaintDevice* device() const { return device_; }
  // Height of a line of text in this style on the device.
  double LineHeight(PdfText style) const;
  // Height of `text` wrapped to `width` in this style.
  double TextHeight(PdfText style, const QString& text, double width) const;
  // One device unit per point × this (the device's dots per point).
  double points() const { return points_; }

  // Paints every page; `decorate(painter, page, pages)` adds header and
  // footer. Calls newPage() on the writer between pages.
  void Render(QPainter* painter, const std::function<bool()>& new_page,
              const std::function<void(QPainter*, int, int)>& decorate) const;

 private:
  QPaintDevice* device_;
  QRectF body_;
  double y_;
  double points_;
  bool page_empty_ = true;
  std::vector<std::vector<DrawFn>> pages_;
};

// Draws `text` wrapped to rect's width from its top left, in the painter's pen.
void DrawWrapped(QPainter* painter, PdfText style, const QString& text, const QRectF& rect,
                 Qt::Alignment align = Qt::AlignLeft);

// A heading; kept on a page with at least `keep_with_next` units after it.
void FlowHeading(PageFlow* flow, const QString& text, PdfText style = PdfText::kHeading,
                 double keep_with_next = 0.0);
// A paragraph wrapped to the body width.
void FlowParagraph(PageFlow* flow, const QString& text, PdfText style = PdfText::kBody,
                   QColor colour = QColor(0x1a, 0x1a, 0x1a));
// A boxed paragraph (the caution).
void FlowBoxedParagraph(PageFlow* flow, const QString& text, PdfText style = PdfText::kBody);

struct TableColumn {
  QString header;
  double weight = 1.0;  // share of the table width
  Qt::Alignment align = Qt::AlignLeft;
  bool mono = false;    // DejaVu Sans Mono (hashes)
};
// A table across the body width. Cells wrap; a row never splits; the header
// is repeated on every page the table runs onto.
void FlowTable(PageFlow* flow, const std::vector<TableColumn>& columns,
               const std::vector<std::vector<QString>>& rows);

// Renders `chart` into `target` on the painter, as vectors, laying it out at
// the target's size (the chart is deleted afterwards).
void RenderChart(QPainter* painter, QChart* chart, const QRectF& target);

}  // namespace ratewell::detail
