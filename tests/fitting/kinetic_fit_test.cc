// FitKineticModel: options, bad input, weights and losses (against SciPy),
// fixed and bounded parameters, warnings, progress and cancel, bootstrap
// reproducibility, and derived quantities.
//
// Data here are invented (our own scenario: a Michaelis–Menten enzyme with
// Vmax = 10 uM/min, Km = 25 uM, eight substrate levels in duplicate, and a
// deterministic ±4 % ripple instead of random noise).
#include "fitting/nonlinear_fit.h"

#include <cmath>
#include <string>
#include <vector>

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include "fitting/detail/fit_problem.h"
#include "fitting/detail/model_sources.h"
#include "fitting/kinetic_models.h"

#include "tests/fitting/kinetic_test_util.h"

namespace ratewell {
namespace {

using testing::Point;

using ::testing::HasSubstr;

// Fits against SciPy: SciPy's curve_fit polished by root() on JᵀWr = 0 is
// good to ≈1e-14; ratewell reaches the stationary point to ≈1e-11.
constexpr double kEstimateTolerance = 1e-9;
constexpr double kStandardErrorTolerance = 1e-8;
// SciPy's least_squares with a robust loss stops on its own tolerances
// (status xtol/ftol) without a polish: about 8 digits.
constexpr double kRobustTolerance = 1e-6;

const std::vector<double> kSubstrate = {2, 2, 4, 4, 8, 8, 16, 16, 32, 32, 64, 64, 128, 128, 256, 256};

double TrueRate(double s) { return 10.0 * s / (25.0 + s); }

// v_k = 10·S/(25 + S)·(1 + 0.04·sin(3k)); SE_k = 0.02 + 0.03·(true rate).
KineticData RippleData() {
  KineticData data;
  for (size_t k = 0; k < kSubstrate.size(); ++k) {
    KineticObservation p;
    p.substrate_uM = kSubstrate[k];
    p.rate = TrueRate(kSubstrate[k]) * (1.0 + 0.04 * std::sin(3.0 * k));
    p.rate_se = 0.02 + 0.03 * TrueRate(kSubstrate[k]);
    p.label = "well" + std::to_string(k);
    data.points.push_back(p);
  }
  return data;
}

KineticFit Fit(const KineticData& data, KineticModel model, IntervalMethod method,
               FitOptions options = FitOptions()) {
  options.interval_method = method;
  return FitKineticModel(data, model, options);
}

void ExpectRelative(double actual, double expected, double tolerance) {
  EXPECT_NEAR(actual, expected, tolerance * std::abs(expected));
}

// ---------------------------------------------------------------------------
// Options and summary.

TEST(FitOptions, DefaultOptionsAreValid) {
  std::string error;
  EXPECT_TRUE(FitOptions().IsValid(&error)) << error;
  const FitOptions defaults;
  EXPECT_EQ(defaults.weighting, Weighting::kNone);
  EXPECT_EQ(defaults.loss, RobustLoss::kNone);
  EXPECT_EQ(defaults.confidence_level, 0.95);
  EXPECT_EQ(defaults.bootstrap_resamples, 2000);
}

TEST(FitOptions, InvalidFieldsAreNamed) {
  struct Case {
    std::function<void(FitOptions*)> change;
    std::string expected;
  };
  const std::vector<Case> cases = {
      {[](FitOptions* o) { o->confidence_level = 1.0; }, "confidence_level"},
      {[](FitOptions* o) { o->loss_scale = 0.0; }, "loss_scale"},
      {[](FitOptions* o) { o->bootstrap_resamples = 10; }, "bootstrap_resamples"},
      {[](FitOptions* o) { o->num_threads = -1; }, "num_threads"},
      {[](FitOptions* o) { o->function_tolerance = 0.0; }, "tolerances"},
      {[](FitOptions* o) { o->enzyme_uM = -1.0; }, "enzyme_uM"},
      {[](FitOptions* o) { o->fit_enzyme = true; }, "fit_enzyme"},
      {[](FitOptions* o) { o->per_group = {"Vmax", "Vmax"}; }, "per_group"},
      {[](FitOptions* o) { o->parameters = {{"Km", std::nan(""), {}, {}, {}}}; }, "Km"},
      {[](FitOptions* o) { o->derived.enzyme_nM = 0.0; }, "enzyme_nM"},
      {[](FitOptions* o) {
         o->derived.cheng_prusoff_mode = KineticModel::kMixed;
         o->derived.cheng_prusoff_km_uM = 1.0;
       },
       "cheng_prusoff_mode"},
  };
  for (const Case& c : cases) {
    FitOptions options;
    c.change(&options);
    std::string error;
    EXPECT_FALSE(options.IsValid(&error)) << c.expected;
    EXPECT_THAT(error, HasSubstr(c.expected));
    const KineticFit fit = FitKineticModel(RippleData(), KineticModel::kMichaelisMenten, options);
    EXPECT_EQ(fit.summary.termination, FitTermination::kInvalidInput);
    EXPECT_THAT(fit.summary.message, HasSubstr(c.expected));
  }
}

TEST(FitSummary, DefaultSummarySaysTheFitWasNotRun) {
  const FitSummary summary;
  EXPECT_EQ(summary.termination, FitTermination::kNotRun);
  EXPECT_FALSE(summary.IsSolutionUsable());
  EXPECT_EQ(summary.iterations, -1);
  EXPECT_THAT(summary.BriefReport(), HasSubstr("not-run"));
  EXPECT_THAT(summary.FullReport(), HasSubstr("Fit was not run"));
}

TEST(FitSummary, ReportsDescribeAConvergedFit) {
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  EXPECT_EQ(fit.summary.termination, FitTermination::kConvergence);
  EXPECT_GT(fit.summary.iterations, 0);
  EXPECT_GE(fit.summary.starts_tried, 1);
  EXPECT_NEAR(fit.summary.final_cost, 0.5 * fit.ssr, 1e-12 * fit.ssr);
  EXPECT_THAT(fit.summary.BriefReport(), HasSubstr("convergence"));
  EXPECT_THAT(fit.summary.FullReport(), HasSubstr("Usable:               yes"));
}

TEST(EnumNames, RoundTrip) {
  for (Weighting w : {Weighting::kNone, Weighting::kRelative, Weighting::kInverseVariance}) {
    Weighting back = Weighting::kNone;
    EXPECT_TRUE(StringToWeighting(WeightingToString(w), &back));
    EXPECT_EQ(back, w);
  }
  for (RobustLoss l : {RobustLoss::kNone, RobustLoss::kHuber, RobustLoss::kCauchy}) {
    RobustLoss back = RobustLoss::kNone;
    EXPECT_TRUE(StringToRobustLoss(RobustLossToString(l), &back));
    EXPECT_EQ(back, l);
  }
  for (IntervalMethod m :
       {IntervalMethod::kAsymptotic, IntervalMethod::kProfile, IntervalMethod::kBootstrap}) {
    IntervalMethod back = IntervalMethod::kAsymptotic;
    EXPECT_TRUE(StringToIntervalMethod(IntervalMethodToString(m), &back));
    EXPECT_EQ(back, m);
  }
  BootstrapScheme scheme = BootstrapScheme::kResiduals;
  EXPECT_TRUE(StringToBootstrapScheme("cases", &scheme));
  EXPECT_EQ(scheme, BootstrapScheme::kCases);
  IntervalMethod method = IntervalMethod::kProfile;
  EXPECT_FALSE(StringToIntervalMethod("wald", &method));
  EXPECT_EQ(method, IntervalMethod::kProfile);
}

// ---------------------------------------------------------------------------
// Bad input: a clear message, never a crash or a NaN.

TEST(FitKineticModel, BadDataIsRejectedWithTheReason) {
  struct Case {
    std::function<void(KineticData*, FitOptions*)> change;
    KineticModel model;
    std::string expected;
  };
  const std::vector<Case> cases = {
      {[](KineticData* d, FitOptions*) { d->points.clear(); }, KineticModel::kMichaelisMenten,
       "no data points"},
      {[](KineticData* d, FitOptions*) { d->points[3].rate = std::nan(""); },
       KineticModel::kMichaelisMenten, "point 3 (well3): the rate must be a finite number"},
      {[](KineticData* d, FitOptions*) { d->points[0].substrate_uM = -1.0; },
       KineticModel::kMichaelisMenten, "point 0 (well0): substrate concentration"},
      {[](KineticData* d, FitOptions*) { d->points[2].inhibitor_uM = INFINITY; },
       KineticModel::kMichaelisMenten, "inhibitor concentration"},
      {[](KineticData* d, FitOptions* o) {
         d->points[5].rate = 0.0;
         o->weighting = Weighting::kRelative;
       },
       KineticModel::kMichaelisMenten, "point 5 (well5): relative weights"},
      {[](KineticData* d, FitOptions* o) {
         d->points[1].rate_se.reset();
         o->weighting = Weighting::kInverseVariance;
       },
       KineticModel::kMichaelisMenten, "point 1 (well1): inverse-variance weights"},
      {[](KineticData* d, FitOptions*) {
         for (auto& p : d->points) p.substrate_uM = 10.0;
       },
       KineticModel::kMichaelisMenten, "at least 2 distinct substrate"},
      {[](KineticData*, FitOptions*) {}, KineticModel::kCompetitive, "inhibitor"},
      {[](KineticData*, FitOptions* o) { o->per_group = {"Ki"}; }, KineticModel::kMichaelisMenten,
       "not a parameter of michaelis-menten"},
      {[](KineticData*, FitOptions* o) { o->per_group = {"Vmax"}; },
       KineticModel::kMichaelisMenten, "group_names"},
      {[](KineticData*, FitOptions* o) { o->parameters = {{"Kd", 1.0, {}, {}, {}}}; },
       KineticModel::kMichaelisMenten, "\"Kd\""},
      {[](KineticData*, FitOptions* o) { o->parameters = {{"Km", {}, {}, 5.0, 1.0}}; },
       KineticModel::kMichaelisMenten, "lower bound 5 is not below upper bound 1"},
      {[](KineticData* d, FitOptions*) { d->points = {d->points[0], d->points[2]}; },
       KineticModel::kMichaelisMenten, "needs more than 2 points"},
      {[](KineticData* d, FitOptions*) { d->points[4].group = 3; },
       KineticModel::kMichaelisMenten, "group index 3"},
      {[](KineticData* d, FitOptions* o) {
         d->group_names = {"a", "b", "c"};
         d->points[4].group = 1;
         o->per_group = {"Vmax"};
       },
       KineticModel::kMichaelisMenten, "group c has no points"},
      {[](KineticData* d, FitOptions*) {
         d->points[4].inhibitor_uM = 1.0;
         d->points[6].inhibitor_uM = 2.0;
       },
       KineticModel::kMorrison, "enzyme concentration"},
  };
  for (const Case& c : cases) {
    KineticData data = RippleData();
    FitOptions options;
    c.change(&data, &options);
    const KineticFit fit = FitKineticModel(data, c.model, options);
    EXPECT_EQ(fit.summary.termination, FitTermination::kInvalidInput) << c.expected;
    EXPECT_THAT(fit.summary.message, HasSubstr(c.expected));
    EXPECT_FALSE(fit.summary.IsSolutionUsable());
    EXPECT_TRUE(fit.parameters.empty());
  }
}

// ---------------------------------------------------------------------------
// Weights and losses against SciPy 1.10.1 (computed: curve_fit with
// sigma = y or sigma = SE, absolute_sigma=False, polished by root() on the
// weighted normal equations; least_squares with loss='huber'/'cauchy',
// f_scale = 0.3).

TEST(FitKineticModel, RelativeWeightsMatchSciPy) {
  FitOptions options;
  options.weighting = Weighting::kRelative;
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  ExpectRelative(fit.Find("Vmax")->value, 9.95022255107068, kEstimateTolerance);
  ExpectRelative(fit.Find("Km")->value, 24.796263498076794, kEstimateTolerance);
  ExpectRelative(fit.Find("Vmax")->se, 0.16156751909039205, kStandardErrorTolerance);
  ExpectRelative(fit.Find("Km")->se, 0.6754399747049984, kStandardErrorTolerance);
  ExpectRelative(fit.ssr, 0.01500589173057608, kEstimateTolerance);
}

TEST(FitKineticModel, InverseVarianceWeightsMatchSciPy) {
  FitOptions options;
  options.weighting = Weighting::kInverseVariance;
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  ExpectRelative(fit.Find("Vmax")->value, 9.986215604559318, kEstimateTolerance);
  ExpectRelative(fit.Find("Km")->value, 24.878224098406346, kEstimateTolerance);
  ExpectRelative(fit.Find("Vmax")->se, 0.1639023375584413, kStandardErrorTolerance);
  ExpectRelative(fit.Find("Km")->se, 0.7910822718048974, kStandardErrorTolerance);
  ExpectRelative(fit.ssr, 13.334603494307416, kEstimateTolerance);
}

TEST(FitKineticModel, RobustLossesFindSciPysMinimisers) {
  KineticData data = RippleData();
  data.points[9].rate *= 1.5;  // one outlier at 32 uM
  struct Case {
    RobustLoss loss;
    double vmax, km;
  };
  for (const Case& c : {Case{RobustLoss::kHuber, 10.006708819193564, 24.817704631280712},
                        Case{RobustLoss::kCauchy, 9.781989917861655, 24.409125919209828}}) {
    FitOptions options;
    options.loss = c.loss;
    options.loss_scale = 0.3;
    const KineticFit fit =
        Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic, options);
    ASSERT_TRUE(fit.summary.IsSolutionUsable()) << RobustLossToString(c.loss);
    ExpectRelative(fit.Find("Vmax")->value, c.vmax, kRobustTolerance);
    ExpectRelative(fit.Find("Km")->value, c.km, kRobustTolerance);
    EXPECT_THAT(fit.Find("Km")->ci.note, HasSubstr("approximate"));
  }
  // Without a loss the outlier drags Km to 20.93 (SciPy least_squares,
  // unpolished: 20.92890135826562).
  const KineticFit plain = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic);
  ExpectRelative(plain.Find("Km")->value, 20.92890135826562, kRobustTolerance);
}

