// The model catalogue: ids, parameter names and units as DESIGN §2 fixes
// them, and the rate laws against closed-form properties of the published
// equations (Michaelis–Menten, Haldane substrate inhibition, Hill, the
// inhibition modes, Morrison 1969, the four-parameter logistic).
#include "fitting/kinetic_models.h"

#include <cmath>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "tests/fitting/kinetic_test_util.h"

namespace ratewell {
namespace {

using testing::Point;

// Closed forms evaluated in double: agreement to a few ulps.
constexpr double kClosedFormTolerance = 1e-13;

std::vector<std::string> Names(KineticModel model) {
  std::vector<std::string> names;
  for (const ParameterDescription& p : DescribeModel(model).parameters) {
    names.emplace_back(p.name);
  }
  return names;
}

TEST(KineticModels, IdsRoundTripForEveryModel) {
  ASSERT_EQ(AllKineticModels().size(), 10u);
  for (KineticModel model : AllKineticModels()) {
    KineticModel back = KineticModel::kMorrison;
    ASSERT_TRUE(StringToKineticModel(KineticModelToString(model), &back))
        << KineticModelToString(model);
    EXPECT_EQ(back, model);
    EXPECT_EQ(DescribeModel(model).id, KineticModelToString(model));
  }
  KineticModel untouched = KineticModel::kHill;
  EXPECT_FALSE(StringToKineticModel("michaelis_menten", &untouched));
  EXPECT_FALSE(StringToKineticModel("", &untouched));
  EXPECT_EQ(untouched, KineticModel::kHill);
}

TEST(KineticModels, IdsAndParameterNamesAreThoseOfTheDesign) {
  // DESIGN §2, "Kinetic models".
  using M = KineticModel;
  EXPECT_STREQ(KineticModelToString(M::kMichaelisMenten), "michaelis-menten");
  EXPECT_STREQ(KineticModelToString(M::kSubstrateInhibition), "substrate-inhibition");
  EXPECT_STREQ(KineticModelToString(M::kHill), "hill");
  EXPECT_STREQ(KineticModelToString(M::kCompetitive), "competitive");
  EXPECT_STREQ(KineticModelToString(M::kUncompetitive), "uncompetitive");
  EXPECT_STREQ(KineticModelToString(M::kNoncompetitive), "noncompetitive");
  EXPECT_STREQ(KineticModelToString(M::kMixed), "mixed");
  EXPECT_STREQ(KineticModelToString(M::kMorrison), "morrison");
  EXPECT_STREQ(KineticModelToString(M::kFourParameterLogistic), "four-parameter-logistic");
  using V = std::vector<std::string>;
  EXPECT_EQ(Names(M::kMichaelisMenten), (V{"Vmax", "Km"}));
  EXPECT_EQ(Names(M::kSubstrateInhibition), (V{"Vmax", "Km", "Ksi"}));
  EXPECT_EQ(Names(M::kHill), (V{"Vmax", "Khalf", "h"}));
  for (M m : {M::kCompetitive, M::kUncompetitive, M::kNoncompetitive}) {
    EXPECT_EQ(Names(m), (V{"Vmax", "Km", "Ki"}));
  }
  EXPECT_EQ(Names(M::kMixed), (V{"Vmax", "Km", "Ki", "alpha"}));
  // E is Morrison's known enzyme concentration, a parameter held fixed.
  EXPECT_EQ(Names(M::kMorrison), (V{"v0", "Kiapp", "E"}));
  EXPECT_EQ(Names(M::kFourParameterLogistic), (V{"top", "bottom", "IC50", "h"}));
  EXPECT_EQ(Names(M::kFourParameterLogisticLog10), (V{"top", "bottom", "log10_IC50", "h"}));
  EXPECT_EQ(ParameterIndex(M::kMixed, "alpha"), 3);
  EXPECT_EQ(ParameterIndex(M::kMixed, "Ksi"), -1);
}

TEST(KineticModels, UnitsFollowTheData) {
  const KineticData defaults;
  EXPECT_EQ(ParameterUnit(ParameterKind::kRate, defaults), "uM/min");
  EXPECT_EQ(ParameterUnit(ParameterKind::kConcentration, defaults), "uM");
  EXPECT_EQ(ParameterUnit(ParameterKind::kDimensionless, defaults), "dimensionless");
  EXPECT_EQ(ParameterUnit(ParameterKind::kLog10Concentration, defaults), "log10(uM)");
  KineticData other;
  other.rate_unit = "counts/min/min";
  other.concentration_unit = "ppm";
  EXPECT_EQ(ParameterUnit(ParameterKind::kRate, other), "counts/min/min");
  EXPECT_EQ(ParameterUnit(ParameterKind::kConcentration, other), "ppm");
  const ModelDescription& hill = DescribeModel(KineticModel::kHill);
  EXPECT_EQ(hill.parameters[2].kind, ParameterKind::kDimensionless);
  EXPECT_EQ(DescribeModel(KineticModel::kMixed).parameters[3].kind,
            ParameterKind::kDimensionless);
}

TEST(KineticModels, FamiliesAreChosenByThePresenceOfAnInhibitor) {
  KineticData data;
  data.points = {Point(1.0, 0.0, 1.0), Point(2.0, 0.0, 1.5)};
  EXPECT_EQ(FamilyForData(data), ModelFamily::kSubstrate);
  EXPECT_EQ(CandidateModels(ModelFamily::kSubstrate),
            (std::vector<KineticModel>{KineticModel::kMichaelisMenten,
                                       KineticModel::kSubstrateInhibition, KineticModel::kHill}));
  data.points.push_back(Point(2.0, 0.5, 1.0));
  EXPECT_EQ(FamilyForData(data), ModelFamily::kInhibition);
  EXPECT_EQ(CandidateModels(ModelFamily::kInhibition).size(), 4u);
  EXPECT_STREQ(ModelFamilyToString(ModelFamily::kInhibition), "inhibition");
}

TEST(KineticModels, MichaelisMentenGivesHalfVmaxAtKm) {
  EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMichaelisMenten, {10.0, 2.5}, 2.5, 0.0), 5.0,
              kClosedFormTolerance);
  EXPECT_EQ(EvaluateKineticModel(KineticModel::kMichaelisMenten, {10.0, 2.5}, 0.0, 0.0), 0.0);
}

