#include "fitting/beer_lambert.h"

#include <cmath>
#include <stdexcept>
#include <string>

#include "fitting/units.h"

namespace ratewell {
namespace {

// Throws std::invalid_argument unless value is finite and > 0.
double RequirePositive(double value, const char* name) {
  if (!std::isfinite(value) || !(value > 0.0)) {
    throw std::invalid_argument(std::string(name) + " must be a positive finite number, got " +
                                std::to_string(value));
  }
  return value;
}

}  // namespace

double AbsorbanceToMolar(double absorbance, double epsilon_per_M_cm, double pathlength_cm) {
  RequirePositive(epsilon_per_M_cm, "epsilon_per_M_cm");
  RequirePositive(pathlength_cm, "pathlength_cm");
  return absorbance / (epsilon_per_M_cm * pathlength_cm);
}

double AbsorbanceToMicromolar(double absorbance, double epsilon_per_M_cm, double pathlength_cm) {
  return AbsorbanceToMolar(absorbance, epsilon_per_M_cm, pathlength_cm) * kMicromolarPerMolar;
}

double MicromolarToAbsorbance(double concentration_uM, double epsilon_per_M_cm,
                              double pathlength_cm) {
  RequirePositive(epsilon_per_M_cm, "epsilon_per_M_cm");
  RequirePositive(pathlength_cm, "pathlength_cm");
  return epsilon_per_M_cm * pathlength_cm * concentration_uM / kMicromolarPerMolar;
}

double ProductMicromolarPerAbsorbance(const AssaySettings::Detection& detection,
                                      double pathlength_cm) {
  RequirePositive(detection.epsilon_per_M_cm, "epsilon_per_M_cm");
  RequirePositive(pathlength_cm, "pathlength_cm");
  RequirePositive(detection.per_turnover, "per_turnover");
  const double magnitude = kMicromolarPerMolar / (detection.epsilon_per_M_cm * pathlength_cm *
                                                  detection.per_turnover);
  return detection.direction == DetectionDirection::kConsumed ? -magnitude : magnitude;
}

double MicromolePerMinute(double rate_uM_per_min, double volume_uL) {
  RequirePositive(volume_uL, "volume_uL");
  return rate_uM_per_min * volume_uL * kLitresPerMicrolitre;
}

double UnitsPerMilligram(double rate_uM_per_min, double enzyme_mg_per_mL) {
  RequirePositive(enzyme_mg_per_mL, "enzyme_mg_per_mL");
  return rate_uM_per_min / kMicromolePerMinutePerUnit /
         (enzyme_mg_per_mL * kMilligramsPerLitrePerMilligramPerMillilitre);
}

double TurnoverPerSecond(double rate_uM_per_min, double enzyme_nM) {
  RequirePositive(enzyme_nM, "enzyme_nM");
  const double enzyme_uM = enzyme_nM / kNanomolarPerMicromolar;
  return rate_uM_per_min / enzyme_uM / kSecondsPerMinute;
}

double EnzymeNanomolar(double enzyme_mg_per_mL, double molar_mass_Da) {
  RequirePositive(enzyme_mg_per_mL, "enzyme_mg_per_mL");
  RequirePositive(molar_mass_Da, "molar_mass_Da");
  return enzyme_mg_per_mL / molar_mass_Da * kNanomolarPerMolar;
}

double UnitsToKatal(double units) { return units / kUnitsPerKatal; }

double KatalToUnits(double katal) { return katal * kUnitsPerKatal; }

}  // namespace ratewell
