// Numbers and wells as the window writes them.
#pragma once

#include <QString>
#include <cmath>
#include <string>

#include "fitting/plate_rates.h"

namespace ratewell::gui {

// Four significant digits; "—" for a value that does not exist.
inline QString FormatValue(double value, int digits = 4) {
  if (!std::isfinite(value)) return QStringLiteral("—");
  return QString::number(value, 'g', digits);
}

// "B03 · sample · [S] 50 µM · [I] 2.5 µM"
inline QString DescribeWell(const WellRate& w) {
  QString text = QString::fromStdString(w.name) + " · " + WellRoleToString(w.role);
  if (std::isfinite(w.substrate_uM)) text += " · [S] " + FormatValue(w.substrate_uM) + " µM";
  if (w.inhibitor_uM > 0.0) text += " · [I] " + FormatValue(w.inhibitor_uM) + " µM";
  return text;
}

// "1.234 ± 0.021 µM/min", or why there is no rate.
inline QString DescribeRate(const WellRate& w) {
  if (!w.HasRate()) return "no rate: " + QString::fromStdString(w.estimate.message);
  return FormatValue(w.rate_uM_per_min) + " ± " + FormatValue(w.se_uM_per_min, 2) + " µM/min";
}

// A unit as people read it: the files keep ASCII ("uM/min", "1/(M*s)"), the
// window writes "µM/min", "M⁻¹·s⁻¹", "s⁻¹".
inline QString DisplayUnit(const std::string& unit) {
  if (unit == "1/s") return QStringLiteral("s⁻¹");
  if (unit == "1/(M*s)") return QStringLiteral("M⁻¹·s⁻¹");
  if (unit == "dimensionless") return QStringLiteral("—");
  QString text = QString::fromStdString(unit);
  if (text.startsWith(QLatin1String("uM")) || text.startsWith(QLatin1String("log10(uM"))) {
    text.replace(QLatin1String("uM"), QStringLiteral("µM"));
  }
  return text;
}

}  // namespace ratewell::gui