TEST(KineticModels, SubstrateInhibitionPeaksAtTheGeometricMeanOfKmAndKsi) {
  // v = Vmax·S/(Km + S + S²/Ksi) peaks at S = √(Km·Ksi) with
  // v = Vmax/(1 + 2√(Km/Ksi)) (Haldane).
  const double vmax = 8.0, km = 4.0, ksi = 100.0;
  const double s_peak = std::sqrt(km * ksi);
  const double v_peak = EvaluateKineticModel(KineticModel::kSubstrateInhibition,
                                             {vmax, km, ksi}, s_peak, 0.0);
  EXPECT_NEAR(v_peak, vmax / (1.0 + 2.0 * std::sqrt(km / ksi)), kClosedFormTolerance);
  for (double factor : {0.9, 1.1}) {
    EXPECT_LT(EvaluateKineticModel(KineticModel::kSubstrateInhibition, {vmax, km, ksi},
                                   s_peak * factor, 0.0),
              v_peak);
  }
}

TEST(KineticModels, HillIsHalfMaximalAtKhalfAndMichaelisMentenAtHOne) {
  for (double h : {0.5, 1.0, 2.7}) {
    EXPECT_NEAR(EvaluateKineticModel(KineticModel::kHill, {6.0, 3.0, h}, 3.0, 0.0), 3.0,
                kClosedFormTolerance);
  }
  for (double s : {0.1, 1.0, 7.0, 40.0}) {
    EXPECT_NEAR(EvaluateKineticModel(KineticModel::kHill, {6.0, 3.0, 1.0}, s, 0.0),
                EvaluateKineticModel(KineticModel::kMichaelisMenten, {6.0, 3.0}, s, 0.0),
                kClosedFormTolerance);
  }
  EXPECT_EQ(EvaluateKineticModel(KineticModel::kHill, {6.0, 3.0, 2.0}, 0.0, 0.0), 0.0);
}

TEST(KineticModels, InhibitionModesReduceToMichaelisMentenWithoutInhibitor) {
  const std::vector<double> p = {10.0, 2.0, 0.5};
  for (KineticModel m : {KineticModel::kCompetitive, KineticModel::kUncompetitive,
                         KineticModel::kNoncompetitive}) {
    EXPECT_NEAR(EvaluateKineticModel(m, p, 3.0, 0.0), 6.0, kClosedFormTolerance)
        << KineticModelToString(m);
  }
  EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMixed, {10.0, 2.0, 0.5, 4.0}, 3.0, 0.0), 6.0,
              kClosedFormTolerance);
}