// ---------------------------------------------------------------------------
// Parameter controls.

TEST(FitKineticModel, FixedParameterIsHeldAndReported) {
  FitOptions options;
  options.parameters = {{"Km", 25.0, {}, {}, {}}};
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kProfile, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  EXPECT_EQ(fit.num_parameters, 1);
  EXPECT_EQ(fit.dof, 15);
  const ParameterEstimate* km = fit.Find("Km");
  EXPECT_TRUE(km->fixed);
  EXPECT_EQ(km->value, 25.0);
  EXPECT_FALSE(km->se_determined);
  EXPECT_FALSE(km->ci.determined);
  EXPECT_THAT(km->ci.reason, HasSubstr("fixed"));
  // With Km known, Vmax is linear: Vmax = Σ v·x / Σ x², x = S/(Km + S).
  double sxy = 0.0, sxx = 0.0;
  for (const KineticObservation& p : RippleData().points) {
    const double x = p.substrate_uM / (25.0 + p.substrate_uM);
    sxy += p.rate * x;
    sxx += x * x;
  }
  ExpectRelative(fit.Find("Vmax")->value, sxy / sxx, 1e-12);
  EXPECT_TRUE(fit.Find("Vmax")->ci.determined);
  EXPECT_EQ(fit.covariance_names, std::vector<std::string>{"Vmax"});
}

