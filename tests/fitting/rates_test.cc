// Unit tests of fitting/rates.h: options, each method on exact data with a
// known answer, window rules, flags and degenerate input.
//
// Reference values named "SciPy 1.10.1, computed" were computed with Debian's
// python3-scipy 1.10.1 / numpy 1.24.2; the script is quoted beside each block.
#include "fitting/rates.h"

#include <cmath>
#include <limits>
#include <stdexcept>
#include <string>
#include <vector>

#include <gtest/gtest.h>

namespace ratewell {
namespace {

// NADH at 340 nm: ε = 6220 M⁻¹cm⁻¹ (Horecker & Kornberg 1948).
constexpr double kEpsilon = 6220.0;

// Product µM per absorbance unit for NADH consumed, one NADH per turnover.
double ConsumedFactor(double pathlength_cm) { return -1e6 / (kEpsilon * pathlength_cm); }

Series MakeSeries(const std::vector<double>& time_min, const std::vector<double>& absorbance) {
  Series series;
  for (std::size_t i = 0; i < time_min.size(); ++i) {
    series.Append(time_min[i], absorbance[i], PointStatus::kValid);
  }
  return series;
}

std::vector<double> EvenTimes(int count, double step_min, double start_min = 0.0) {
  std::vector<double> times(count);
  for (int i = 0; i < count; ++i) times[i] = start_min + step_min * i;
  return times;
}

// Deterministic read noise in [−1, 1] without a generator (the classic
// fract(sin(x)·43758.5453) hash): successive values look independent, so a
// runs test sees no pattern.
double Jitter(int i) {
  const double x = std::sin(12.9898 * i + 78.233) * 43758.5453;
  return 2.0 * (x - std::floor(x)) - 1.0;
}

RateInput MakeInput(const Series* series, double factor, double substrate_uM) {
  RateInput input;
  input.series = series;
  input.product_uM_per_A = factor;
  input.substrate_uM = substrate_uM;
  return input;
}

// Every number a caller might read is free of NaN; lag_tau, substrate
// fraction and elasticity are optionals and so never NaN either.
void ExpectNoNaN(const RateEstimate& estimate) {
  EXPECT_FALSE(std::isnan(estimate.rate_uM_per_min));
  EXPECT_FALSE(std::isnan(estimate.se_uM_per_min));
  EXPECT_FALSE(std::isnan(estimate.ci95_lo_uM_per_min));
  EXPECT_FALSE(std::isnan(estimate.ci95_hi_uM_per_min));
  EXPECT_FALSE(std::isnan(estimate.slope_A_per_min));
  EXPECT_FALSE(std::isnan(estimate.r_squared));
  EXPECT_FALSE(std::isnan(estimate.residual_sd_absorbance));
  EXPECT_FALSE(std::isnan(estimate.window_start_min));
  EXPECT_FALSE(std::isnan(estimate.window_end_min));
  if (estimate.lag_tau_min) {
    EXPECT_FALSE(std::isnan(*estimate.lag_tau_min));
  }
  if (estimate.lag_tau_se_min) {
    EXPECT_FALSE(std::isnan(*estimate.lag_tau_se_min));
  }
  if (estimate.substrate_consumed_fraction) {
    EXPECT_FALSE(std::isnan(*estimate.substrate_consumed_fraction));
  }
  if (estimate.elasticity) {
    EXPECT_FALSE(std::isnan(*estimate.elasticity));
  }
}

constexpr RateMethod kAllMethods[] = {RateMethod::kAuto, RateMethod::kLinear, RateMethod::kLag,
                                      RateMethod::kProgress};

// ---------------------------------------------------------------------------
// Options and names.

TEST(RateOptions, DefaultOptionsAreValid) {
  std::string error;
  EXPECT_TRUE(RateOptions().IsValid(&error)) << error;
  EXPECT_EQ(RateOptions().method, RateMethod::kAuto);
  // Common practice defaults, shared with the assay settings.
  EXPECT_EQ(RateOptions().max_substrate_consumed, 0.10);
  EXPECT_EQ(RateOptions().absorbance_ceiling, 2.5);
}

TEST(RateOptions, InvalidValuesAreRejectedWithTheFieldName) {
  struct Case {
    const char* field;
    void (*spoil)(RateOptions*);
  };
  const Case cases[] = {
      {"window_min", [](RateOptions* o) { o->window_min = std::make_pair(5.0, 2.0); }},
      {"window_min", [](RateOptions* o) { o->window_min = std::make_pair(-1.0, 2.0); }},
      {"max_substrate_consumed", [](RateOptions* o) { o->max_substrate_consumed = 1.0; }},
      {"absorbance_ceiling", [](RateOptions* o) { o->absorbance_ceiling = 0.0; }},
      {"nadh_floor_absorbance", [](RateOptions* o) { o->nadh_floor_absorbance = -0.1; }},
      {"nadh_floor_absorbance", [](RateOptions* o) { o->nadh_floor_absorbance = 3.0; }},
      {"max_lag_min", [](RateOptions* o) { o->max_lag_min = std::nan(""); }},
      {"elasticity_prior_sd", [](RateOptions* o) { o->elasticity_prior_sd = 0.0; }},
      {"linearity_z", [](RateOptions* o) { o->linearity_z = -1.0; }},
      {"min_points", [](RateOptions* o) { o->min_points = 2; }},
      {"reaction_start_min", [](RateOptions* o) { o->reaction_start_min = INFINITY; }},
  };
  for (const Case& c : cases) {
    RateOptions options;
    c.spoil(&options);
    std::string error;
    EXPECT_FALSE(options.IsValid(&error)) << c.field;
    EXPECT_NE(error.find(c.field), std::string::npos) << error;
  }
}

TEST(RateOptions, InvalidOptionsOrInputThrowInvalidArgument) {
  const Series series = MakeSeries({0, 1, 2}, {1.0, 0.9, 0.8});
  RateOptions bad;
  bad.min_points = 0;
  EXPECT_THROW(EstimateInitialRate(MakeInput(&series, -300.0, 10.0), bad), std::invalid_argument);
  EXPECT_THROW(EstimateInitialRate(MakeInput(nullptr, -300.0, 10.0), RateOptions()),
               std::invalid_argument);
  EXPECT_THROW(EstimateInitialRate(MakeInput(&series, 0.0, 10.0), RateOptions()),
               std::invalid_argument);
  EXPECT_THROW(EstimateInitialRate(MakeInput(&series, -300.0, -5.0), RateOptions()),
               std::invalid_argument);
  Series ragged = series;
  ragged.status.pop_back();
  EXPECT_THROW(EstimateInitialRate(MakeInput(&ragged, -300.0, 10.0), RateOptions()),
               std::invalid_argument);
}

TEST(RateWindowEnd, NamesRoundTrip) {
  for (WindowEnd reason : {WindowEnd::kNone, WindowEnd::kSubstrateConsumed, WindowEnd::kNadhLow,
                           WindowEnd::kAbsorbanceCeiling, WindowEnd::kNonlinear,
                           WindowEnd::kEndOfRead, WindowEnd::kUserWindow}) {
    WindowEnd parsed = WindowEnd::kNone;
    ASSERT_TRUE(StringToWindowEnd(WindowEndToString(reason), &parsed));
    EXPECT_EQ(parsed, reason);
  }
  WindowEnd untouched = WindowEnd::kNadhLow;
  EXPECT_FALSE(StringToWindowEnd("Substrate-Consumed", &untouched));
  EXPECT_EQ(untouched, WindowEnd::kNadhLow);
  EXPECT_STREQ(WindowEndToString(WindowEnd::kSubstrateConsumed), "substrate-consumed");
}

// ---------------------------------------------------------------------------
// Linear method against SciPy.
//
// SciPy 1.10.1, computed:
//   t = np.arange(21) * 0.5
//   A = np.round(1.2 - 0.0123*t + 0.0004*np.sin(1.7*np.arange(21)), 6)
//   r = scipy.stats.linregress(t, A); np.polyfit(t, A, 1)
//   scipy.stats.t.ppf(0.975, 19)
class RateLinearScipyTest : public ::testing::Test {
 protected:
  const std::vector<double> absorbance_ = {
      1.2,      1.194247, 1.187598, 1.18118,  1.175598, 1.169569, 1.16282,
      1.156703, 1.151144, 1.144809, 1.138115, 1.13229,  1.1266,   1.120007,
      1.113511, 1.107894, 1.101952, 1.095216, 1.089009, 1.083459, 1.077212};
  static constexpr double kSlope = -0.012297698701298701;
  static constexpr double kPolyfitSlope = -0.012297698701298586;
  static constexpr double kRValue = -0.99997237628517199;
  static constexpr double kStdErr = 2.0970659300189388e-05;
  static constexpr double kT975Dof19 = 2.093024054408263;
  // Both sides are double least squares on 21 points: they agree to ~1e-13;
  // SciPy's t.ppf is good to ~1e-10 for small dof (TOOLCHAIN.md).
  static constexpr double kTolerance = 1e-11;
  static constexpr double kQuantileTolerance = 1e-9;
  const double factor_ = ConsumedFactor(0.5);
};

TEST_F(RateLinearScipyTest, SlopeSeAndRSquaredMatchLinregress) {
  const Series series = MakeSeries(EvenTimes(21, 0.5), absorbance_);
  RateOptions options;
  options.method = RateMethod::kLinear;
  options.window_min = std::make_pair(0.0, 10.0);
  const RateEstimate estimate = EstimateInitialRate(MakeInput(&series, factor_, 500.0), options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_EQ(estimate.method_used, RateMethod::kLinear);
  EXPECT_EQ(estimate.points, 21);
  EXPECT_EQ(estimate.degrees_of_freedom, 19);
  EXPECT_NEAR(estimate.slope_A_per_min, kSlope, kTolerance * std::abs(kSlope));
  EXPECT_NEAR(estimate.slope_A_per_min, kPolyfitSlope, kTolerance * std::abs(kSlope));
  EXPECT_NEAR(estimate.rate_uM_per_min, factor_ * kSlope, kTolerance * std::abs(factor_ * kSlope));
  EXPECT_NEAR(estimate.se_uM_per_min, std::abs(factor_) * kStdErr,
              kTolerance * std::abs(factor_) * kStdErr * 1e3);  // SE: a difference of sums
  EXPECT_NEAR(estimate.r_squared, kRValue * kRValue, kTolerance);
  const double half = kT975Dof19 * std::abs(factor_) * kStdErr;
  EXPECT_NEAR(estimate.ci95_hi_uM_per_min - estimate.rate_uM_per_min, half,
              kQuantileTolerance * half);
  EXPECT_NEAR(estimate.rate_uM_per_min - estimate.ci95_lo_uM_per_min, half,
              kQuantileTolerance * half);
  EXPECT_EQ(estimate.window_end, WindowEnd::kUserWindow);
  EXPECT_GT(estimate.rate_uM_per_min, 0.0);  // A falls: product forms
}

TEST_F(RateLinearScipyTest, UserWindowCountsFromTheFirstRead) {
  // The same trace read on a clock that starts at 3 min: the window [0, 10]
  // is relative to the first read, so the answer is unchanged.
  const Series series = MakeSeries(EvenTimes(21, 0.5, 3.0), absorbance_);
  RateOptions options;
  options.method = RateMethod::kLinear;
  options.window_min = std::make_pair(0.0, 10.0);
  const RateEstimate estimate = EstimateInitialRate(MakeInput(&series, factor_, 500.0), options);
  ASSERT_TRUE(estimate.ok);
  EXPECT_EQ(estimate.points, 21);
  EXPECT_NEAR(estimate.slope_A_per_min, kSlope, kTolerance * std::abs(kSlope));
  EXPECT_DOUBLE_EQ(estimate.window_start_min, 3.0);
  EXPECT_DOUBLE_EQ(estimate.window_end_min, 13.0);
}

TEST_F(RateLinearScipyTest, UserWindowSelectsItsReads) {
  const Series series = MakeSeries(EvenTimes(21, 0.5), absorbance_);
  RateOptions options;
  options.method = RateMethod::kLinear;
  options.window_min = std::make_pair(2.0, 6.0);
  const RateEstimate estimate = EstimateInitialRate(MakeInput(&series, factor_, 500.0), options);
  ASSERT_TRUE(estimate.ok);
  EXPECT_EQ(estimate.points, 9);  // 2.0, 2.5, ..., 6.0
  EXPECT_DOUBLE_EQ(estimate.window_start_min, 2.0);
  EXPECT_DOUBLE_EQ(estimate.window_end_min, 6.0);
}

// ---------------------------------------------------------------------------
// Lag method: exact McClure curve, P = v·(t − τ(1 − e^(−t/τ))).

TEST(RateLagMethod, RecoversRateAndTauFromAnExactMcClureCurve) {
  constexpr double kRate = 2.5;       // µM/min
  constexpr double kTau = 0.8;        // min
  constexpr double kPathlength = 0.4; // cm
  // Noiseless data: the fit is limited only by the solver tolerance (1e-12).
  constexpr double kTolerance = 1e-8;
  const double factor = ConsumedFactor(kPathlength);
  std::vector<double> times = EvenTimes(61, 0.25), absorbance;
  for (double t : times) {
    const double product = kRate * (t - kTau * (1.0 - std::exp(-t / kTau)));
    absorbance.push_back(1.3 + product / factor);
  }
  const Series series = MakeSeries(times, absorbance);
  RateOptions options;
  options.method = RateMethod::kLag;
  options.window_min = std::make_pair(0.0, 15.0);
  const RateEstimate estimate = EstimateInitialRate(MakeInput(&series, factor, 1e4), options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_NEAR(estimate.rate_uM_per_min, kRate, kTolerance * kRate);
  ASSERT_TRUE(estimate.lag_tau_min.has_value());
  EXPECT_NEAR(*estimate.lag_tau_min, kTau, kTolerance * kTau);
  EXPECT_TRUE(estimate.HasFlag(kRateFlagLag));
  EXPECT_LT(estimate.se_uM_per_min, 1e-9);
  ExpectNoNaN(estimate);
}

TEST(RateLagMethod, KnownCouplingTauIsHeld) {
  constexpr double kRate = 1.2, kTau = 0.5, kTolerance = 1e-9;
  const double factor = ConsumedFactor(1.0);
  std::vector<double> times = EvenTimes(41, 0.25), absorbance;
  for (double t : times) {
    absorbance.push_back(1.0 + kRate * (t - kTau * (1.0 - std::exp(-t / kTau))) / factor);
  }
  const Series series = MakeSeries(times, absorbance);
  RateOptions options;
  options.method = RateMethod::kLag;
  RateInput input = MakeInput(&series, factor, 1e4);
  input.coupling_tau_min = kTau;
  const RateEstimate estimate = EstimateInitialRate(input, options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_NEAR(estimate.rate_uM_per_min, kRate, kTolerance * kRate);
  ASSERT_TRUE(estimate.lag_tau_min.has_value());
  EXPECT_DOUBLE_EQ(*estimate.lag_tau_min, kTau);
  EXPECT_FALSE(estimate.lag_tau_se_min.has_value());  // held, not fitted
}

TEST(RateLagMethod, LinearMethodStartsAfterTheLag) {
  // Constant rate after a 0.6 min lag: the automatic window of kLinear starts
  // at 4.6 τ, where the McClure curve is a straight line of slope v up to
  // e^(−4.6) = 1 %: the slope is then within ~0.2 % of v.
  constexpr double kRate = 0.9, kTau = 0.6;
  constexpr double kTolerance = 3e-3;
  const double factor = ConsumedFactor(0.5);
  std::vector<double> times = EvenTimes(81, 0.25), absorbance;
  for (double t : times) {
    absorbance.push_back(1.0 + kRate * (t - kTau * (1.0 - std::exp(-t / kTau))) / factor);
  }
  const Series series = MakeSeries(times, absorbance);
  RateOptions options;
  options.method = RateMethod::kLinear;
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, factor, RateInput::kUnknown), options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_NEAR(estimate.window_start_min, 4.605 * kTau, 0.25);
  EXPECT_NEAR(estimate.rate_uM_per_min, kRate, kTolerance * kRate);
  EXPECT_TRUE(estimate.HasFlag(kRateFlagLag));
  EXPECT_TRUE(estimate.HasFlag(kRateFlagSubstrateUnknown));
}

// ---------------------------------------------------------------------------
// Progress method: exact integrated Michaelis–Menten data.
//
// SciPy 1.10.1, computed (Schnell & Mendoza closed form, scipy.special.lambertw):
//   S0, Km, Vmax, l = 40.0, 60.0, 1.5, 0.6;  t = np.arange(81)*0.5
//   S = Km*lambertw(S0/Km*np.exp((S0 - Vmax*t)/Km)).real
//   A = 1.1 - (S0 - S)*6220*l*1e-6            # 49 % of S0 used by 40 min
// True v0 = Vmax·S0/(Km + S0) = 0.6 µM/min; Km/(Km + S0) = 0.6.
const std::vector<double> kProgressAbsorbance = {
    1.1000000000000001, 1.0988829203524459, 1.0977708863624294, 1.0966639053293286,
    1.0955619843779125, 1.09446513045607,   1.0933733503325502, 1.0922866505947169,
    1.091205037646314,  1.0901285177052487, 1.0890570968013855, 1.0879907807743612,
    1.0869295752714134, 1.0858734857452288, 1.0848225174518109, 1.0837766754483673,
    1.082735964591218,  1.0817003895337265, 1.080669954724254,  1.0796446644041369,
    1.0786245226056907, 1.07760953315024,   1.076599699646174,  1.0755950254870326,
    1.0745955138496206, 1.073601167692152,  1.0726119897524262, 1.0716279825460364,
    1.0706491483646108, 1.0696754892740885, 1.0687070071130318, 1.0677437034909723,
    1.0667855797867971, 1.065832637147172,  1.0648848764850039, 1.0639422984779434,
    1.0630049035669307, 1.06207269195478,   1.0611456636048107, 1.0602238182395207,
    1.059307155339305,  1.0583956741412208, 1.0574893736377993, 1.0565882525759045,
    1.0556923094556419, 1.0548015425293147, 1.0539159498004331, 1.0530355290227715,
    1.0521602776994805, 1.0512901930822487, 1.0504252721705214, 1.0495655117107694,
    1.0487109081958166, 1.0478614578642202, 1.0470171566997089, 1.0461780004306771,
    1.045343984529737,  1.044515104213328,  1.0436913544413873, 1.0428727299170748,
    1.0420592250865639, 1.0412508341388866, 1.0404475510058442, 1.0396493693619748,
    1.038856282624586,  1.038068283953846,  1.0372853662529404, 1.0365075221682876,
    1.0357347440898206, 1.0349670241513287, 1.034204354230865,  1.0334467259512146,
    1.0326941306804283, 1.0319465595324193, 1.0312040033676226, 1.0304664527937193,
    1.0297338981664237, 1.0290063295903342, 1.0282837369198485, 1.0275661097601401,
    1.0268534374682003};
constexpr double kProgressS0 = 40.0, kProgressV0 = 0.6, kProgressElasticity = 0.6;
constexpr double kProgressPathlength = 0.6;

TEST(RateProgressMethod, RecoversInitialRateFromExactIntegratedMichaelisMenten) {
  // The data carry ~16 digits; the fit is limited by the solver tolerance.
  constexpr double kTolerance = 1e-8;
  const Series series = MakeSeries(EvenTimes(81, 0.5), kProgressAbsorbance);
  RateOptions options;
  options.method = RateMethod::kProgress;
  options.max_lag_min = 0.0;  // the data have no coupling lag
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(kProgressPathlength), kProgressS0), options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_EQ(estimate.method_used, RateMethod::kProgress);
  EXPECT_NEAR(estimate.rate_uM_per_min, kProgressV0, kTolerance * kProgressV0);
  // The bend parameter is less well determined than v0 (it rests on the
  // curvature alone): a looser tolerance.
  constexpr double kElasticityTolerance = 1e-7;
  ASSERT_TRUE(estimate.elasticity.has_value());
  EXPECT_NEAR(*estimate.elasticity, kProgressElasticity, kElasticityTolerance);
  ASSERT_TRUE(estimate.substrate_consumed_fraction.has_value());
  // 1 − S(40)/S0 from the same SciPy computation: 0.48999572971462824.
  EXPECT_NEAR(*estimate.substrate_consumed_fraction, 0.48999572971462824, 1e-7);
  EXPECT_EQ(estimate.points, 81);
  EXPECT_EQ(estimate.window_end, WindowEnd::kEndOfRead);
  EXPECT_FALSE(estimate.lag_tau_min.has_value());
}

TEST(RateProgressMethod, FreeLagFindsNoLagInExactData) {
  // With τ free the fit must find τ ≈ 0; τ at the bound still costs a little
  // precision in v0 through the optimiser's stopping rule.
  constexpr double kTolerance = 1e-6;
  const Series series = MakeSeries(EvenTimes(81, 0.5), kProgressAbsorbance);
  RateOptions options;
  options.method = RateMethod::kProgress;
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(kProgressPathlength), kProgressS0), options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_NEAR(estimate.rate_uM_per_min, kProgressV0, kTolerance * kProgressV0);
  ASSERT_TRUE(estimate.lag_tau_min.has_value());
  EXPECT_LT(*estimate.lag_tau_min, 1e-4);
  EXPECT_FALSE(estimate.HasFlag(kRateFlagLag));
}

TEST(RateProgressMethod, NeedsTheSubstrateConcentration) {
  const Series series = MakeSeries(EvenTimes(81, 0.5), kProgressAbsorbance);
  RateOptions options;
  options.method = RateMethod::kProgress;
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(kProgressPathlength), RateInput::kUnknown), options);
  EXPECT_FALSE(estimate.ok);
  EXPECT_NE(estimate.message.find("substrate"), std::string::npos) << estimate.message;
  ExpectNoNaN(estimate);
}

