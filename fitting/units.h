// Units and handbook constants used by the fitting code, each with its source.
//
// Conventions (DESIGN §4): concentrations in micromolar (µM), times in
// minutes, rates in µM/min, pathlengths in centimetres, volumes in
// microlitres, molar absorption coefficients in M⁻¹·cm⁻¹.
//
// Where a value is a fact of the trade rather than a published constant, the
// comment says "common practice"; where it was written down from memory, the
// comment says so. Journal volume and page numbers below are cited from
// memory. Every setting-like value here can be overridden in ASSAY.json.
#pragma once

namespace ratewell {

// ---------------------------------------------------------------------------
// Molar absorption coefficients.

// NADH at 340 nm: 6220 M⁻¹·cm⁻¹ (Horecker & Kornberg 1948, J. Biol. Chem.
// 175:385). The default of detection.epsilon_per_M_cm.
inline constexpr double kNadhEpsilon340PerMolarCm = 6220.0;
// NADPH at 340 nm: taken equal to NADH (common practice; same reduced
// nicotinamide chromophore).
inline constexpr double kNadphEpsilon340PerMolarCm = 6220.0;
// The detection wavelength of NAD(P)H-linked assays.
inline constexpr double kNadhWavelengthNm = 340.0;

// ---------------------------------------------------------------------------
// Enzyme activity units (NC-IUB 1979, "Units of enzyme activity",
// Eur. J. Biochem. 97:319).

// 1 U (enzyme unit) = 1 µmol of substrate converted per minute.
inline constexpr double kMicromolePerMinutePerUnit = 1.0;
// 1 kat = 1 mol/s = 1e6 µmol / (1/60 min) = 6e7 U.
inline constexpr double kUnitsPerKatal = 6.0e7;

// ---------------------------------------------------------------------------
// Pathlength from the near-infrared water peak (common practice).

// Absorbance of water at its 977 nm overtone band minus a 900 nm baseline,
// per cm of pathlength: about 0.18 near 25 °C (value from memory; it drifts
// with temperature, so it is a setting).
inline constexpr double kWaterPeakAbsorbancePerCm = 0.18;
inline constexpr double kWaterPeakSampleNm = 977.0;
inline constexpr double kWaterPeakReferenceNm = 900.0;

// Plausible pathlengths of a filled microplate well (our choice from common
// well depths): a water-peak or standards result outside this range is
// flagged for a person to look at.
inline constexpr double kPlausibleWellPathlengthMinCm = 0.05;
inline constexpr double kPlausibleWellPathlengthMaxCm = 2.0;
// No microplate or cuvette reader has a pathlength of 5 cm or more: any
// setting that large is a typo (e.g. millimetres given as centimetres).
inline constexpr double kMaxSensiblePathlengthCm = 5.0;

// ---------------------------------------------------------------------------
// Linear-range defaults (common practice).

// Absorbance above which a reader's response is taken as no longer linear.
inline constexpr double kDefaultAbsorbanceCeiling = 2.5;
// Initial rate: less than 10 % of the substrate consumed.
inline constexpr double kDefaultMaxSubstrateConsumed = 0.10;

// ---------------------------------------------------------------------------
// Plain unit factors (SI definitions).

inline constexpr double kMicromolarPerMolar = 1.0e6;
inline constexpr double kNanomolarPerMolar = 1.0e9;
inline constexpr double kNanomolarPerMicromolar = 1.0e3;
inline constexpr double kSecondsPerMinute = 60.0;
inline constexpr double kLitresPerMicrolitre = 1.0e-6;
// 1 µL = 1 mm³ = 1e-3 cm³.
inline constexpr double kCubicCentimetresPerMicrolitre = 1.0e-3;
// mg/mL = g/L, and 1 g = 1000 mg: mg/mL × 1000 = mg/L.
inline constexpr double kMilligramsPerLitrePerMilligramPerMillilitre = 1.0e3;

}  // namespace ratewell