TEST(FitKineticModel, AnUpperBoundThatBindsIsReported) {
  FitOptions options;
  options.parameters = {{"Km", {}, 5.0, {}, 20.0}};
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kProfile, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  const ParameterEstimate* km = fit.Find("Km");
  EXPECT_EQ(km->value, 20.0);
  EXPECT_TRUE(km->at_bound);
  EXPECT_FALSE(km->ci.determined);
  EXPECT_THAT(km->ci.reason, HasSubstr("bound"));
  EXPECT_TRUE(fit.HasWarning(kFitWarningAtBound));
  // The other parameter still gets its interval (Km held for it).
  EXPECT_TRUE(fit.Find("Vmax")->ci.determined);
}

TEST(FitKineticModel, FlatRatesPutKmOnItsLowerBound) {
  KineticData data = RippleData();
  for (size_t k = 0; k < data.points.size(); ++k) {
    data.points[k].rate = 5.0 + 0.05 * std::sin(3.0 * k);
  }
  const KineticFit fit = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kProfile);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  const ParameterEstimate* km = fit.Find("Km");
  EXPECT_EQ(km->value, 0.0);
  EXPECT_TRUE(km->at_bound);
  EXPECT_FALSE(km->se_determined);
  EXPECT_TRUE(fit.HasWarning(kFitWarningAtBound));
}