// ---------------------------------------------------------------------------
// Auto method on exact data.

TEST(RateAutoMethod, BendCorrectionRecoversInitialRateOfExactProgressCurve) {
  // The same exact curve: 49 % consumed by the end. auto stops at 10 %
  // consumed and extrapolates the bend to t = 0. What is left is the Taylor
  // remainder of the bend term, (v0 t/S0)²/6 ≈ 0.2 % at 10 % consumed.
  constexpr double kTolerance = 3e-3;
  const Series series = MakeSeries(EvenTimes(81, 0.5), kProgressAbsorbance);
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(kProgressPathlength), kProgressS0), RateOptions());
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_EQ(estimate.method_used, RateMethod::kAuto);
  EXPECT_NEAR(estimate.rate_uM_per_min, kProgressV0, kTolerance * kProgressV0);
  EXPECT_EQ(estimate.window_end, WindowEnd::kSubstrateConsumed);
  ASSERT_TRUE(estimate.substrate_consumed_fraction.has_value());
  EXPECT_LE(*estimate.substrate_consumed_fraction, 0.10 + 0.01);  // one read past at most
  EXPECT_GT(*estimate.substrate_consumed_fraction, 0.09);
  // A straight line over the same window reads low by ≈ ε·f/2 ≈ 3 %.
  RateOptions linear;
  linear.method = RateMethod::kLinear;
  const RateEstimate line = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(kProgressPathlength), kProgressS0), linear);
  ASSERT_TRUE(line.ok);
  EXPECT_LT(line.rate_uM_per_min, kProgressV0 * (1.0 - 0.02));
  EXPECT_EQ(line.window_end_min, estimate.window_end_min);
}

