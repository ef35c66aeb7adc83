// Tests of the machinery behind fitting/rates.h (fitting/detail/rate_*):
// Lambert W and the integrated Michaelis–Menten equation, Student t
// quantiles, the least-squares line, the profiled lag-and-bend fit and the
// lagged progress curve.
//
// Reference values named "SciPy 1.10.1, computed" were computed with Debian's
// python3-scipy 1.10.1; the expressions are quoted beside them.
#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include <gtest/gtest.h>

#include "fitting/detail/rate_ceres_fits.h"
#include "fitting/detail/rate_lag_bend.h"
#include "fitting/detail/rate_lambert.h"
#include "fitting/detail/rate_statistics.h"

namespace ratewell::detail {
namespace {

// A forward-mode dual number: enough arithmetic for LambertW0OfExp<T>.
struct Dual {
  double a = 0.0;  // value
  double d = 0.0;  // derivative
  Dual() = default;
  explicit Dual(double value, double derivative = 0.0) : a(value), d(derivative) {}
};
[[maybe_unused]] Dual operator+(Dual x, Dual y) { return Dual(x.a + y.a, x.d + y.d); }
Dual operator-(Dual x, Dual y) { return Dual(x.a - y.a, x.d - y.d); }
[[maybe_unused]] Dual operator*(Dual x, Dual y) { return Dual(x.a * y.a, x.d * y.a + x.a * y.d); }
Dual operator*(Dual x, double y) { return Dual(x.a * y, x.d * y); }
[[maybe_unused]] Dual operator/(Dual x, Dual y) {
  return Dual(x.a / y.a, (x.d * y.a - x.a * y.d) / (y.a * y.a));
}
Dual exp(Dual x) { return Dual(std::exp(x.a), std::exp(x.a) * x.d); }
[[maybe_unused]] Dual log(Dual x) { return Dual(std::log(x.a), x.d / x.a); }

// Deterministic read noise in [−1, 1] without a generator (the classic
// fract(sin(x)·43758.5453) hash): successive values look independent, so a
// runs test sees no pattern.
double Jitter(int i) {
  const double x = std::sin(12.9898 * i + 78.233) * 43758.5453;
  return 2.0 * (x - std::floor(x)) - 1.0;
}

// ---------------------------------------------------------------------------
// Lambert W.

TEST(RateLambertW, MatchesScipyLambertw) {
  // SciPy 1.10.1, computed: scipy.special.lambertw(x).real and np.log(x).
  struct Case {
    double log_x, w;
  };
  const Case cases[] = {
      {-23.025850929940457, 9.9999999989999997e-11},  // x = 1e-10
      {-2.3025850929940455, 0.091276527160862264},    // x = 0.1
      {0.0, 0.56714329040978384},                     // x = 1 (the omega constant)
      {0.99999999999999989, 1.0},                     // x = e
      {2.3025850929940455, 1.7455280027406994},       // x = 10
      {11.512925464970229, 9.2845714286221082},       // x = 1e5
      {690.77552789821368, 684.24720862976085},       // x = 1e300
  };
  // Both are double evaluations of the same function: a few ulp apart.
  constexpr double kTolerance = 1e-14;
  for (const Case& c : cases) {
    EXPECT_NEAR(LambertW0OfExp(c.log_x), c.w, kTolerance * c.w) << "log x = " << c.log_x;
  }
}

TEST(RateLambertW, BeyondTheDoubleRangeSolvesItsDefiningEquation) {
  // W0(e^y) for e^y > 1.8e308 cannot come from a library taking x; it must
  // satisfy w + ln w = y (the definition w·e^w = x in logarithms).
  constexpr double kTolerance = 1e-15;
  for (double y : {705.0, 800.0, 1e4, 1e8, 1e12}) {
    const double w = LambertW0OfExp(y);
    EXPECT_NEAR((w + std::log(w)) / y, 1.0, kTolerance) << y;
  }
}

TEST(RateLambertW, IsContinuousWhereTheEvaluationChangesMethod) {
  // Library below y = 700, Newton above; x itself below y = −700. One ulp on
  // either side of a switch, W may move only as its derivative says:
  // Δw/w = Δy/(1 + w).
  constexpr double kTolerance = 1e-15;
  for (double y : {700.0, -700.0}) {
    const double y_below = std::nextafter(y, -INFINITY), y_above = std::nextafter(y, INFINITY);
    const double below = LambertW0OfExp(y_below), above = LambertW0OfExp(y_above);
    const double expected = 1.0 - (y_above - y_below) / (1.0 + above);
    EXPECT_NEAR(below / above, expected, kTolerance) << y;
  }
}

TEST(RateLambertW, DerivativeIsWOverOnePlusW) {
  // d W0(e^y)/dy = w/(1 + w), from differentiating w + ln w = y.
  constexpr double kTolerance = 1e-14;
  for (double y : {-50.0, -3.0, 0.0, 2.0, 40.0, 699.0, 900.0}) {
    const Dual w = LambertW0OfExp(Dual(y, 1.0), y);
    const double value = LambertW0OfExp(y);
    EXPECT_NEAR(w.a, value, kTolerance * value) << y;
    EXPECT_NEAR(w.d, value / (1.0 + value), kTolerance) << y;
  }
}

// ---------------------------------------------------------------------------
// Integrated Michaelis–Menten (Schnell & Mendoza 1997).

TEST(RateIntegratedMichaelisMenten, MatchesScipyClosedForm) {
  // SciPy 1.10.1, computed, S0 = 40, Km = 60, Vmax = 1.5:
  //   Km*scipy.special.lambertw(S0/Km*np.exp((S0 - Vmax*t)/Km)).real
  // In the (v0, e) form: v0 = Vmax·S0/(Km + S0) = 0.6, e = Km/(Km + S0) = 0.6.
  struct Case {
    double t, s;
  };
  const Case cases[] = {{0.0, 40.0},
                        {5.0, 37.067818006802099},
                        {20.0, 29.096236693275664},
                        {40.0, 20.400170811414871},
                        {200.0, 0.52041564297761234}};
  constexpr double kTolerance = 1e-13;
  for (const Case& c : cases) {
    const double s =
        SubstrateRemaining(c.t, 40.0, 0.6, 0.6, SubstrateExponent(c.t, 40.0, 0.6, 0.6));
    EXPECT_NEAR(s, c.s, kTolerance * 40.0) << "t = " << c.t;
  }
}

TEST(RateIntegratedMichaelisMenten, SatisfiesTheIntegratedRateLawWhenS0FarAboveKm) {
  // S0 = 2500·Km: (S0/Km)·e^(S0/Km) overflows a double, the log form must not.
  // The integrated rate law S0 − S + Km·ln(S0/S) = Vmax·t (textbook form of
  // Michaelis–Menten integrated) holds at every t.
  const double s0 = 5000.0, km = 2.0, vmax = 10.0;
  const double v0 = vmax * s0 / (km + s0), e = km / (km + s0);
  constexpr double kTolerance = 1e-12;
  for (double t : {1.0, 100.0, 450.0, 499.0, 500.5}) {
    const double s = SubstrateRemaining(t, s0, v0, e, SubstrateExponent(t, s0, v0, e));
    ASSERT_GT(s, 0.0) << t;
    EXPECT_NEAR(s0 - s + km * std::log(s0 / s), vmax * t, kTolerance * s0) << t;
  }
}

TEST(RateIntegratedMichaelisMenten, TendsToZeroAndFirstOrderAtTheElasticityBounds) {
  const double s0 = 30.0, v0 = 0.5;
  constexpr double kTolerance = 1e-6;  // the bounds are 1e-7 away from 0 and 1
  for (double t : {0.0, 10.0, 50.0}) {
    const double zero_order = SubstrateRemaining(t, s0, v0, kMinElasticity,
                                                 SubstrateExponent(t, s0, v0, kMinElasticity));
    EXPECT_NEAR(zero_order, s0 - v0 * t, kTolerance * s0) << t;
    const double first_order = SubstrateRemaining(t, s0, v0, kMaxElasticity,
                                                  SubstrateExponent(t, s0, v0, kMaxElasticity));
    EXPECT_NEAR(first_order, s0 * std::exp(-v0 * t / s0), kTolerance * s0) << t;
  }
}

// ---------------------------------------------------------------------------
// Statistics.

TEST(RateStudentT, QuantilesMatchScipy) {
  // SciPy 1.10.1, computed: scipy.stats.t.ppf(0.975, df). SciPy is good to
  // ~7e-11 relative for small df (TOOLCHAIN.md); Boost.Math is exact.
  struct Case {
    int dof;
    double quantile;
  };
  const Case cases[] = {{1, 12.706204736432095}, {2, 4.3026527299112747},
                        {3, 3.1824463052842629}, {5, 2.5705818366147395},
                        {10, 2.2281388519649385}, {19, 2.093024054408263},
                        {30, 2.0422724563012373}, {100, 1.9839715184496334},
                        {1000, 1.9623390808264074}};
  constexpr double kTolerance = 1e-9;
  for (const Case& c : cases) {
    EXPECT_NEAR(StudentT975(c.dof), c.quantile, kTolerance * c.quantile) << c.dof;
  }
  EXPECT_TRUE(std::isinf(StudentT975(0)));
}

TEST(RateLineFit, DegenerateLinesAreReportedNotGuessed) {
  const double x[] = {0.0, 1.0, 2.0, 3.0};
  const double flat[] = {2.0, 2.0, 2.0, 2.0};
  const LineFit level = FitLine(x, flat, 4);
  ASSERT_TRUE(level.ok);
  EXPECT_EQ(level.slope, 0.0);
  EXPECT_EQ(level.r_squared, 0.0);  // scipy.stats.linregress reports r = 0 here
  const LineFit two = FitLine(x, flat, 2);
  ASSERT_TRUE(two.ok);
  EXPECT_TRUE(std::isinf(two.slope_se));
  const double same_x[] = {1.0, 1.0, 1.0};
  EXPECT_FALSE(FitLine(same_x, flat, 3).ok);
  EXPECT_FALSE(FitLine(x, flat, 1).ok);
}

TEST(RateLineFit, NoiseVarianceFromSecondDifferencesIgnoresAStraightTrend) {
  std::vector<double> y;
  for (int i = 0; i < 50; ++i) y.push_back(3.0 - 0.7 * i + (i % 2 == 0 ? 0.01 : -0.01));
  // Alternating ±d: every second difference is ±4d, so σ² = 16d²/6.
  EXPECT_NEAR(SecondDifferenceVariance(y.data(), 50), 16.0 * 1e-4 / 6.0, 1e-15);
}

// ---------------------------------------------------------------------------
// The profiled lag-and-bend fit.

TEST(RateLagBendFitter, RecoversAllParametersFromExactModelData) {
  // y = p0 + v·L1 − c·L2 exactly. τ comes from a Brent search to 2^-15 of
  // its bracket, so the parameters agree to about 1e-5 relative.
  constexpr double kP0 = 0.3, kRate = 1.7, kCurvature = 0.004, kTau = 0.45;
  constexpr double kTolerance = 1e-5;
  std::vector<double> t, y;
  for (int i = 0; i < 80; ++i) {
    const double ti = 0.25 * i, e = std::exp(-ti / kTau);
    const double l1 = ti - kTau * (1.0 - e);
    const double l2 = ti * ti - 2.0 * kTau * ti + 2.0 * kTau * kTau * (1.0 - e);
    t.push_back(ti);
    y.push_back(kP0 + kRate * l1 - kCurvature * l2);
  }
  const LagBendFitter fitter(t, y);
  LagBendSettings settings;
  settings.bend = BendTerm::kFree;
  const LagBendResult fit = fitter.Fit(80, settings);
  ASSERT_TRUE(fit.ok);
  EXPECT_NEAR(fit.v, kRate, kTolerance * kRate);
  EXPECT_NEAR(fit.c, kCurvature, 1e-3 * kCurvature);  // c rests on curvature alone
  EXPECT_NEAR(fit.tau, kTau, kTolerance * 10 * kTau);
  EXPECT_NEAR(fit.p0, kP0, kRate * kTau * 1e-4);  // p0 moves with τ by v·Δτ
  EXPECT_EQ(fit.num_parameters, 4);
  EXPECT_EQ(fit.dof, 76);
}

TEST(RateLagBendFitter, APriorHoldsTheCurvatureOnlyAsFirmlyAsItsWeight) {
  // Straight line (c = 0) with read noise; a prior says c = 0.01 ± sd.
  std::vector<double> t, y;
  for (int i = 0; i < 60; ++i) {
    t.push_back(0.5 * i);
    y.push_back(2.0 * t.back() + 0.05 * Jitter(i));
  }
  const LagBendFitter fitter(t, y);
  LagBendSettings settings;
  settings.fit_lag = false;
  settings.bend = BendTerm::kPrior;
  settings.c_prior_mean = 0.01;
  settings.noise_variance = 0.05 * 0.05 / 3.0;  // uniform on ±0.05
  settings.c_prior_sd = 1e-9;  // overwhelming: c is the prior mean
  const LagBendResult firm = fitter.Fit(60, settings);
  ASSERT_TRUE(firm.ok);
  EXPECT_NEAR(firm.c, 0.01, 1e-6);
  settings.c_prior_sd = 1e3;  // negligible: c is what the data say (≈ 0)
  const LagBendResult loose = fitter.Fit(60, settings);
  ASSERT_TRUE(loose.ok);
  EXPECT_NEAR(loose.c, loose.c_free, 1e-9);
  EXPECT_LT(std::abs(loose.c), 5.0 * loose.se_c);
  EXPECT_GT(firm.se_c, 0.0);
  EXPECT_LT(firm.se_c, loose.se_c);
}

TEST(RateLagBendFitter, NoLagInTheDataGivesTauAtZeroWithAnHonestError) {
  // A straight line: τ = 0 is the best fit, and τ still counts in the
  // covariance (its SE is finite and the rate's SE is not understated).
  std::vector<double> t, y;
  for (int i = 0; i < 40; ++i) {
    t.push_back(0.5 * i);
    y.push_back(1.0 * t.back() + 0.02 * Jitter(i));
  }
  const LagBendFitter fitter(t, y);
  LagBendSettings with_lag;
  const LagBendResult lag = fitter.Fit(40, with_lag);
  LagBendSettings without;
  without.fit_lag = false;
  const LagBendResult line = fitter.Fit(40, without);
  ASSERT_TRUE(lag.ok && line.ok);
  EXPECT_FALSE(lag.tau_fixed);
  EXPECT_GE(lag.se_v, line.se_v);
  EXPECT_TRUE(std::isfinite(lag.se_tau));
}

// ---------------------------------------------------------------------------
// The lagged progress curve of kProgress against an independent integration.

TEST(RateProgressCurve, MatchesRungeKuttaOfTheCoupledAssay) {
  // RK4 (step 0.001 min) of dS/dt = −Vmax·S/(Km + S), dI/dt = Vmax·S/(Km + S) − I/τ;
  // detected product D = S0 − S − I. The curve under test interpolates the
  // product linearly between steps of ≤ 0.5 min and integrates the lag
  // exactly: it lies below the truth by about h²/12·|P''| ≈ 9e-5 µM here.
  // (Cross-check, SciPy 1.10.1 solve_ivp DOP853, rtol 1e-12: D(12 min) =
  // 4.211530560422 µM.)
  const double s0 = 25.0, km = 50.0, vmax = 1.2, tau = 0.8;
  const double v0 = vmax * s0 / (km + s0), e = km / (km + s0);
  constexpr double kTolerance = 1.5e-4;  // µM, against a signal of ~10 µM
  std::vector<double> times;
  for (int i = 0; i <= 60; ++i) times.push_back(0.5 * i);
  const std::vector<double> curve = ProgressCurve(times, s0, v0, e, tau);
  double s = s0, intermediate = 0.0, t = 0.0;
  const double step = 0.001;
  auto f = [&](double ss, double ii, double* ds, double* di) {
    const double v = vmax * ss / (km + ss);
    *ds = -v;
    *di = v - ii / tau;
  };
  for (std::size_t k = 0; k < times.size(); ++k) {
    while (t < times[k] - 1e-12) {
      const double h = std::min(step, times[k] - t);  // land on the read exactly
      double a1, b1, a2, b2, a3, b3, a4, b4;
      f(s, intermediate, &a1, &b1);
      f(s + h / 2 * a1, intermediate + h / 2 * b1, &a2, &b2);
      f(s + h / 2 * a2, intermediate + h / 2 * b2, &a3, &b3);
      f(s + h * a3, intermediate + h * b3, &a4, &b4);
      s += h / 6 * (a1 + 2 * a2 + 2 * a3 + a4);
      intermediate += h / 6 * (b1 + 2 * b2 + 2 * b3 + b4);
      t += h;
    }
    EXPECT_NEAR(curve[k], s0 - s - intermediate, kTolerance) << "t = " << times[k];
    if (times[k] == 12.0) {
      EXPECT_NEAR(s0 - s - intermediate, 4.211530560422, 1e-9);
    }
  }
}

TEST(RateProgressCurve, WithoutLagIsTheClosedForm) {
  const double s0 = 40.0, v0 = 0.6, e = 0.6;
  const std::vector<double> times = {0.0, 0.7, 3.0, 12.5, 40.0};
  const std::vector<double> curve = ProgressCurve(times, s0, v0, e, 0.0);
  for (std::size_t k = 0; k < times.size(); ++k) {
    const double closed =
        s0 - SubstrateRemaining(times[k], s0, v0, e, SubstrateExponent(times[k], s0, v0, e));
    EXPECT_DOUBLE_EQ(curve[k], closed);
  }
}

}  // namespace
}  // namespace ratewell::detail