// ---------------------------------------------------------------------------
// Warnings a reviewer needs.

TEST(FitKineticModel, NarrowSubstrateRangeWarnsAndLeavesKmOpenAbove) {
  // Km = 50 uM but [S] only up to 3 uM: the curve is a straight line.
  KineticData data;
  for (int k = 0; k < 12; ++k) {
    const double s = 0.5 + 0.25 * (k / 2) * 2;
    data.points.push_back(
        Point(s, 0.0, 10.0 * s / (50.0 + s) * (1.0 + 0.05 * std::sin(3.0 * k))));
  }
  const KineticFit fit = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kProfile);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  EXPECT_TRUE(fit.HasWarning(kFitWarningSubstrateRange));
  const ParameterEstimate* km = fit.Find("Km");
  EXPECT_FALSE(km->ci.determined);
  EXPECT_FALSE(std::isfinite(km->ci.upper) && km->ci.determined);
  EXPECT_THAT(km->ci.reason, HasSubstr("upper limit"));
  EXPECT_TRUE(fit.HasWarning(kFitWarningIntervalNotDetermined));
}

TEST(FitKineticModel, SigmoidalRatesFittedByMichaelisMentenShowSystematicResiduals) {
  // Hill data (Khalf 6 uM, h = 3) with a ±1 % error of alternating sign
  // (as unpatterned as noise can be).
  KineticData data;
  int k = 0;
  for (double s : {1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 10.0, 12.0, 14.0, 16.0, 20.0, 24.0,
                   32.0, 48.0}) {
    const double v = 10.0 * std::pow(s, 3.0) / (std::pow(6.0, 3.0) + std::pow(s, 3.0));
    data.points.push_back(Point(s, 0.0, v * (1.0 + (k++ % 2 ? 0.01 : -0.01))));
  }
  const KineticFit fit = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  ASSERT_TRUE(fit.runs_test.computed);
  EXPECT_LT(fit.runs_test.p_value, 0.05);
  EXPECT_LT(fit.runs_test.runs, fit.runs_test.expected_runs);
  EXPECT_TRUE(fit.HasWarning(kFitWarningSystematicResiduals));
  // The right model leaves no such pattern.
  const KineticFit hill = Fit(data, KineticModel::kHill, IntervalMethod::kAsymptotic);
  EXPECT_FALSE(hill.HasWarning(kFitWarningSystematicResiduals));
  // The ripple moves h by about a percent.
  ExpectRelative(hill.Find("h")->value, 3.0, 0.05);
}