TEST(RateAutoMethod, UserWindowReplacesTheWindowRules) {
  // The exact 49 %-consumed curve again, with the window set by hand to the
  // first 10 min (about 14 % consumed): no substrate rule, the bend term
  // still corrects to t = 0 (Taylor remainder ≈ (0.14)²/6·… < 0.5 %).
  constexpr double kTolerance = 5e-3;
  const Series series = MakeSeries(EvenTimes(81, 0.5), kProgressAbsorbance);
  RateOptions options;
  options.window_min = std::make_pair(0.0, 10.0);
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(kProgressPathlength), kProgressS0), options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_EQ(estimate.window_end, WindowEnd::kUserWindow);
  EXPECT_EQ(estimate.points, 21);
  EXPECT_NEAR(estimate.rate_uM_per_min, kProgressV0, kTolerance * kProgressV0);
}

TEST(RateAutoMethod, ExactStraightLineGivesItsSlope) {
  // Constant rate, no lag, S0 unknown (curvature free): every model term but
  // the line comes out zero.
  constexpr double kRate = 0.75, kTolerance = 1e-7;
  const double factor = ConsumedFactor(0.8);
  std::vector<double> times = EvenTimes(40, 0.5), absorbance;
  for (double t : times) absorbance.push_back(1.05 + kRate * t / factor);
  const Series series = MakeSeries(times, absorbance);
  RateInput input = MakeInput(&series, factor, RateInput::kUnknown);
  const RateEstimate estimate = EstimateInitialRate(input, RateOptions());
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_NEAR(estimate.rate_uM_per_min, kRate, kTolerance * kRate);
  EXPECT_NEAR(estimate.slope_A_per_min, kRate / factor, kTolerance * kRate / -factor);
  EXPECT_EQ(estimate.window_end, WindowEnd::kEndOfRead);
  EXPECT_EQ(estimate.points, 40);
  EXPECT_NEAR(estimate.r_squared, 1.0, 1e-12);
}

