// Model choice within a family (`--model auto`). Data are invented (our own
// scenario): exact rate laws times a deterministic ripple 1 + a·sin(7k), so
// each data set has a known generating model.
#include "fitting/model_selection.h"

#include <cmath>
#include <functional>
#include <numeric>
#include <string>
#include <vector>

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include "tests/fitting/kinetic_test_util.h"

namespace ratewell {
namespace {

using testing::Point;

using ::testing::HasSubstr;

KineticData SubstrateSeries(KineticModel model, const std::vector<double>& values,
                            double ripple) {
  KineticData data;
  int k = 0;
  for (double s : {1.0, 2.0, 4.0, 8.0, 16.0, 32.0, 64.0, 128.0, 256.0, 512.0}) {
    for (int replicate = 0; replicate < 2; ++replicate) {
      const double v = EvaluateKineticModel(model, values, s, 0.0);
      data.points.push_back(Point(s, 0.0, v * (1.0 + ripple * std::sin(7.0 * k++))));
    }
  }
  return data;
}

// The S × I grid of the reference examples: S in {0.5 … 16}, I in {0 … 2}.
KineticData InhibitionGrid(KineticModel model, const std::vector<double>& values) {
  KineticData data;
  int k = 0;
  for (double s : {0.5, 1.0, 2.0, 4.0, 8.0, 16.0}) {
    for (double i : {0.0, 0.25, 0.5, 1.0, 2.0}) {
      const double v = EvaluateKineticModel(model, values, s, i);
      data.points.push_back(
          Point(s, i, v * (1.0 + 0.03 * std::sin(7.0 * k++))));
    }
  }
  return data;
}

FitOptions Quick() {
  FitOptions options;
  options.interval_method = IntervalMethod::kAsymptotic;
  return options;
}

TEST(ModelSelection, MichaelisMentenDataKeepMichaelisMenten) {
  const ModelChoice choice =
      FitAndChooseModel(SubstrateSeries(KineticModel::kMichaelisMenten, {10.0, 25.0}, 0.03),
                        Quick());
  EXPECT_EQ(choice.family, ModelFamily::kSubstrate);
  ASSERT_TRUE(choice.chosen);
  EXPECT_EQ(choice.preferred, KineticModel::kMichaelisMenten) << choice.reason;
  EXPECT_THAT(choice.reason, HasSubstr("kept as the simpler model"));
  ASSERT_EQ(choice.fits.size(), 3u);
  for (const KineticFit& fit : choice.fits) {
    EXPECT_TRUE(fit.summary.IsSolutionUsable())
        << KineticModelToString(fit.model) << "\n" << fit.summary.FullReport();
  }
  ASSERT_EQ(choice.tests.size(), 2u);
  for (const NestedComparison& t : choice.tests) {
    EXPECT_TRUE(t.computed) << t.reason;
    EXPECT_TRUE(t.proper_nesting);
    EXPECT_FALSE(t.rejects_simpler);
    EXPECT_EQ(t.df_numerator, 1);
    EXPECT_EQ(t.df_denominator, 17);
  }
  EXPECT_EQ(choice.Preferred()->model, KineticModel::kMichaelisMenten);
}

TEST(ModelSelection, ClearSubstrateInhibitionIsDetected) {
  const ModelChoice choice = FitAndChooseModel(
      SubstrateSeries(KineticModel::kSubstrateInhibition, {10.0, 5.0, 50.0}, 0.02), Quick());
  ASSERT_TRUE(choice.chosen);
  EXPECT_EQ(choice.preferred, KineticModel::kSubstrateInhibition) << choice.reason;
  EXPECT_THAT(choice.reason, HasSubstr("rejects michaelis-menten"));
  const ParameterEstimate* ksi = choice.Preferred()->Find("Ksi");
  ASSERT_TRUE(ksi->ci.determined);
  EXPECT_LT(ksi->ci.lower, 50.0);
  EXPECT_GT(ksi->ci.upper, 50.0);
}

TEST(ModelSelection, SigmoidalKineticsChooseHill) {
  const ModelChoice choice =
      FitAndChooseModel(SubstrateSeries(KineticModel::kHill, {10.0, 20.0, 2.5}, 0.02), Quick());
  ASSERT_TRUE(choice.chosen);
  EXPECT_EQ(choice.preferred, KineticModel::kHill) << choice.reason;
  // The generating h = 2.5 lies inside the 95 % interval.
  const ParameterEstimate* h = choice.Preferred()->Find("h");
  ASSERT_TRUE(h->ci.determined);
  EXPECT_LT(h->ci.lower, 2.5);
  EXPECT_GT(h->ci.upper, 2.5);
}

struct ModeCase {
  std::string label;
  KineticModel model;
  std::vector<double> values;
};

class InhibitionModeTest : public ::testing::TestWithParam<ModeCase> {};

TEST_P(InhibitionModeTest, TheGeneratingModeIsPreferred) {
  const ModeCase& c = GetParam();
  const ModelChoice choice = FitAndChooseModel(InhibitionGrid(c.model, c.values), Quick());
  EXPECT_EQ(choice.family, ModelFamily::kInhibition);
  ASSERT_TRUE(choice.chosen);
  EXPECT_EQ(choice.preferred, c.model) << choice.reason;
  // Every candidate is kept and usable (a constant heading to infinity ends
  // on its bound); the AICc table is complete.
  for (const KineticFit& fit : choice.fits) {
    EXPECT_TRUE(fit.summary.IsSolutionUsable())
        << KineticModelToString(fit.model) << "\n" << fit.summary.FullReport();
  }
  ASSERT_EQ(choice.fits.size(), 4u);
  EXPECT_NEAR(std::accumulate(choice.akaike_weights.begin(), choice.akaike_weights.end(), 0.0),
              1.0, 1e-12);
  double smallest = INFINITY;
  for (double d : choice.delta_aicc) smallest = std::min(smallest, d);
  EXPECT_EQ(smallest, 0.0);
  ASSERT_EQ(choice.tests.size(), 3u);
  // Only noncompetitive is a proper nested point of mixed.
  for (const NestedComparison& t : choice.tests) {
    EXPECT_EQ(t.larger, KineticModel::kMixed);
    EXPECT_EQ(t.proper_nesting, t.simpler == KineticModel::kNoncompetitive) << t.note;
  }
}

INSTANTIATE_TEST_SUITE_P(
    Modes, InhibitionModeTest,
    ::testing::Values(ModeCase{"Competitive", KineticModel::kCompetitive, {10.0, 2.0, 0.5}},
                      ModeCase{"Uncompetitive", KineticModel::kUncompetitive, {10.0, 2.0, 0.5}},
                      ModeCase{"Noncompetitive", KineticModel::kNoncompetitive, {10.0, 2.0, 0.5}},
                      ModeCase{"Mixed", KineticModel::kMixed, {10.0, 2.0, 0.5, 4.0}}),
    [](const auto& param_info) { return param_info.param.label; });

TEST(ModelSelection, PerGroupNamesACandidateLacksAreLeftOutForIt) {
  // Two enzyme variants with their own Vmax and Km; hill has Khalf, not Km.
  KineticData data = SubstrateSeries(KineticModel::kMichaelisMenten, {10.0, 25.0}, 0.03);
  const KineticData other = SubstrateSeries(KineticModel::kMichaelisMenten, {6.0, 60.0}, 0.03);
  data.group_names = {"wild-type", "mutant"};
  for (KineticObservation p : other.points) {
    p.group = 1;
    data.points.push_back(p);
  }
  FitOptions options = Quick();
  options.per_group = {"Vmax", "Km"};
  const ModelChoice choice = FitAndChooseModel(data, options);
  for (const KineticFit& fit : choice.fits) {
    EXPECT_TRUE(fit.summary.IsSolutionUsable())
        << KineticModelToString(fit.model) << ": " << fit.summary.message;
  }
  EXPECT_NE(choice.Find(KineticModel::kHill)->Find("Vmax[mutant]"), nullptr);
  EXPECT_NE(choice.Find(KineticModel::kHill)->Find("Khalf"), nullptr);
  EXPECT_NEAR(choice.Find(KineticModel::kMichaelisMenten)->Find("Km[mutant]")->value, 60.0, 6.0);
}

TEST(ModelSelection, ExtraSumOfSquaresNeedsANestedPairOnTheSameData) {
  const KineticData data = SubstrateSeries(KineticModel::kMichaelisMenten, {10.0, 25.0}, 0.03);
  const KineticFit mm = FitKineticModel(data, KineticModel::kMichaelisMenten, Quick());
  const KineticFit hill = FitKineticModel(data, KineticModel::kHill, Quick());
  const NestedComparison backwards = ExtraSumOfSquaresTest(hill, mm);
  EXPECT_FALSE(backwards.computed);
  EXPECT_THAT(backwards.reason, HasSubstr("not a nested pair"));
  const NestedComparison forwards = ExtraSumOfSquaresTest(mm, hill);
  ASSERT_TRUE(forwards.computed);
  // F = ((SSR_s − SSR_l)/1)/(SSR_l/dof_l), computed by hand.
  EXPECT_NEAR(forwards.f, (mm.ssr - hill.ssr) / (hill.ssr / hill.dof), 1e-9 * forwards.f + 1e-15);
}

}  // namespace
}  // namespace ratewell