TEST(KineticModels, InhibitorAtKiActsAsTheTextbookModesSay) {
  // At I = Ki: competitive doubles the apparent Km, uncompetitive halves
  // Vmax and Km, noncompetitive halves Vmax.
  const double vmax = 10.0, km = 2.0, ki = 0.5, s = 3.0;
  EXPECT_NEAR(EvaluateKineticModel(KineticModel::kCompetitive, {vmax, km, ki}, s, ki),
              vmax * s / (2.0 * km + s), kClosedFormTolerance);
  EXPECT_NEAR(EvaluateKineticModel(KineticModel::kUncompetitive, {vmax, km, ki}, s, ki),
              (vmax / 2.0) * s / (km / 2.0 + s), kClosedFormTolerance);
  EXPECT_NEAR(EvaluateKineticModel(KineticModel::kNoncompetitive, {vmax, km, ki}, s, ki),
              (vmax / 2.0) * s / (km + s), kClosedFormTolerance);
}

TEST(KineticModels, MixedContainsNoncompetitiveAndApproachesTheOtherModes) {
  const double vmax = 10.0, km = 2.0, ki = 0.5;
  for (double s : {0.5, 4.0}) {
    for (double i : {0.25, 2.0}) {
      // alpha = 1 is noncompetitive exactly.
      EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMixed, {vmax, km, ki, 1.0}, s, i),
                  EvaluateKineticModel(KineticModel::kNoncompetitive, {vmax, km, ki}, s, i),
                  kClosedFormTolerance);
      // alpha → ∞ tends to competitive (relative difference ~ 1/alpha).
      EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMixed, {vmax, km, ki, 1e9}, s, i),
                  EvaluateKineticModel(KineticModel::kCompetitive, {vmax, km, ki}, s, i), 1e-7);
      // Ki → ∞ with alpha·Ki = Ki' fixed tends to uncompetitive with Ki'.
      EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMixed, {vmax, km, ki * 1e9, 1e-9}, s, i),
                  EvaluateKineticModel(KineticModel::kUncompetitive, {vmax, km, ki}, s, i),
                  1e-7);
    }
  }
}

TEST(KineticModels, MorrisonMatchesTheDesignFormulaAndItsClassicalLimits) {
  const double v0 = 2.0, kiapp = 2.0, e = 10.0;
  // DESIGN §2's form, with the cancellation the implementation avoids.
  auto design_form = [&](double i) {
    const double b = e + i + kiapp;
    return v0 * (1.0 - (b - std::sqrt(b * b - 4.0 * e * i)) / (2.0 * e));
  };
  for (double i : {0.5, 5.0, 50.0, 200.0}) {
    EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMorrison, {v0, kiapp, e}, 0.0, i),
                design_form(i), 1e-12 * v0);
  }
  // Tight binding: IC50 = Kiapp + E/2 (the half-activity point of the
  // quadratic, exact).
  EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMorrison, {v0, kiapp, e}, 0.0, kiapp + e / 2),
              v0 / 2.0, kClosedFormTolerance);
  // E → 0: the classical v0/(1 + I/Kiapp).
  EXPECT_NEAR(EvaluateKineticModel(KineticModel::kMorrison, {v0, kiapp, 1e-9}, 0.0, 3.0),
              v0 / (1.0 + 3.0 / kiapp), 1e-9);
  EXPECT_EQ(EvaluateKineticModel(KineticModel::kMorrison, {v0, kiapp, e}, 0.0, 0.0), v0);
}

TEST(KineticModels, LogisticFormsAgreeAndPassTheMidpointAtIC50) {
  const double top = 100.0, bottom = 5.0, ic50 = 1.5, h = 1.2;
  EXPECT_NEAR(
      EvaluateKineticModel(KineticModel::kFourParameterLogistic, {top, bottom, ic50, h}, 0.0, ic50),
      0.5 * (top + bottom), kClosedFormTolerance * top);
  for (double i : {0.001, 0.3, 1.5, 20.0, 100.0}) {
    EXPECT_NEAR(EvaluateKineticModel(KineticModel::kFourParameterLogistic,
                                     {top, bottom, ic50, h}, 0.0, i),
                EvaluateKineticModel(KineticModel::kFourParameterLogisticLog10,
                                     {top, bottom, std::log10(ic50), h}, 0.0, i),
                kClosedFormTolerance * top);
  }
  EXPECT_EQ(
      EvaluateKineticModel(KineticModel::kFourParameterLogistic, {top, bottom, ic50, h}, 0.0, 0.0),
      top);
}

TEST(KineticModels, WrongNumberOfValuesGivesNaN) {
  EXPECT_TRUE(std::isnan(EvaluateKineticModel(KineticModel::kMixed, {1.0, 2.0, 3.0}, 1.0, 1.0)));
  // Km + S = 0: undefined, NaN rather than a number.
  EXPECT_TRUE(std::isnan(EvaluateKineticModel(KineticModel::kMichaelisMenten, {1.0, 0.0}, 0.0, 0.0)));
}

}  // namespace
}  // namespace ratewell