// ---------------------------------------------------------------------------
// Window rules and flags.

// A falling trace at 0.05 A/min, one read every 0.25 min.
std::vector<double> FallingTrace(const std::vector<double>& times, double start, double slope) {
  std::vector<double> a;
  for (double t : times) a.push_back(start + slope * t);
  return a;
}

TEST(RateWindowRules, NadhFloorEndsTheWindow) {
  const std::vector<double> times = EvenTimes(60, 0.25);
  const Series series = MakeSeries(times, FallingTrace(times, 0.9, -0.05));  // 0.2 at 14 min
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(1.0), RateInput::kUnknown), RateOptions());
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_EQ(estimate.window_end, WindowEnd::kNadhLow);
  EXPECT_TRUE(estimate.HasFlag(kRateFlagNadhLow));
  EXPECT_LE(estimate.window_end_min, 14.0);
  EXPECT_GE(estimate.window_end_min, 13.5);
}

TEST(RateWindowRules, AbsorbanceCeilingEndsARisingTrace) {
  // NADH formed (factor > 0): A rises through the 2.5 ceiling at 10 min.
  const std::vector<double> times = EvenTimes(60, 0.25);
  const Series series = MakeSeries(times, FallingTrace(times, 2.0, 0.05));
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, -ConsumedFactor(1.0), 1e5), RateOptions());
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_EQ(estimate.window_end, WindowEnd::kAbsorbanceCeiling);
  EXPECT_LE(estimate.window_end_min, 10.0);
  EXPECT_GT(estimate.rate_uM_per_min, 0.0);
  EXPECT_FALSE(estimate.HasFlag(kRateFlagNegative));
}

