// Beer–Lambert conversion and enzyme-activity units.
//
// Absorbance A of a species at concentration c (mol/L), with molar absorption
// coefficient ε (M⁻¹·cm⁻¹) over a pathlength l (cm), is
//
//     A = ε · l · c        so        c = A / (ε · l).
//
// ε(NADH, 340 nm) = 6220 M⁻¹·cm⁻¹ (Horecker & Kornberg 1948): A340 = 0.622 in
// 1 cm is 100 µM NADH.
//
// In a coupled assay the product formed is tracked through the detected
// species: each product turnover consumes (or forms) `per_turnover` molecules
// of it. A change of absorbance A − A0 therefore means
//
//     product_µM = ± 1e6 · (A − A0) / (ε · l · per_turnover),
//
// negative sign when the species is consumed (A falls as product forms), so
// that product is always counted positive.
//
// Rates are µM/min = µmol·L⁻¹·min⁻¹. Enzyme units (NC-IUB 1979): 1 U =
// 1 µmol/min, 1 kat = 1 mol/s = 6e7 U. The conversions below take care of the
// litres, milligrams and seconds; each states its formula.
//
// Arguments that must be positive (ε, l, per_turnover, volumes, enzyme
// amounts, molar mass) are checked: a non-positive or non-finite one throws
// std::invalid_argument naming it. Settings read through ParseAssaySettings
// never trigger this; it guards against programming errors, so no NaN or
// infinity leaks out silently.
#pragma once

#include "fitting/assay_settings.h"

namespace ratewell {

// c [mol/L] = A / (ε [M⁻¹·cm⁻¹] · l [cm]).
double AbsorbanceToMolar(double absorbance, double epsilon_per_M_cm, double pathlength_cm);

// c [µM] = 1e6 · A / (ε · l).
double AbsorbanceToMicromolar(double absorbance, double epsilon_per_M_cm, double pathlength_cm);

// A = ε · l · c [µM] · 1e-6; the inverse of AbsorbanceToMicromolar.
double MicromolarToAbsorbance(double concentration_uM, double epsilon_per_M_cm,
                              double pathlength_cm);

// The signed factor F with product_µM = F · (A − A0):
//   consumed: F = −1e6 / (ε · l · per_turnover)
//   formed:   F = +1e6 / (ε · l · per_turnover)
// A slope in A/min times F is a product rate in µM/min.
double ProductMicromolarPerAbsorbance(const AssaySettings::Detection& detection,
                                      double pathlength_cm);

// Amount per minute in a well: µmol/min = rate [µmol·L⁻¹·min⁻¹] × volume [L]
// = rate_uM_per_min × volume_uL × 1e-6. Equal to U (1 U = 1 µmol/min).
double MicromolePerMinute(double rate_uM_per_min, double volume_uL);

// Specific activity in U/mg. With enzyme at m mg/mL = m g/L = 1000·m mg/L:
//   U/mg = rate [µmol·L⁻¹·min⁻¹] / (1000 · m [mg/L])
//        = rate_uM_per_min / (enzyme_mg_per_mL × 1000).
// Independent of the well volume (both are per litre).
double UnitsPerMilligram(double rate_uM_per_min, double enzyme_mg_per_mL);

// Turnover number (kcat when the rate is Vmax) in s⁻¹. Enzyme at E nM =
// E × 1e-3 µM:
//   kcat = rate_uM_per_min / (enzyme_nM × 1e-3) [min⁻¹] / 60 [s/min].
double TurnoverPerSecond(double rate_uM_per_min, double enzyme_nM);

// Enzyme molar concentration from mass concentration:
//   nM = mg_per_mL [g/L] / molar_mass_Da [g/mol] × 1e9 [nM per M].
double EnzymeNanomolar(double enzyme_mg_per_mL, double molar_mass_Da);

// katal from enzyme units: kat = U / 6e7 (1 kat = 1 mol/s = 6e7 µmol/min).
double UnitsToKatal(double units);
// enzyme units from katal: U = kat × 6e7.
double KatalToUnits(double katal);

}  // namespace ratewell