TEST(FitKineticModel, FewPointsPerParameterWarn) {
  KineticData data = RippleData();
  data.points = {data.points[0], data.points[4], data.points[8], data.points[12],
                 data.points[15]};
  const KineticFit fit = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic);
  ASSERT_TRUE(fit.summary.IsSolutionUsable());
  EXPECT_TRUE(fit.HasWarning(kFitWarningFewPoints));
  EXPECT_FALSE(Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic)
                   .HasWarning(kFitWarningFewPoints));
}

TEST(FitKineticModel, TwoConcentrationsCannotDetermineThreeHillParameters) {
  KineticData data;
  for (int k = 0; k < 8; ++k) {
    const double s = k % 2 ? 20.0 : 5.0;
    data.points.push_back(Point(s, 0.0, 10.0 * s / (10.0 + s) + 0.01 * (k % 3)));
  }
  const KineticFit fit = Fit(data, KineticModel::kHill, IntervalMethod::kAsymptotic);
  ASSERT_NE(fit.summary.termination, FitTermination::kInvalidInput);
  EXPECT_TRUE(fit.HasWarning(kFitWarningFewPoints));
  for (const ParameterEstimate& p : fit.parameters) {
    if (p.at_bound) continue;
    EXPECT_FALSE(p.se_determined) << p.name;
    EXPECT_FALSE(p.ci.determined) << p.name;
    EXPECT_THAT(p.se_reason, HasSubstr("singular"));
  }
}

TEST(FitKineticModel, SubstrateModelsSayTheyIgnoreAnInhibitor) {
  KineticData data = RippleData();
  data.points[0].inhibitor_uM = 1.0;
  const KineticFit fit = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic);
  EXPECT_TRUE(fit.HasWarning(kFitWarningIgnoredInhibitor));
}

TEST(FitKineticModel, MorrisonReportsTheKnownEnzymeAsFixed) {
  // Invented tight-binding series: v0 = 2 uM/min, Kiapp = 0.02 uM, E = 0.05 uM.
  KineticData data;
  int k = 0;
  for (double i : {0.0, 0.005, 0.01, 0.02, 0.04, 0.08, 0.16, 0.32, 0.64}) {
    const double v = EvaluateKineticModel(KineticModel::kMorrison, {2.0, 0.02, 0.05}, 0.0, i);
    data.points.push_back(Point(10.0, i, v * (1.0 + 0.01 * std::sin(3.0 * k++))));
  }
  FitOptions options;
  options.enzyme_uM = 0.05;
  const KineticFit fit = Fit(data, KineticModel::kMorrison, IntervalMethod::kProfile, options);
  ASSERT_TRUE(fit.summary.IsSolutionUsable()) << fit.summary.message;
  EXPECT_EQ(fit.num_parameters, 2);
  const ParameterEstimate* e = fit.Find("E");
  EXPECT_TRUE(e->fixed);
  EXPECT_EQ(e->value, 0.05);
  EXPECT_EQ(e->unit, "uM");
  const ParameterEstimate* kiapp = fit.Find("Kiapp");
  ASSERT_TRUE(kiapp->ci.determined) << kiapp->ci.reason;
  EXPECT_LT(kiapp->ci.lower, 0.02);
  EXPECT_GT(kiapp->ci.upper, 0.02);
}

// ---------------------------------------------------------------------------
// Progress, cancel, groups, predictions.

TEST(FitKineticModel, ProgressCallbackSeesEveryStageAndCanCancel) {
  std::vector<std::string> stages;
  FitOptions options;
  options.progress = [&](const FitProgress& p) {
    if (stages.empty() || stages.back() != p.stage) stages.push_back(p.stage);
    return true;
  };
  Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kProfile, options);
  EXPECT_EQ(stages, (std::vector<std::string>{"fit", "profile"}));

  options.progress = [](const FitProgress&) { return false; };
  const KineticFit cancelled =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kProfile, options);
  EXPECT_EQ(cancelled.summary.termination, FitTermination::kUserAbort);

  int calls = 0;
  options.progress = [&](const FitProgress& p) { return p.stage != "bootstrap" || ++calls < 50; };
  options.bootstrap_resamples = 1000;
  const KineticFit stopped =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kBootstrap, options);
  EXPECT_EQ(stopped.summary.termination, FitTermination::kUserAbort);
  EXPECT_FALSE(stopped.Find("Km")->ci.determined);
  EXPECT_THAT(stopped.Find("Km")->ci.reason, HasSubstr("cancelled"));
}