TEST(RateWindowRules, SaturatedPointsAreFlaggedAndNeverUsed) {
  // A trace that starts over range: the first four reads are marked
  // saturated, the fifth reads over the ceiling. The rate must equal the one
  // from the trace with those reads removed.
  const std::vector<double> times = EvenTimes(40, 0.25);
  const std::vector<double> a = FallingTrace(times, 2.7, -0.03);
  Series with_bad, without;
  for (std::size_t i = 0; i < times.size(); ++i) {
    if (i < 4) {
      with_bad.Append(times[i], std::nan(""), PointStatus::kSaturated);
    } else {
      with_bad.Append(times[i], a[i], PointStatus::kValid);
    }
    if (a[i] <= 2.5 && i >= 4) without.Append(times[i], a[i], PointStatus::kValid);
  }
  for (RateMethod method : {RateMethod::kAuto, RateMethod::kLinear}) {
    RateOptions options;
    options.method = method;
    const RateEstimate flagged =
        EstimateInitialRate(MakeInput(&with_bad, ConsumedFactor(1.0), 1e5), options);
    const RateEstimate clean =
        EstimateInitialRate(MakeInput(&without, ConsumedFactor(1.0), 1e5), options);
    ASSERT_TRUE(flagged.ok && clean.ok);
    EXPECT_TRUE(flagged.HasFlag(kRateFlagSaturatedPoints));
    EXPECT_FALSE(clean.HasFlag(kRateFlagSaturatedPoints));
    EXPECT_EQ(flagged.points, clean.points);
    EXPECT_DOUBLE_EQ(flagged.rate_uM_per_min, clean.rate_uM_per_min);
    EXPECT_GT(flagged.window_start_min, 6.6);  // after the 2.5 crossing at 6.67 min
  }
}

