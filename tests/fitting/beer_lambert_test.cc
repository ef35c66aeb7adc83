#include "fitting/beer_lambert.h"

#include <cmath>
#include <limits>
#include <stdexcept>

#include <gtest/gtest.h>

#include "fitting/units.h"

namespace ratewell {
namespace {

// Closed-form products and quotients of a few doubles: agreement to a few
// units in the last place.
constexpr double kClosedFormRelative = 1e-14;

void ExpectRelativeNear(double actual, double expected, double relative) {
  EXPECT_NEAR(actual, expected, relative * std::fabs(expected))
      << "actual " << actual << " expected " << expected;
}

TEST(BeerLambert, HandbookConstantsHaveTheirPublishedValues) {
  // Horecker & Kornberg 1948: ε340(NADH) = 6220 M⁻¹cm⁻¹.
  EXPECT_EQ(kNadhEpsilon340PerMolarCm, 6220.0);
  // NC-IUB 1979: 1 U = 1 µmol/min; 1 kat = 1 mol/s = 6e7 U.
  EXPECT_EQ(kMicromolePerMinutePerUnit, 1.0);
  EXPECT_EQ(kUnitsPerKatal, 6.0e7);
  // 1 mol/s = 1e6 µmol per (1/60) min, computed from the definitions.
  EXPECT_EQ(kUnitsPerKatal, 1.0e6 * 60.0);
  // Water peak: k ≈ 0.18 per cm near 25 °C (common practice, from memory).
  EXPECT_EQ(kWaterPeakAbsorbancePerCm, 0.18);
}

TEST(BeerLambert, NadhAbsorbanceOf0622In1CmIs100Micromolar) {
  // Horecker & Kornberg 1948: ε340 = 6220 M⁻¹cm⁻¹, so A = 0.622 in 1 cm is
  // 0.622 / 6220 M = 1.0e-4 M = 100 µM.
  ExpectRelativeNear(AbsorbanceToMolar(0.622, 6220.0, 1.0), 1.0e-4, kClosedFormRelative);
  ExpectRelativeNear(AbsorbanceToMicromolar(0.622, 6220.0, 1.0), 100.0, kClosedFormRelative);
  // The same absorbance over half the path is twice the concentration.
  ExpectRelativeNear(AbsorbanceToMicromolar(0.622, 6220.0, 0.5), 200.0, kClosedFormRelative);
  // 200 µL in a 0.32 cm² well: l = 0.625 cm; 100 µM gives A = 0.38875.
  ExpectRelativeNear(MicromolarToAbsorbance(100.0, 6220.0, 0.625), 0.38875,
                     kClosedFormRelative);
}

TEST(BeerLambert, AbsorbanceAndConcentrationAreInverses) {
  for (double uM : {0.5, 12.0, 150.0, 333.3}) {
    for (double cm : {0.3, 0.55, 1.0}) {
      const double a = MicromolarToAbsorbance(uM, kNadhEpsilon340PerMolarCm, cm);
      ExpectRelativeNear(AbsorbanceToMicromolar(a, kNadhEpsilon340PerMolarCm, cm), uM,
                         kClosedFormRelative);
    }
  }
  EXPECT_EQ(AbsorbanceToMicromolar(0.0, 6220.0, 1.0), 0.0);
}

TEST(BeerLambert, ConsumedSpeciesGivesANegativeFactorSoProductIsPositive) {
  AssaySettings::Detection nadh;  // consumed, ε 6220, one per turnover
  const double factor = ProductMicromolarPerAbsorbance(nadh, 1.0);
  // −1e6 / (6220 · 1 · 1) µM per absorbance unit.
  ExpectRelativeNear(factor, -1.0e6 / 6220.0, kClosedFormRelative);
  // A340 falling by 0.0622 in 1 cm: 10 µM NADH oxidised = 10 µM product
  // (Horecker & Kornberg 1948 ε).
  ExpectRelativeNear(factor * (0.9 - 0.9622), 10.0, kClosedFormRelative);
}

TEST(BeerLambert, FormedSpeciesGivesAPositiveFactor) {
  AssaySettings::Detection formed;
  formed.direction = DetectionDirection::kFormed;
  const double factor = ProductMicromolarPerAbsorbance(formed, 0.625);
  ExpectRelativeNear(factor, 1.0e6 / (6220.0 * 0.625), kClosedFormRelative);
  EXPECT_GT(factor * 0.1, 0.0);
}

TEST(BeerLambert, TwoMoleculesPerTurnoverHalveTheProduct) {
  AssaySettings::Detection one;
  AssaySettings::Detection two;
  two.per_turnover = 2.0;
  ExpectRelativeNear(ProductMicromolarPerAbsorbance(two, 0.8),
                     0.5 * ProductMicromolarPerAbsorbance(one, 0.8), kClosedFormRelative);
  // −1e6 / (ε · l · per_turnover) with ε = 6317, l = 0.55, 2 per turnover.
  AssaySettings::Detection other;
  other.epsilon_per_M_cm = 6317.0;
  other.per_turnover = 2.0;
  ExpectRelativeNear(ProductMicromolarPerAbsorbance(other, 0.55),
                     -1.0e6 / (6317.0 * 0.55 * 2.0), kClosedFormRelative);
}

TEST(BeerLambert, RateInAVolumeIsAnAmountPerMinuteInUnits) {
  // µM/min = µmol/(L·min); 1000 µM/min in 1 mL (1e-3 L) is 1 µmol/min = 1 U
  // (NC-IUB 1979: 1 U = 1 µmol/min).
  ExpectRelativeNear(MicromolePerMinute(1000.0, 1000.0), 1.0, kClosedFormRelative);
  // 5 µM/min in a 200 µL well: 5e-6 mol/L/min × 2e-4 L = 1e-9 mol/min = 1e-3 µmol/min.
  ExpectRelativeNear(MicromolePerMinute(5.0, 200.0), 1.0e-3, kClosedFormRelative);
}

TEST(BeerLambert, SpecificActivityIsUnitsPerMilligramOfEnzyme) {
  // 10 µM/min with enzyme at 0.001 mg/mL: in 1 mL, 0.01 µmol/min = 0.01 U made
  // by 0.001 mg of enzyme, so 10 U/mg (1 U = 1 µmol/min, NC-IUB 1979).
  ExpectRelativeNear(UnitsPerMilligram(10.0, 0.001), 10.0, kClosedFormRelative);
  // The same from amount per minute in an arbitrary volume divided by the mass there.
  const double volume_uL = 180.0;
  const double mg_in_well = 0.0004 * volume_uL * 1e-3;  // mg/mL × mL
  ExpectRelativeNear(UnitsPerMilligram(2.7, 0.0004),
                     MicromolePerMinute(2.7, volume_uL) / mg_in_well, kClosedFormRelative);
}

TEST(BeerLambert, TurnoverNumberIsPerSecondPerEnzymeMolecule) {
  // 30 µM/min with 5 nM = 0.005 µM enzyme: 6000 per minute = 100 per second.
  ExpectRelativeNear(TurnoverPerSecond(30.0, 5.0), 100.0, kClosedFormRelative);
  // A 1 µM/min rate with 1 µM enzyme: 1/60 s⁻¹.
  ExpectRelativeNear(TurnoverPerSecond(1.0, 1000.0), 1.0 / 60.0, kClosedFormRelative);
}

TEST(BeerLambert, EnzymeNanomolarFromMassConcentration) {
  // 0.0002 mg/mL = 0.0002 g/L of a 52000 g/mol protein = 3.846e-9 M.
  ExpectRelativeNear(EnzymeNanomolar(0.0002, 52000.0), 3.8461538461538463, kClosedFormRelative);
  // 1 mg/mL of a 50 kDa protein is 20 µM = 20000 nM.
  ExpectRelativeNear(EnzymeNanomolar(1.0, 50000.0), 20000.0, kClosedFormRelative);
  AssaySettings::Enzyme enzyme;
  enzyme.mg_per_mL = 0.0002;
  enzyme.molar_mass_Da = 52000.0;
  ExpectRelativeNear(*enzyme.Nanomolar(), EnzymeNanomolar(0.0002, 52000.0), kClosedFormRelative);
}

TEST(BeerLambert, SpecificActivityAndTurnoverAgreeThroughMolarMass) {
  // A molar mass of M g/mol is M mg/mmol, so U/mg × M = µmol·min⁻¹·mmol⁻¹
  // = 1e-3 min⁻¹, and kcat [s⁻¹] = (U/mg) × M / 1000 / 60.
  const double rate = 4.2;
  const double mg_per_mL = 0.0005;
  const double molar_mass = 61000.0;
  const double units_per_mg = UnitsPerMilligram(rate, mg_per_mL);
  const double kcat = TurnoverPerSecond(rate, EnzymeNanomolar(mg_per_mL, molar_mass));
  ExpectRelativeNear(kcat, units_per_mg * molar_mass / 60.0 / 1000.0, kClosedFormRelative);
}

TEST(BeerLambert, KatalAndUnitsConvert) {
  // NC-IUB 1979: 1 kat = 6e7 U; 1 U = 16.67 nkat.
  EXPECT_EQ(KatalToUnits(1.0), 6.0e7);
  EXPECT_EQ(UnitsToKatal(6.0e7), 1.0);
  ExpectRelativeNear(UnitsToKatal(1.0) * 1e9, 16.666666666666668, kClosedFormRelative);
}

TEST(BeerLambert, NonPositiveArgumentsThrowRatherThanGiveNaN) {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  EXPECT_THROW(AbsorbanceToMicromolar(0.5, 0.0, 1.0), std::invalid_argument);
  EXPECT_THROW(AbsorbanceToMicromolar(0.5, 6220.0, -1.0), std::invalid_argument);
  EXPECT_THROW(AbsorbanceToMolar(0.5, nan, 1.0), std::invalid_argument);
  EXPECT_THROW(MicromolarToAbsorbance(5.0, 6220.0, 0.0), std::invalid_argument);
  AssaySettings::Detection detection;
  detection.per_turnover = 0.0;
  EXPECT_THROW(ProductMicromolarPerAbsorbance(detection, 1.0), std::invalid_argument);
  EXPECT_THROW(ProductMicromolarPerAbsorbance(AssaySettings::Detection(), nan),
               std::invalid_argument);
  EXPECT_THROW(UnitsPerMilligram(1.0, 0.0), std::invalid_argument);
  EXPECT_THROW(TurnoverPerSecond(1.0, -5.0), std::invalid_argument);
  EXPECT_THROW(EnzymeNanomolar(0.001, 0.0), std::invalid_argument);
  EXPECT_THROW(MicromolePerMinute(1.0, 0.0), std::invalid_argument);
  try {
    AbsorbanceToMicromolar(0.5, 6220.0, 0.0);
    ADD_FAILURE() << "no exception";
  } catch (const std::invalid_argument& error) {
    EXPECT_NE(std::string(error.what()).find("pathlength_cm"), std::string::npos);
  }
}

}  // namespace
}  // namespace ratewell
