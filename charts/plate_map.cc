// The plate map (charts/charts.h): circles on a grid, painted directly.
#include <QFont>
#include <QFontMetricsF>
#include <QPainter>
#include <QPainterPath>
#include <QPen>

#include <algorithm>
#include <cmath>

#include "charts/chart_style.h"
#include "charts/charts.h"
#include "charts/detail/chart_axes.h"

namespace ratewell {
namespace {

constexpr WellRole kRoles[] = {WellRole::kEmpty, WellRole::kSample, WellRole::kBlank,
                               WellRole::kNoSubstrate, WellRole::kStandard};

QColor RoleColour(WellRole role) {
  switch (role) {
    case WellRole::kEmpty:
      return QColor::fromRgba(kNoValueColour);
    case WellRole::kSample:
      return CategoryColour(0);
    case WellRole::kBlank:
      return CategoryColour(3);
    case WellRole::kNoSubstrate:
      return CategoryColour(2);
    case WellRole::kStandard:
      return CategoryColour(4);
  }
  return QColor::fromRgba(kNoValueColour);
}

// Pixel size of a font for text `height` device units tall (at least 1).
QFont SizedFont(double height, bool bold = false) {
  QFont font = ChartFont(ChartText::kSmall);
  font.setPixelSize(std::max(1, static_cast<int>(std::lround(height))));
  font.setBold(bold);
  return font;
}

// Height of one text line of the labels, from the rectangle's size.
double LabelHeight(const QRectF& rect, const PlateGeometry& geometry) {
  const double cell = std::min(rect.width() / (geometry.columns + 4.0), rect.height() / (geometry.rows + 2.0));
  // Large plates keep readable labels (the labels' cells are wider than a
  // well); small plates do not get oversized ones.
  return std::max(1.0, std::min({cell * 0.45, rect.width() / 70.0, rect.height() / 14.0}));
}

}  // namespace

const char* PlateMapQuantityToString(PlateMapQuantity quantity) {
  switch (quantity) {
    case PlateMapQuantity::kRate:
      return "rate";
    case PlateMapQuantity::kRSquared:
      return "r-squared";
    case PlateMapQuantity::kRole:
      return "role";
  }
  return "rate";
}

int PlateMapGeometry::WellAt(const QPointF& point) const {
  for (std::size_t i = 0; i < well_centres.size(); ++i) {
    const QPointF d = point - well_centres[i];
    if (d.x() * d.x() + d.y() * d.y() <= well_radius * well_radius) return static_cast<int>(i);
  }
  return -1;
}

PlateMapGeometry LayOutPlateMap(const QRectF& rect, const PlateGeometry& geometry,
                                const PlateMapOptions& options) {
  PlateMapGeometry g;
  const double text = LabelHeight(rect, geometry);
  QRectF area = rect;
  if (!options.title.isEmpty()) {
    g.title_rect = QRectF(area.left(), area.top(), area.width(), text * 1.9);
    area.setTop(g.title_rect.bottom());
  }
  if (options.show_legend) {
    const double legend_width = std::min(area.width() * 0.25, text * 10.0);
    g.legend_rect = QRectF(area.right() - legend_width, area.top(), legend_width, area.height());
    area.setRight(g.legend_rect.left() - text * 0.6);
  }
  const double label_w = options.show_labels ? text * 1.8 : 0.0;
  const double label_h = options.show_labels ? text * 1.5 : 0.0;
  const double cell = std::max(0.0, std::min((area.width() - label_w) / geometry.columns,
                                             (area.height() - label_h) / geometry.rows));
  const double grid_w = cell * geometry.columns;
  const double grid_h = cell * geometry.rows;
  g.grid_rect = QRectF(area.left() + label_w, area.top() + label_h, grid_w, grid_h);
  g.well_radius = cell * 0.42;
  g.well_centres.resize(static_cast<std::size_t>(geometry.num_wells()));
  for (int r = 0; r < geometry.rows; ++r) {
    for (int c = 0; c < geometry.columns; ++c) {
      g.well_centres[static_cast<std::size_t>(r * geometry.columns + c)] =
          QPointF(g.grid_rect.left() + (c + 0.5) * cell, g.grid_rect.top() + (r + 0.5) * cell);
    }
  }
  if (options.show_legend) g.legend_rect.setHeight(std::max(grid_h + label_h, text * 8.0));
  return g;
}

bool PlateMapFlagged(const WellRate& well, const PlateMapOptions& options) {
  if (well.role == WellRole::kEmpty) return false;
  for (const std::string& flag : well.flags) {
    if (std::find(options.unmarked_flags.begin(), options.unmarked_flags.end(), flag) ==
        options.unmarked_flags.end()) {
      return true;
    }
  }
  return false;
}

std::optional<double> PlateMapValue(const WellRate& well, PlateMapQuantity quantity,
                                    const PlateMapOptions& options) {
  switch (quantity) {
    case PlateMapQuantity::kRate:
      if (!well.HasRate()) return std::nullopt;
      if (well.role != WellRole::kSample && !(options.rate_all_roles && well.role != WellRole::kEmpty))
        return std::nullopt;
      return well.rate_uM_per_min;
    case PlateMapQuantity::kRSquared:
      if (!well.estimate.ok || !std::isfinite(well.estimate.r_squared)) return std::nullopt;
      return well.estimate.r_squared;
    case PlateMapQuantity::kRole:
      for (std::size_t k = 0; k < std::size(kRoles); ++k) {
        if (kRoles[k] == well.role) return static_cast<double>(k);
      }
      return std::nullopt;
  }
  return std::nullopt;
}

std::pair<double, double> PlateMapRange(const PlateRates& rates, PlateMapQuantity quantity,
                                        const PlateMapOptions& options) {
  if (options.range) return *options.range;
  if (quantity == PlateMapQuantity::kRole) return {0.0, static_cast<double>(std::size(kRoles) - 1)};
  detail::Extent extent;
  for (const WellRate& w : rates.wells) {
    if (const auto v = PlateMapValue(w, quantity, options)) extent.Add(*v);
  }
  if (extent.empty()) return {0.0, 1.0};
  return {extent.lo, extent.hi};
}

QColor PlateMapColour(std::optional<double> value, PlateMapQuantity quantity,
                      std::pair<double, double> range) {
  if (!value || !std::isfinite(*value)) return QColor::fromRgba(kNoValueColour);
  if (quantity == PlateMapQuantity::kRole) {
    const int k = static_cast<int>(std::lround(*value));
    if (k < 0 || k >= static_cast<int>(std::size(kRoles))) return QColor::fromRgba(kNoValueColour);
    return RoleColour(kRoles[k]);
  }
  const double width = range.second - range.first;
  const double t = width > 0.0 ? (*value - range.first) / width : 0.5;
  return ViridisColour(t);
}

void PaintPlateMap(QPainter* painter, const QRectF& rect, const PlateRates& rates,
                   const PlateGeometry& geometry, PlateMapQuantity quantity,
                   const PlateMapOptions& options) {
  painter->save();
  painter->setRenderHint(QPainter::Antialiasing, true);
  const PlateMapGeometry g = LayOutPlateMap(rect, geometry, options);
  const double text = LabelHeight(rect, geometry);
  const QColor ink = QColor::fromRgba(kInkColour);
  const auto range = PlateMapRange(rates, quantity, options);

  if (!g.title_rect.isEmpty()) {
    painter->setFont(SizedFont(text * 1.1, true));
    painter->setPen(ink);
    painter->drawText(g.title_rect, Qt::AlignLeft | Qt::AlignVCenter, options.title);
  }

  // Row letters and column numbers.
  const double cell = geometry.columns > 0 ? g.grid_rect.width() / geometry.columns : 0.0;
  if (options.show_labels && cell > 0.0) {
    painter->setFont(SizedFont(std::min(text, cell * 0.8)));
    painter->setPen(ink);
    for (int c = 0; c < geometry.columns; ++c) {
      const QRectF box(g.grid_rect.left() + c * cell, g.grid_rect.top() - text * 1.5, cell, text * 1.4);
      painter->drawText(box, Qt::AlignHCenter | Qt::AlignBottom, QString::number(c + 1));
    }
    for (int r = 0; r < geometry.rows; ++r) {
      const QRectF box(g.grid_rect.left() - text * 1.8, g.grid_rect.top() + r * cell, text * 1.6, cell);
      painter->drawText(box, Qt::AlignRight | Qt::AlignVCenter, QString::fromStdString(RowLabel(r)));
    }
  }

  // Wells: those the rates list, then outlines for the rest.
  std::vector<const WellRate*> by_index(static_cast<std::size_t>(geometry.num_wells()), nullptr);
  for (const WellRate& w : rates.wells) {
    if (w.well >= 0 && w.well < geometry.num_wells()) by_index[static_cast<std::size_t>(w.well)] = &w;
  }
  const double radius = g.well_radius;
  QPen outline(ink.lighter(250));
  outline.setWidthF(std::max(radius * 0.06, 0.1));
  QPen cross(ink);
  cross.setWidthF(std::max(radius * 0.22, 0.2));
  cross.setCapStyle(Qt::RoundCap);
  QPen halo(Qt::white);
  halo.setWidthF(cross.widthF() * 2.2);
  halo.setCapStyle(Qt::RoundCap);
  QPen flag_pen(ink);
  flag_pen.setWidthF(std::max(radius * 0.08, 0.1));
  for (int i = 0; i < geometry.num_wells(); ++i) {
    const QPointF centre = g.well_centres[static_cast<std::size_t>(i)];
    const WellRate* w = by_index[static_cast<std::size_t>(i)];
    painter->setPen(outline);
    if (w == nullptr) {
      painter->setBrush(Qt::white);
      painter->drawEllipse(centre, radius, radius);
      continue;
    }
    const auto value = w->role == WellRole::kEmpty && quantity != PlateMapQuantity::kRole
                           ? std::nullopt
                           : PlateMapValue(*w, quantity, options);
    painter->setBrush(PlateMapColour(value, quantity, range));
    painter->drawEllipse(centre, radius, radius);
    if (w->excluded && w->role != WellRole::kEmpty) {
      // A dark cross with a white halo reads on every colour of the scale.
      const double d = radius * 0.8;
      painter->setPen(halo);
      painter->drawLine(centre + QPointF(-d, -d), centre + QPointF(d, d));
      painter->drawLine(centre + QPointF(-d, d), centre + QPointF(d, -d));
      painter->setPen(cross);
      painter->drawLine(centre + QPointF(-d, -d), centre + QPointF(d, d));
      painter->drawLine(centre + QPointF(-d, d), centre + QPointF(d, -d));
    }
    if (PlateMapFlagged(*w, options)) {
      painter->setPen(flag_pen);
      painter->setBrush(QColor::fromRgba(kFlagMarkColour));
      const double fr = radius * 0.36;
      painter->drawEllipse(centre + QPointF(radius * 0.72, -radius * 0.72), fr, fr);
    }
  }

  // Legend: colour bar with its limits, or the role key; then the marks.
  if (options.show_legend && !g.legend_rect.isEmpty()) {
    const QRectF lr = g.legend_rect;
    painter->setFont(SizedFont(text * 0.9));
    const QFontMetricsF metrics(painter->font());
    const double line = metrics.height() * 1.15;
    double y = lr.top() + (options.show_labels ? text * 1.5 : 0.0);
    painter->setPen(ink);
    if (quantity == PlateMapQuantity::kRole) {
      for (WellRole role : kRoles) {
        painter->setPen(outline);
        painter->setBrush(RoleColour(role));
        painter->drawEllipse(QPointF(lr.left() + line * 0.4, y + line * 0.5), line * 0.33, line * 0.33);
        painter->setPen(ink);
        painter->drawText(QRectF(lr.left() + line, y, lr.width() - line, line), Qt::AlignLeft | Qt::AlignVCenter,
                          QString::fromLatin1(WellRoleToString(role)));
        y += line;
      }
    } else {
      const QString unit = quantity == PlateMapQuantity::kRate ? QStringLiteral("rate (µM/min)")
                                                                : QStringLiteral("R² of rate fit");
      painter->drawText(QRectF(lr.left(), y, lr.width(), line), Qt::AlignLeft | Qt::AlignVCenter, unit);
      y += line * 1.9;
      const double bar_w = std::min(lr.width() * 0.25, line * 1.2);
      const double bar_h = std::max(line * 3.0, lr.bottom() - y - line * 4.0);
      constexpr int kSteps = 64;
      painter->setPen(Qt::NoPen);
      for (int k = 0; k < kSteps; ++k) {
        // Top of the bar is the largest value.
        const double t = 1.0 - (k + 0.5) / kSteps;
        painter->setBrush(ViridisColour(t));
        painter->drawRect(QRectF(lr.left(), y + k * bar_h / kSteps, bar_w, bar_h / kSteps + 0.5 * bar_h / kSteps));
      }
      painter->setPen(ink);
      painter->setBrush(Qt::NoBrush);
      const double lo = range.first;
      const double hi = range.second;
      const double tx = lr.left() + bar_w + line * 0.3;
      const double tw = lr.right() - tx;
      painter->drawText(QRectF(tx, y - line * 0.5, tw, line), Qt::AlignLeft | Qt::AlignVCenter,
                        detail::FormatSignificant(hi, 3));
      painter->drawText(QRectF(tx, y + bar_h * 0.5 - line * 0.5, tw, line), Qt::AlignLeft | Qt::AlignVCenter,
                        detail::FormatSignificant(0.5 * (lo + hi), 3));
      painter->drawText(QRectF(tx, y + bar_h - line * 0.5, tw, line), Qt::AlignLeft | Qt::AlignVCenter,
                        detail::FormatSignificant(lo, 3));
      y += bar_h + line * 0.8;
    }
    // Marks.
    const double r = line * 0.33;
    const QPointF c1(lr.left() + line * 0.4, y + line * 0.5);
    painter->setPen(outline);
    painter->setBrush(QColor::fromRgba(kNoValueColour));
    painter->drawEllipse(c1, r, r);
    QPen small_cross(ink);
    small_cross.setWidthF(std::max(r * 0.22, 0.2));
    painter->setPen(small_cross);
    painter->drawLine(c1 + QPointF(-r * 0.8, -r * 0.8), c1 + QPointF(r * 0.8, r * 0.8));
    painter->drawLine(c1 + QPointF(-r * 0.8, r * 0.8), c1 + QPointF(r * 0.8, -r * 0.8));
    painter->setPen(ink);
    painter->drawText(QRectF(lr.left() + line, y, lr.width() - line, line), Qt::AlignLeft | Qt::AlignVCenter,
                      QStringLiteral("excluded"));
    y += line;
    const QPointF c2(lr.left() + line * 0.4, y + line * 0.5);
    painter->setPen(flag_pen);
    painter->setBrush(QColor::fromRgba(kFlagMarkColour));
    painter->drawEllipse(c2, r * 0.6, r * 0.6);
    painter->setPen(ink);
    painter->drawText(QRectF(lr.left() + line, y, lr.width() - line, line), Qt::AlignLeft | Qt::AlignVCenter,
                      QStringLiteral("flagged"));
    y += line;
    if (quantity != PlateMapQuantity::kRole) {
      const QPointF c3(lr.left() + line * 0.4, y + line * 0.5);
      painter->setPen(outline);
      painter->setBrush(QColor::fromRgba(kNoValueColour));
      painter->drawEllipse(c3, r, r);
      painter->setPen(ink);
      painter->drawText(QRectF(lr.left() + line, y, lr.width() - line, line), Qt::AlignLeft | Qt::AlignVCenter,
                        QStringLiteral("no value"));
    }
  }
  painter->restore();
}

}  // namespace ratewell