TEST(RateWindowRules, MissingPointsAreSkippedAndFlagged) {
  const std::vector<double> times = EvenTimes(30, 0.5);
  const std::vector<double> a = FallingTrace(times, 1.0, -0.01);
  Series series;
  for (std::size_t i = 0; i < times.size(); ++i) {
    series.Append(times[i], i == 7 ? std::nan("") : a[i],
                  i == 7 ? PointStatus::kMissing : PointStatus::kValid);
  }
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(1.0), RateInput::kUnknown), RateOptions());
  ASSERT_TRUE(estimate.ok);
  EXPECT_EQ(estimate.points, 29);
  EXPECT_TRUE(estimate.HasFlag(kRateFlagMissingPoints));
  EXPECT_NEAR(estimate.rate_uM_per_min, -0.01 * ConsumedFactor(1.0), 1e-9);
}

TEST(RateWindowRules, SubstrateUnknownIsFlagged) {
  const std::vector<double> times = EvenTimes(30, 0.5);
  const Series series = MakeSeries(times, FallingTrace(times, 1.0, -0.01));
  const RateEstimate estimate = EstimateInitialRate(
      MakeInput(&series, ConsumedFactor(1.0), RateInput::kUnknown), RateOptions());
  ASSERT_TRUE(estimate.ok);
  EXPECT_TRUE(estimate.HasFlag(kRateFlagSubstrateUnknown));
  EXPECT_FALSE(estimate.substrate_consumed_fraction.has_value());
}

