// Numbers and wells as the window writes them.
#pragma once

#include <QString>
#include <cmath>

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

}  // namespace ratewell::gui