TEST(FitKineticModel, PredictionsAndResidualsAgreeWithTheData) {
  const KineticData data = RippleData();
  const KineticFit fit = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic);
  ASSERT_EQ(fit.fitted.size(), data.points.size());
  double ssr = 0.0;
  for (size_t i = 0; i < data.points.size(); ++i) {
    EXPECT_NEAR(fit.Predict(data.points[i].substrate_uM, 0.0), fit.fitted[i], 1e-12);
    EXPECT_NEAR(fit.residuals[i], data.points[i].rate - fit.fitted[i], 1e-12);
    ssr += fit.residuals[i] * fit.residuals[i];
  }
  EXPECT_NEAR(ssr, fit.ssr, 1e-12 * ssr);
  EXPECT_NEAR(fit.residual_sd, std::sqrt(fit.ssr / 14.0), 1e-12);
  EXPECT_TRUE(std::isnan(fit.Predict(1.0, 0.0, 5)));
  EXPECT_EQ(fit.Find("Vmax")->unit, "uM/min");
  EXPECT_EQ(fit.Find("Km")->unit, "uM");
  EXPECT_EQ(fit.Find("nothing"), nullptr);
}

// ---------------------------------------------------------------------------
// Bootstrap.

TEST(FitKineticModel, BootstrapIsReproducibleWhateverTheNumberOfThreads) {
  FitOptions options;
  options.bootstrap_resamples = 400;
  options.bootstrap_seed = 12345;
  options.num_threads = 1;
  const KineticFit one =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kBootstrap, options);
  options.num_threads = 2;
  const KineticFit two =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kBootstrap, options);
  ASSERT_TRUE(one.Find("Km")->ci.determined) << one.Find("Km")->ci.reason;
  EXPECT_EQ(one.bootstrap.threads, 1);
  EXPECT_EQ(two.bootstrap.threads, 2);
  EXPECT_EQ(one.bootstrap.succeeded, 400);
  // Bit-identical: each resample has its own stream, stored by its index.
  EXPECT_EQ(one.Find("Km")->ci.lower, two.Find("Km")->ci.lower);
  EXPECT_EQ(one.Find("Km")->ci.upper, two.Find("Km")->ci.upper);
  EXPECT_EQ(one.bootstrap_draws, two.bootstrap_draws);
  options.bootstrap_seed = 54321;
  const KineticFit other =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kBootstrap, options);
  EXPECT_NE(one.Find("Km")->ci.lower, other.Find("Km")->ci.lower);
  // Percentile limits lie around the estimate.
  const ParameterEstimate* km = one.Find("Km");
  EXPECT_LT(km->ci.lower, km->value);
  EXPECT_GT(km->ci.upper, km->value);
  EXPECT_THAT(km->ci.note, HasSubstr("expanded percentile"));
}

TEST(FitKineticModel, CaseResamplingGivesAnIntervalAroundTheEstimate) {
  FitOptions options;
  options.bootstrap_resamples = 400;
  options.bootstrap_scheme = BootstrapScheme::kCases;
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kBootstrap, options);
  const ParameterEstimate* km = fit.Find("Km");
  ASSERT_TRUE(km->ci.determined) << km->ci.reason;
  EXPECT_LT(km->ci.lower, km->value);
  EXPECT_GT(km->ci.upper, km->value);
  EXPECT_THAT(km->ci.note, HasSubstr("cases"));
}

TEST(FitBootstrap, SmallSolverAndCeresRefitsAgree) {
  // The same resamples refitted by tiny_solver and by a Ceres problem.
  const KineticData data = RippleData();
  const KineticFit fit = Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic);
  detail::KineticDesign design;
  design.model = KineticModel::kMichaelisMenten;
  for (const KineticObservation& p : data.points) {
    design.substrate.push_back(p.substrate_uM);
    design.inhibitor.push_back(0.0);
    design.group.push_back(0);
  }
  design.slots = {0, 1};
  design.num_parameters = 2;
  const auto source = detail::MakeKineticSource(design);
  std::vector<double> y;
  for (const KineticObservation& p : data.points) y.push_back(p.rate);
  const detail::ResidualData residual_data = detail::ResidualData::Identity(y);
  const std::vector<double> theta = {fit.Find("Vmax")->value, fit.Find("Km")->value};
  std::vector<detail::ParameterSpec> specs(2);
  specs[0].lower = specs[1].lower = 0.0;
  detail::BootstrapSettings settings;
  settings.resamples = 200;
  settings.seed = 7;
  const detail::BootstrapRun small = detail::RunBootstrap(
      *source, residual_data, specs, theta, {true, true}, fit.fitted, fit.residuals, settings);
  settings.use_ceres = true;
  const detail::BootstrapRun ceres = detail::RunBootstrap(
      *source, residual_data, specs, theta, {true, true}, fit.fitted, fit.residuals, settings);
  ASSERT_EQ(small.succeeded, 200);
  ASSERT_EQ(ceres.succeeded, 200);
  for (int b = 0; b < 200; ++b) {
    for (int j = 0; j < 2; ++j) {
      // Both stop near the same optimum: 1e-7 relative.
      EXPECT_NEAR(small.draws[b][j], ceres.draws[b][j], 1e-7 * std::abs(ceres.draws[b][j]));
    }
  }
}