TEST(RateWindowRules, ReactionStartShiftsTheTimeOrigin) {
  // The reader's clock started 2 min after mixing: a McClure curve in true
  // reaction time, read from 2 min. With reaction_start_min = −2 the lag fit
  // sees the right origin and recovers v and τ.
  constexpr double kRate = 1.5, kTau = 0.7, kTolerance = 1e-7;
  const double factor = ConsumedFactor(0.5);
  std::vector<double> reader_times = EvenTimes(50, 0.25), absorbance;
  for (double t : reader_times) {
    const double since_start = t + 2.0;
    absorbance.push_back(1.0 + kRate * (since_start - kTau * (1 - std::exp(-since_start / kTau))) /
                                   factor);
  }
  const Series series = MakeSeries(reader_times, absorbance);
  RateOptions options;
  options.method = RateMethod::kLag;
  options.reaction_start_min = -2.0;
  const RateEstimate estimate = EstimateInitialRate(MakeInput(&series, factor, 1e5), options);
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_NEAR(estimate.rate_uM_per_min, kRate, kTolerance * kRate);
  ASSERT_TRUE(estimate.lag_tau_min.has_value());
  EXPECT_NEAR(*estimate.lag_tau_min, kTau, 1e-5);
}

// ---------------------------------------------------------------------------
// Degenerate input: never a crash, never a NaN.

TEST(RateDegenerateInput, EmptySeriesIsNotOkWithAReason) {
  const Series empty;
  for (RateMethod method : kAllMethods) {
    RateOptions options;
    options.method = method;
    const RateEstimate estimate =
        EstimateInitialRate(MakeInput(&empty, ConsumedFactor(1.0), 10.0), options);
    EXPECT_FALSE(estimate.ok);
    EXPECT_FALSE(estimate.IsUsable());
    EXPECT_NE(estimate.message.find("no reads"), std::string::npos) << estimate.message;
    EXPECT_EQ(estimate.rate_uM_per_min, 0.0);
    EXPECT_TRUE(std::isinf(estimate.se_uM_per_min));  // no information
    ExpectNoNaN(estimate);
  }
}

TEST(RateDegenerateInput, OneOrTwoPointsAreNotOk) {
  for (int count : {1, 2}) {
    const std::vector<double> times = EvenTimes(count, 0.5);
    const Series series = MakeSeries(times, FallingTrace(times, 1.0, -0.01));
    for (RateMethod method : kAllMethods) {
      RateOptions options;
      options.method = method;
      const RateEstimate estimate =
          EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 10.0), options);
      EXPECT_FALSE(estimate.ok) << count;
      EXPECT_NE(estimate.message.find("at least 3"), std::string::npos) << estimate.message;
      EXPECT_TRUE(estimate.HasFlag(kRateFlagFewPoints));
      ExpectNoNaN(estimate);
    }
  }
}

TEST(RateDegenerateInput, ThreePointsGiveALineWithOneDegreeOfFreedom) {
  const std::vector<double> times = EvenTimes(3, 0.5);
  const Series series = MakeSeries(times, {1.0, 0.99, 0.9805});
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 100.0), RateOptions());
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_EQ(estimate.degrees_of_freedom, 1);
  EXPECT_TRUE(estimate.HasFlag(kRateFlagFewPoints));
  EXPECT_TRUE(std::isfinite(estimate.ci95_hi_uM_per_min));
  ExpectNoNaN(estimate);
}

TEST(RateDegenerateInput, AllSaturatedIsNotOkAndFlagged) {
  Series series;
  for (int i = 0; i < 20; ++i) series.Append(0.5 * i, std::nan(""), PointStatus::kSaturated);
  for (RateMethod method : kAllMethods) {
    RateOptions options;
    options.method = method;
    const RateEstimate estimate =
        EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 10.0), options);
    EXPECT_FALSE(estimate.ok);
    EXPECT_TRUE(estimate.HasFlag(kRateFlagSaturatedPoints));
    EXPECT_NE(estimate.message.find("20 saturated"), std::string::npos) << estimate.message;
    ExpectNoNaN(estimate);
  }
}

TEST(RateDegenerateInput, BelowTheNadhFloorFromTheStartIsNotOk) {
  const std::vector<double> times = EvenTimes(20, 0.5);
  const Series series = MakeSeries(times, FallingTrace(times, 0.1, -0.001));
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 10.0), RateOptions());
  EXPECT_FALSE(estimate.ok);
  EXPECT_NE(estimate.message.find("NADH floor"), std::string::npos) << estimate.message;
}

TEST(RateDegenerateInput, ConstantTraceGivesZeroRateAndIsNotNegative) {
  const std::vector<double> times = EvenTimes(40, 0.5);
  const Series series = MakeSeries(times, std::vector<double>(40, 0.85));
  for (RateMethod method : kAllMethods) {
    RateOptions options;
    options.method = method;
    const RateEstimate estimate =
        EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 50.0), options);
    ExpectNoNaN(estimate);
    if (method == RateMethod::kProgress) continue;  // no curve to fit: may fail, never NaN
    ASSERT_TRUE(estimate.ok) << RateMethodToString(method) << ": " << estimate.message;
    EXPECT_NEAR(estimate.rate_uM_per_min, 0.0, 1e-12) << RateMethodToString(method);
    EXPECT_FALSE(estimate.HasFlag(kRateFlagNegative)) << RateMethodToString(method);
    EXPECT_EQ(estimate.r_squared, 0.0);  // flat: scipy.stats.linregress convention
  }
}

