#include "report/detail/pdf_layout.h"

#include <QChart>
#include <QCoreApplication>
#include <QFontMetricsF>
#include <QGraphicsLayout>
#include <QGraphicsScene>
#include <QPaintDevice>
#include <QPainter>
#include <QPen>
#include <QTextLayout>
#include <QTextOption>

#include <algorithm>
#include <utility>

#include "charts/chart_style.h"

namespace ratewell::detail {
namespace {

constexpr QRgb kInk = 0xff1a1a1a;
constexpr QRgb kRule = 0xffb0b0b0;
constexpr QRgb kHeaderFill = 0xffeef1f5;
constexpr QRgb kStripeFill = 0xfff7f8fa;
constexpr QRgb kCautionFill = 0xfffff4e0;
constexpr QRgb kCautionEdge = 0xffe69f00;

// Cell padding, points.
constexpr double kCellPadPt = 2.5;

// Letter spacing (device units) small enough not to show, yet not zero in
// Qt's 1/64 fixed point; see PdfFont.
constexpr double kNoLigatureSpacing = 1.0 / 32.0;

// Lays `text` out in `font` on `device`, wrapped to `width` at word
// boundaries (inside a word only when it is longer than a line), and
// returns its height; draws it at `origin` when painter is not null.
double WrappedText(QPainter* painter, const QPaintDevice* device, const QFont& font, const QString& text,
                   double width, const QPointF& origin, Qt::Alignment align = Qt::AlignLeft) {
  QString laid = text;
  laid.replace(QLatin1Char('\n'), QChar::LineSeparator);
  QTextLayout layout(laid, font, const_cast<QPaintDevice*>(device));
  QTextOption option;
  option.setWrapMode(QTextOption::WrapAtWordBoundaryOrAnywhere);
  option.setAlignment(align & Qt::AlignHorizontal_Mask);
  layout.setTextOption(option);
  const QFontMetricsF metrics(font, const_cast<QPaintDevice*>(device));
  double y = 0.0;
  layout.beginLayout();
  for (QTextLine line = layout.createLine(); line.isValid(); line = layout.createLine()) {
    line.setLineWidth(width);
    line.setPosition(QPointF(0.0, y));
    y += metrics.lineSpacing();
  }
  layout.endLayout();
  if (painter != nullptr) layout.draw(painter, origin);
  return std::max(y, metrics.lineSpacing());
}

}  // namespace

QFont PdfFont(PdfText style) {
  QFont font(style == PdfText::kMono ? QStringLiteral("DejaVu Sans Mono") : QStringLiteral("DejaVu Sans"));
  font.setStyleHint(style == PdfText::kMono ? QFont::Monospace : QFont::SansSerif);
  // A letter spacing other than zero makes Qt's text shaper leave ligatures
  // out ("fi" stays two letters), so every word is found by a text search.
  font.setLetterSpacing(QFont::AbsoluteSpacing, kNoLigatureSpacing);
  switch (style) {
    case PdfText::kTitle:
      font.setPointSizeF(17.0);
      font.setBold(true);
      break;
    case PdfText::kHeading:
      font.setPointSizeF(12.5);
      font.setBold(true);
      break;
    case PdfText::kSubheading:
      font.setPointSizeF(10.0);
      font.setBold(true);
      break;
    case PdfText::kBody:
      font.setPointSizeF(9.0);
      break;
    case PdfText::kSmall:
      font.setPointSizeF(7.5);
      break;
    case PdfText::kTableHeader:
      font.setPointSizeF(7.5);
      font.setBold(true);
      break;
    case PdfText::kTable:
      font.setPointSizeF(7.5);
      break;
    case PdfText::kMono:
      font.setPointSizeF(7.0);
      break;
    case PdfText::kFooter:
      font.setPointSizeF(6.5);
      break;
  }
  return font;
}

PageFlow::PageFlow(QPaintDevice* device, const QRectF& body)
    : device_(device), body_(body), y_(body.top()), points_(device->logicalDpiY() / 72.0) {
  pages_.emplace_back();
}

QRectF PageFlow::Reserve(double height) {
  if (!Fits(height) && !page_empty_) {
    pages_.emplace_back();
    y_ = body_.top();
  }
  const QRectF rect(body_.left(), y_, body_.width(), height);
  y_ += height;
  page_empty_ = false;
  return rect;
}

void PageFlow::Draw(DrawFn draw) { pages_.back().push_back(std::move(draw)); }

void PageFlow::Space(double height) {
  if (page_empty_) return;
  y_ = std::min(y_ + height, body_.bottom());
}

void PageFlow::NewPage() {
  if (page_empty_) return;
  pages_.emplace_back();
  y_ = body_.top();
  page_empty_ = true;
}

double PageFlow::LineHeight(PdfText style) const {
  return QFontMetricsF(PdfFont(style), device_).lineSpacing();
}

double PageFlow::TextHeight(PdfText style, const QString& text, double width) const {
  return WrappedText(nullptr, device_, PdfFont(style), text, width, QPointF());
}

void DrawWrapped(QPainter* painter, PdfText style, const QString& text, const QRectF& rect, Qt::Alignment align) {
  WrappedText(painter, painter->device(), PdfFont(style), text, rect.width(), rect.topLeft(), align);
}

void PageFlow::Render(QPainter* painter, const std::function<bool()>& new_page,
                      const std::function<void(QPainter*, int, int)>& decorate) const {
  const int n = num_pages();
  for (int k = 0; k < n; ++k) {
    if (k > 0) new_page();
    for (const DrawFn& draw : pages_[static_cast<std::size_t>(k)]) {
      painter->save();
      draw(painter);
      painter->restore();
    }
    painter->save();
    decorate(painter, k, n);
    painter->restore();
  }
}

void FlowHeading(PageFlow* flow, const QString& text, PdfText style, double keep_with_next) {
  const double width = flow->body().width();
  const double h = flow->TextHeight(style, text, width);
  flow->Space(flow->points() * (style == PdfText::kHeading ? 8.0 : 5.0));
  if (!flow->Fits(h + flow->points() * 3.0 + keep_with_next)) flow->NewPage();
  const QRectF rect = flow->Reserve(h + flow->points() * 3.0);
  flow->Draw([=](QPainter* p) {
    p->setPen(QColor::fromRgba(kInk));
    DrawWrapped(p, style, text, QRectF(rect.left(), rect.top(), rect.width(), h));
  });
}

void FlowParagraph(PageFlow* flow, const QString& text, PdfText style, QColor colour) {
  const double width = flow->body().width();
  const double h = flow->TextHeight(style, text, width);
  const QRectF rect = flow->Reserve(h + flow->points() * 2.5);
  flow->Draw([=](QPainter* p) {
    p->setPen(colour);
    DrawWrapped(p, style, text, QRectF(rect.left(), rect.top(), rect.width(), h));
  });
}

void FlowBoxedParagraph(PageFlow* flow, const QString& text, PdfText style) {
  const double pad = flow->points() * 5.0;
  const double width = flow->body().width() - 2 * pad;
  const double h = flow->TextHeight(style, text, width);
  flow->Space(flow->points() * 3.0);
  const QRectF rect = flow->Reserve(h + 2 * pad);
  const double pen_width = flow->points() * 1.2;
  flow->Draw([=](QPainter* p) {
    QPen edge(QColor::fromRgba(kCautionEdge));
    edge.setWidthF(pen_width);
    p->setPen(edge);
    p->setBrush(QColor::fromRgba(kCautionFill));
    p->drawRect(rect.adjusted(pen_width / 2, pen_width / 2, -pen_width / 2, -pen_width / 2));
    p->setPen(QColor::fromRgba(kInk));
    DrawWrapped(p, style, text, QRectF(rect.left() + pad, rect.top() + pad, width, h));
  });
  flow->Space(flow->points() * 3.0);
}

void FlowTable(PageFlow* flow, const std::vector<TableColumn>& columns,
               const std::vector<std::vector<QString>>& rows) {
  if (columns.empty()) return;
  const double width = flow->body().width();
  const double pad = flow->points() * kCellPadPt;
  double total_weight = 0.0;
  for (const TableColumn& c : columns) total_weight += c.weight;
  std::vector<double> x(columns.size() + 1, flow->body().left());
  for (std::size_t c = 0; c < columns.size(); ++c) x[c + 1] = x[c] + width * columns[c].weight / total_weight;

  auto row_height = [&](const std::vector<QString>& cells, bool header) {
    double h = 0.0;
    for (std::size_t c = 0; c < columns.size(); ++c) {
      const QString text = c < cells.size() ? cells[c] : QString();
      const PdfText style = header ? PdfText::kTableHeader : (columns[c].mono ? PdfText::kMono : PdfText::kTable);
      const double inner = x[c + 1] - x[c] - 2 * pad;
      h = std::max(h, text.isEmpty() ? flow->LineHeight(style) : flow->TextHeight(style, text, inner));
    }
    return h + 2 * pad;
  };
  std::vector<QString> header_cells;
  for (const TableColumn& c : columns) header_cells.push_back(c.header);
  const double header_h = row_height(header_cells, true);
  const double rule = flow->points() * 0.5;

  auto draw_row = [=](const QRectF& rect, const std::vector<QString>& cells, bool header, bool stripe) {
    return [=](QPainter* p) {
      p->setPen(Qt::NoPen);
      if (header || stripe) {
        p->setBrush(QColor::fromRgba(header ? kHeaderFill : kStripeFill));
        p->drawRect(rect);
      }
      for (std::size_t c = 0; c < columns.size(); ++c) {
        const QString text = c < cells.size() ? cells[c] : QString();
        const PdfText style = header ? PdfText::kTableHeader : (columns[c].mono ? PdfText::kMono : PdfText::kTable);
        p->setPen(QColor::fromRgba(kInk));
        const QRectF cell(x[c] + pad, rect.top() + pad, x[c + 1] - x[c] - 2 * pad, rect.height() - 2 * pad);
        DrawWrapped(p, style, text, cell, columns[c].align);
      }
      QPen pen(QColor::fromRgba(kRule));
      pen.setWidthF(rule);
      p->setPen(pen);
      p->drawLine(QPointF(rect.left(), rect.bottom()), QPointF(rect.right(), rect.bottom()));
    };
  };

  auto place_header = [&]() {
    const QRectF rect = flow->Reserve(header_h);
    flow->Draw(draw_row(rect, header_cells, true, false));
  };
  // The header goes with at least the first row.
  const double first_h = rows.empty() ? 0.0 : row_height(rows.front(), false);
  if (!flow->Fits(header_h + first_h)) flow->NewPage();
  place_header();
  int page = flow->current_page();
  bool stripe = false;
  for (const std::vector<QString>& row : rows) {
    const double h = row_height(row, false);
    if (!flow->Fits(h)) {
      flow->NewPage();
      place_header();
      page = flow->current_page();
    }
    const QRectF rect = flow->Reserve(h);
    if (flow->current_page() != page) page = flow->current_page();
    flow->Draw(draw_row(rect, row, false, stripe));
    stripe = !stripe;
  }
  flow->Space(flow->points() * 4.0);
}

void RenderChart(QPainter* painter, QChart* chart, const QRectF& target) {
  QGraphicsScene scene;
  scene.addItem(chart);  // the scene owns the chart from here on
  chart->setGeometry(QRectF(QPointF(0, 0), target.size()));
  // Lay the chart out now: the layout request is otherwise handled by the
  // event loop, which a report writer does not run.
  if (chart->layout() != nullptr) chart->layout()->activate();
  QCoreApplication::sendPostedEvents(nullptr, 0);
  scene.setSceneRect(QRectF(QPointF(0, 0), target.size()));
  scene.render(painter, target, scene.sceneRect(), Qt::IgnoreAspectRatio);
}

}  // namespace ratewell::detail