// ---------------------------------------------------------------------------
// Derived quantities.

TEST(DerivedQuantities, KcatAndSpecificActivityScaleVmax) {
  FitOptions options;
  options.derived.enzyme_nM = 5.0;
  options.derived.enzyme_mg_per_mL = 0.0002;
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic, options);
  const ParameterEstimate* vmax = fit.Find("Vmax");
  const ParameterEstimate* kcat = fit.Find("kcat");
  const ParameterEstimate* activity = fit.Find("specific_activity");
  const ParameterEstimate* efficiency = fit.Find("kcat/Km");
  ASSERT_NE(kcat, nullptr);
  ASSERT_NE(activity, nullptr);
  ASSERT_NE(efficiency, nullptr);
  // kcat = Vmax/[E]: (uM/min)/(5e-3 uM)/(60 s/min).
  const double per_s = 1.0 / (5e-3 * 60.0);
  EXPECT_EQ(kcat->unit, "1/s");
  ExpectRelative(kcat->value, vmax->value * per_s, 1e-14);
  ExpectRelative(kcat->se, vmax->se * per_s, 1e-12);
  ExpectRelative(kcat->ci.lower, vmax->ci.lower * per_s, 1e-12);
  // 1 U = 1 umol/min (NC-IUB 1979): (umol/L/min)/(0.0002 g/L · 1000 mg/g).
  EXPECT_EQ(activity->unit, "U/mg");
  ExpectRelative(activity->value, vmax->value / 0.2, 1e-14);
  // kcat/Km in M⁻¹s⁻¹, delta-method SE from the covariance.
  EXPECT_EQ(efficiency->unit, "1/(M*s)");
  const double vm = vmax->value, km = fit.Find("Km")->value;
  ExpectRelative(efficiency->value, per_s * vm / km * 1e6, 1e-14);
  const double ga = per_s * 1e6 / km, gb = -per_s * 1e6 * vm / (km * km);
  const double var = ga * ga * fit.covariance[0] + 2 * ga * gb * fit.covariance[1] +
                     gb * gb * fit.covariance[3];
  ExpectRelative(efficiency->se, std::sqrt(var), 1e-12);
  EXPECT_THAT(efficiency->ci.note, HasSubstr("delta method"));
}

TEST(DerivedQuantities, ProfileOfKcatOverKmMatchesSciPysReparameterisedProfile) {
  // Puromycin treated data (Treloar 1974) read as uM and uM/min, [E] = 1 uM:
  // kcat/Km = (Vmax/Km)·1e6/60 M⁻¹s⁻¹. SciPy 1.10.1, computed: profile-t
  // interval of q = Vmax/Km in v = q·Km·S/(Km + S) (Km profiled out by
  // minimize_scalar, limits by brentq): q̂ = 3316.8978779735817,
  // [2607.3024090993486, 4295.3362810106855].
  const std::vector<double> conc = {0.02, 0.02, 0.06, 0.06, 0.11, 0.11,
                                    0.22, 0.22, 0.56, 0.56, 1.1,  1.1};
  const std::vector<double> rate = {76, 47, 97, 107, 123, 139, 159, 152, 191, 201, 207, 200};
  KineticData data;
  for (size_t k = 0; k < conc.size(); ++k) {
    data.points.push_back(Point(conc[k], 0.0, rate[k]));
  }
  FitOptions options;
  options.derived.enzyme_nM = 1000.0;
  const KineticFit fit =
      Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kProfile, options);
  const ParameterEstimate* efficiency = fit.Find("kcat/Km");
  ASSERT_NE(efficiency, nullptr);
  const double factor = 1e6 / 60.0;
  ExpectRelative(efficiency->value, 3316.8978779735817 * factor, 1e-10);
  ASSERT_TRUE(efficiency->ci.determined) << efficiency->ci.reason;
  ExpectRelative(efficiency->ci.lower, 2607.3024090993486 * factor, 1e-8);
  ExpectRelative(efficiency->ci.upper, 4295.3362810106855 * factor, 1e-8);
  EXPECT_THAT(efficiency->ci.note, HasSubstr("reparameterised"));
  // kcat's profile interval is Vmax's, scaled.
  ExpectRelative(fit.Find("kcat")->ci.upper, fit.Find("Vmax")->ci.upper / 60.0, 1e-14);
}