TEST(RateDegenerateInput, ConstantTraceWithReadNoiseHasAZeroInsideItsInterval) {
  // Read noise of ±0.0005 A from a fixed pattern.
  const std::vector<double> times = EvenTimes(40, 0.5);
  std::vector<double> a;
  for (int i = 0; i < 40; ++i) a.push_back(0.85 + 0.0005 * Jitter(i));
  const Series series = MakeSeries(times, a);
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 50.0), RateOptions());
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_LE(estimate.ci95_lo_uM_per_min, 0.0);
  EXPECT_GE(estimate.ci95_hi_uM_per_min, 0.0);
  EXPECT_FALSE(estimate.HasFlag(kRateFlagNegative));
}

TEST(RateDegenerateInput, NoSubstrateControlGetsNoBendAndNoSubstrateRule) {
  // S0 = 0: nothing to consume, so no substrate rule and no bend term; the
  // slow background loss of NADH is still a rate.
  const std::vector<double> times = EvenTimes(40, 0.5);
  std::vector<double> a;
  for (int i = 0; i < 40; ++i) {
    a.push_back(0.9 - 0.0004 * times[i] + 0.0005 * Jitter(i));
  }
  const Series series = MakeSeries(times, a);
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 0.0), RateOptions());
  ASSERT_TRUE(estimate.ok) << estimate.message;
  EXPECT_FALSE(estimate.elasticity.has_value());
  EXPECT_FALSE(estimate.substrate_consumed_fraction.has_value());
  EXPECT_FALSE(estimate.HasFlag(kRateFlagSubstrateUnknown));
  EXPECT_EQ(estimate.window_end, WindowEnd::kEndOfRead);
  // 0.0004 A/min at 1 cm is 0.064 µM/min; read noise leaves a few % of that.
  EXPECT_NEAR(estimate.rate_uM_per_min, 0.0004 * 1e6 / kEpsilon, 0.3 * 0.0004 * 1e6 / kEpsilon);
}

TEST(RateDegenerateInput, RisingTraceWhenNadhShouldFallIsNegative) {
  const std::vector<double> times = EvenTimes(40, 0.5);
  std::vector<double> a;
  for (int i = 0; i < 40; ++i) {
    a.push_back(0.8 + 0.004 * times[i] + 0.0005 * Jitter(i));
  }
  const Series series = MakeSeries(times, a);
  for (RateMethod method : {RateMethod::kAuto, RateMethod::kLinear, RateMethod::kLag}) {
    RateOptions options;
    options.method = method;
    const RateEstimate estimate =
        EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 50.0), options);
    ASSERT_TRUE(estimate.ok) << estimate.message;
    EXPECT_LT(estimate.rate_uM_per_min, 0.0);
    EXPECT_GT(estimate.slope_A_per_min, 0.0);
    EXPECT_TRUE(estimate.HasFlag(kRateFlagNegative)) << RateMethodToString(method);
    ExpectNoNaN(estimate);
  }
}

TEST(RateDegenerateInput, TimesGoingBackwardsAreReported) {
  const Series series = MakeSeries({0.0, 0.5, 1.0, 0.75, 1.5}, {1.0, 0.99, 0.98, 0.97, 0.96});
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 50.0), RateOptions());
  EXPECT_FALSE(estimate.ok);
  EXPECT_NE(estimate.message.find("read 4"), std::string::npos) << estimate.message;
  ExpectNoNaN(estimate);
}

TEST(RateDegenerateInput, AllReadsAtOneTimeGiveNoRate) {
  const Series series = MakeSeries({2.0, 2.0, 2.0, 2.0}, {1.0, 0.99, 1.01, 1.0});
  for (RateMethod method : kAllMethods) {
    RateOptions options;
    options.method = method;
    const RateEstimate estimate =
        EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), 50.0), options);
    EXPECT_FALSE(estimate.ok) << RateMethodToString(method);
    ExpectNoNaN(estimate);
  }
}

// ---------------------------------------------------------------------------
// Reports.

TEST(RateEstimateReports, BriefAndFullReportsDescribeTheEstimate) {
  const RateEstimate fresh;
  EXPECT_FALSE(fresh.ok);
  EXPECT_EQ(fresh.message, "EstimateInitialRate was not called");
  const std::vector<double> times = EvenTimes(30, 0.5);
  const Series series = MakeSeries(times, FallingTrace(times, 1.0, -0.01));
  const RateEstimate estimate =
      EstimateInitialRate(MakeInput(&series, ConsumedFactor(1.0), RateInput::kUnknown),
                          RateOptions());
  ASSERT_TRUE(estimate.ok);
  const std::string brief = estimate.BriefReport();
  EXPECT_NE(brief.find("auto"), std::string::npos) << brief;
  EXPECT_NE(brief.find("30 points"), std::string::npos) << brief;
  EXPECT_NE(brief.find("end-of-read"), std::string::npos) << brief;
  const std::string full = estimate.FullReport();
  EXPECT_NE(full.find("95 % CI"), std::string::npos) << full;
  EXPECT_NE(full.find("substrate-unknown"), std::string::npos) << full;
  const Series empty;
  const RateEstimate failed =
      EstimateInitialRate(MakeInput(&empty, ConsumedFactor(1.0), 1.0), RateOptions());
  EXPECT_NE(failed.BriefReport().find("no rate"), std::string::npos);
}

}  // namespace
}  // namespace ratewell