TEST(DerivedQuantities, BootstrapDerivedValuesUseTheSameDraws) {
  FitOptions options;
  options.derived.enzyme_nM = 5.0;
  options.bootstrap_resamples = 300;
  const KineticFit fit =
      Fit(RippleData(), KineticModel::kMichaelisMenten, IntervalMethod::kBootstrap, options);
  const ParameterEstimate* kcat = fit.Find("kcat");
  ASSERT_TRUE(kcat->ci.determined) << kcat->ci.reason;
  // A positive scale factor commutes with quantiles.
  ExpectRelative(kcat->ci.lower, fit.Find("Vmax")->ci.lower / (5e-3 * 60.0), 1e-12);
  EXPECT_THAT(kcat->ci.note, HasSubstr("percentile of the derived value"));
}

TEST(DerivedQuantities, ChengPrusoffKiFollowsTheStatedMode) {
  // Invented dose–response: top 100, bottom 0, IC50 8 uM, h 1, ±2 % ripple.
  KineticData data;
  int k = 0;
  for (double i : {0.5, 1.0, 2.0, 4.0, 8.0, 16.0, 32.0, 64.0, 128.0}) {
    const double y = 100.0 / (1.0 + i / 8.0) * (1.0 + 0.02 * std::sin(3.0 * k++));
    data.points.push_back(Point(0.0, i, y));
  }
  const double s = 30.0, km = 10.0;
  struct Case {
    KineticModel mode;
    double factor;
  };
  for (const Case& c : {Case{KineticModel::kCompetitive, 1.0 / (1.0 + s / km)},
                        Case{KineticModel::kUncompetitive, 1.0 / (1.0 + km / s)},
                        Case{KineticModel::kNoncompetitive, 1.0}}) {
    FitOptions options;
    options.derived.cheng_prusoff_mode = c.mode;
    options.derived.cheng_prusoff_substrate_uM = s;
    options.derived.cheng_prusoff_km_uM = km;
    const KineticFit fit =
        Fit(data, KineticModel::kFourParameterLogistic, IntervalMethod::kProfile, options);
    const ParameterEstimate* ic50 = fit.Find("IC50");
    const ParameterEstimate* ki = fit.Find("Ki");
    ASSERT_NE(ki, nullptr) << KineticModelToString(c.mode);
    ExpectRelative(ki->value, ic50->value * c.factor, 1e-14);
    ASSERT_TRUE(ki->ci.determined);
    ExpectRelative(ki->ci.lower, ic50->ci.lower * c.factor, 1e-14);
    ExpectRelative(ki->ci.upper, ic50->ci.upper * c.factor, 1e-14);
    EXPECT_THAT(ki->ci.note, HasSubstr("Cheng-Prusoff"));
  }
  // Km's own uncertainty widens the asymptotic interval (delta method).
  FitOptions options;
  options.derived.cheng_prusoff_mode = KineticModel::kCompetitive;
  options.derived.cheng_prusoff_substrate_uM = s;
  options.derived.cheng_prusoff_km_uM = km;
  const KineticFit exact =
      Fit(data, KineticModel::kFourParameterLogistic, IntervalMethod::kAsymptotic, options);
  options.derived.cheng_prusoff_km_se_uM = 1.0;
  const KineticFit uncertain =
      Fit(data, KineticModel::kFourParameterLogistic, IntervalMethod::kAsymptotic, options);
  const double ic50 = exact.Find("IC50")->value, se_ic50 = exact.Find("IC50")->se;
  const double factor = km / (km + s), dfactor = s / ((km + s) * (km + s));
  ExpectRelative(exact.Find("Ki")->se, factor * se_ic50, 1e-12);
  ExpectRelative(uncertain.Find("Ki")->se,
                 std::sqrt(factor * factor * se_ic50 * se_ic50 + ic50 * ic50 * dfactor * dfactor),
                 1e-12);
}

TEST(DerivedQuantities, OtherUnitsSkipEnzymeQuantitiesWithAWarning) {
  KineticData data = RippleData();
  data.rate_unit = "counts/min";
  FitOptions options;
  options.derived.enzyme_nM = 5.0;
  const KineticFit fit =
      Fit(data, KineticModel::kMichaelisMenten, IntervalMethod::kAsymptotic, options);
  EXPECT_EQ(fit.Find("kcat"), nullptr);
  EXPECT_TRUE(fit.HasWarning(kFitWarningDerivedSkipped));
}

}  // namespace
}  // namespace ratewell
