// Accuracy of initial rates on simulated coupled-assay plates (fitting/rates.h).
//
// Scenario (invented, our own): 40 plates × 8 substrate levels = 320 wells.
// Per plate, drawn with a fixed-seed std::mt19937_64:
//   pathlength 0.3–1 cm; coupling lag τ 0–1 min; read 30 min every 15 s,
//   60 min every 30 s or 45 min every 22.5 s (121 reads); lowest [S] between
//   0.2 and 0.4 × Km, the others up to 30 × the lowest; Vmax such that the
//   lowest well uses 10–30 % of its substrate over the read and its A340
//   falls by 0.02 (the design rule: even the weakest well moves 0.02 A);
//   every third plate carries a competitive inhibitor at I = Ki (apparent Km
//   doubled, the design rule still met through Vmax).
// Each well is integrated with RK4 (step ≤ 0.01 min and ≤ τ/8):
//   dS/dt = −Vmax·S/(Km·(1 + I/Ki) + S)      (Michaelis–Menten)
//   dI/dt = Vmax·S/(…) − I/τ                 (intermediate, first-order coupling)
//   dN/dt = −I/τ                             (NADH, one per turnover)
//   A(t)  = ε·l·N·1e-6 + 0.05 + noise,  ε = 6220 M⁻¹cm⁻¹, N(0) = 1/(ε·l) M
// with Gaussian read noise σ. The truth is v0 = Vmax·S0/(Km·(1 + I/Ki) + S0).
//
// Figures measured when this test was written (σ = 0.0005 A unless noted):
//   auto      median 0.64 %, 95th percentile 3.4 %, CI coverage 97 %
//   progress  median 0.58 %, 95th percentile 2.3 %, CI coverage 97 %
//   σ = 0.002 auto median 1.4 %, p95 12 %, coverage 96 %;
//             progress median 1.1 %, p95 4.0 %, coverage 97 %
#include <algorithm>
#include <cmath>
#include <iostream>
#include <random>
#include <vector>

#include <gtest/gtest.h>

#include "fitting/rates.h"

namespace ratewell {
namespace {

constexpr double kEpsilon = 6220.0;  // NADH, 340 nm (Horecker & Kornberg 1948)
constexpr std::uint64_t kSeed = 20240611;
constexpr int kPlates = 40;
constexpr int kLevels = 8;

// The acceptance targets of the rate code (issue "Initial rates from every
// well"): over valid wells, median |error| ≤ 2 %, 95th percentile ≤ 6 %, and
// the true rate inside the 95 % interval for at least 90 % of wells.
constexpr double kMedianTarget = 0.02;
constexpr double kP95Target = 0.06;
constexpr double kCoverageTarget = 0.90;

struct WellTruth {
  double s0_uM = 0.0;
  double km_uM = 0.0;
  double vmax_uM_per_min = 0.0;
  double inhibitor_over_ki = 0.0;
  double tau_min = 0.0;
  double pathlength_cm = 1.0;
  double read_interval_min = 0.25;
  double read_span_min = 30.0;
  double KmApparent() const { return km_uM * (1.0 + inhibitor_over_ki); }
  double InitialRate() const { return vmax_uM_per_min * s0_uM / (KmApparent() + s0_uM); }
  double Factor() const { return -1e6 / (kEpsilon * pathlength_cm); }
};

struct SimulatedWell {
  WellTruth truth;
  Series series;
  double consumed_fraction = 0.0;  // of S0, over the whole read
  bool lowest_level = false;
};

Series Simulate(const WellTruth& w, double noise_sd, std::mt19937_64& rng,
                double* consumed_fraction) {
  const double km = w.KmApparent();
  auto rate = [&](double s) {
    s = std::max(s, 0.0);
    return w.vmax_uM_per_min * s / (km + s);
  };
  const double nadh0_uM = 1.0 / (kEpsilon * w.pathlength_cm) * 1e6;
  const double step = w.tau_min > 0.0 ? std::min(0.01, w.tau_min / 8.0) : 0.01;
  double s = w.s0_uM, intermediate = 0.0, nadh = nadh0_uM, t = 0.0;
  std::normal_distribution<double> noise(0.0, noise_sd);
  Series series;
  const int reads = static_cast<int>(std::lround(w.read_span_min / w.read_interval_min)) + 1;
  for (int r = 0; r < reads; ++r) {
    const double target = r * w.read_interval_min;
    while (t < target - 1e-12) {
      const double h = std::min(step, target - t);
      if (w.tau_min > 0.0) {
        auto f = [&](double ss, double ii, double d[3]) {
          const double v = rate(ss);
          d[0] = -v;
          d[1] = v - ii / w.tau_min;
          d[2] = -ii / w.tau_min;
        };
        double k1[3], k2[3], k3[3], k4[3];
        f(s, intermediate, k1);
        f(s + h / 2 * k1[0], intermediate + h / 2 * k1[1], k2);
        f(s + h / 2 * k2[0], intermediate + h / 2 * k2[1], k3);
        f(s + h * k3[0], intermediate + h * k3[1], k4);
        s += h / 6 * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0]);
        intermediate += h / 6 * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1]);
        nadh += h / 6 * (k1[2] + 2 * k2[2] + 2 * k3[2] + k4[2]);
      } else {
        const double k1 = -rate(s), k2 = -rate(s + h / 2 * k1), k3 = -rate(s + h / 2 * k2),
                     k4 = -rate(s + h * k3);
        const double ds = h / 6 * (k1 + 2 * k2 + 2 * k3 + k4);
        s += ds;
        nadh += ds;
      }
      t += h;
    }
    const double absorbance = kEpsilon * w.pathlength_cm * nadh * 1e-6 + 0.05 + noise(rng);
    series.Append(target, absorbance, PointStatus::kValid);
  }
  *consumed_fraction = 1.0 - s / w.s0_uM;
  return series;
}

std::vector<SimulatedWell> SimulatePlates(double noise_sd) {
  std::mt19937_64 rng(kSeed);
  std::uniform_real_distribution<double> uniform(0.0, 1.0);
  std::vector<SimulatedWell> wells;
  for (int plate = 0; plate < kPlates; ++plate) {
    const double pathlength = 0.3 + 0.7 * uniform(rng);
    const double tau = uniform(rng);
    const double span = plate % 3 == 0 ? 30.0 : (plate % 3 == 1 ? 60.0 : 45.0);
    const double interval = span / 120.0;
    const double lowest_fraction = 0.1 + 0.2 * uniform(rng);
    const double lowest_s0 = 0.02 / (lowest_fraction * kEpsilon * 1e-6 * pathlength);
    const double km = lowest_s0 / (0.2 + 0.2 * uniform(rng));
    const double inhibitor_over_ki = plate % 3 == 2 ? 1.0 : 0.0;
    const double km_apparent = km * (1.0 + inhibitor_over_ki);
    // Vmax from the integrated Michaelis–Menten time to use lowest_fraction:
    // t = (f·S0 + Km·ln(1/(1 − f)))/Vmax = span.
    const double vmax =
        (lowest_fraction * lowest_s0 + km_apparent * std::log(1.0 / (1.0 - lowest_fraction))) /
        span;
    for (int level = 0; level < kLevels; ++level) {
      SimulatedWell well;
      well.truth.s0_uM = lowest_s0 * std::pow(30.0, level / (kLevels - 1.0));
      well.truth.km_uM = km;
      well.truth.vmax_uM_per_min = vmax;
      well.truth.inhibitor_over_ki = inhibitor_over_ki;
      well.truth.tau_min = tau;
      well.truth.pathlength_cm = pathlength;
      well.truth.read_interval_min = interval;
      well.truth.read_span_min = span;
      well.lowest_level = level == 0;
      well.series = Simulate(well.truth, noise_sd, rng, &well.consumed_fraction);
      wells.push_back(std::move(well));
    }
  }
  return wells;
}

struct Figures {
  int wells = 0;
  int ok = 0;
  double median = 0.0;      // of |estimate/truth − 1| over ok wells
  double p95 = 0.0;
  double coverage = 0.0;    // fraction of ok wells whose 95 % CI holds the truth
  double median_signed = 0.0;
};

double Quantile(std::vector<double> values, double q) {
  if (values.empty()) return 0.0;
  std::sort(values.begin(), values.end());
  const std::size_t k = std::min(values.size() - 1, static_cast<std::size_t>(q * values.size()));
  return values[k];
}

template <typename Select>
Figures Measure(const std::vector<SimulatedWell>& wells, RateMethod method, Select select,
                bool known_tau = false) {
  RateOptions options;
  options.method = method;
  Figures figures;
  std::vector<double> error, signed_error;
  int covered = 0;
  for (const SimulatedWell& well : wells) {
    if (!select(well)) continue;
    ++figures.wells;
    RateInput input;
    input.series = &well.series;
    input.product_uM_per_A = well.truth.Factor();
    input.substrate_uM = well.truth.s0_uM;
    if (known_tau) input.coupling_tau_min = well.truth.tau_min;
    const RateEstimate estimate = EstimateInitialRate(input, options);
    if (!estimate.ok) continue;
    ++figures.ok;
    const double truth = well.truth.InitialRate();
    const double relative = estimate.rate_uM_per_min / truth - 1.0;
    error.push_back(std::abs(relative));
    signed_error.push_back(relative);
    if (truth >= estimate.ci95_lo_uM_per_min && truth <= estimate.ci95_hi_uM_per_min) ++covered;
  }
  figures.median = Quantile(error, 0.5);
  figures.p95 = Quantile(error, 0.95);
  figures.median_signed = Quantile(signed_error, 0.5);
  figures.coverage = figures.ok > 0 ? static_cast<double>(covered) / figures.ok : 0.0;
  return figures;
}

void Print(const char* label, const Figures& f) {
  std::cout << "[ figures  ] " << label << ": " << f.ok << "/" << f.wells
            << " wells, median |error| " << 100 * f.median << " %, 95th percentile "
            << 100 * f.p95 << " %, median signed " << 100 * f.median_signed
            << " %, CI coverage " << 100 * f.coverage << " %\n";
}

bool AllWells(const SimulatedWell&) { return true; }
bool LowestLevel(const SimulatedWell& w) { return w.lowest_level; }
bool LargeDepletion(const SimulatedWell& w) { return w.consumed_fraction >= 0.2; }

class RateAccuracyTest : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    quiet_ = new std::vector<SimulatedWell>(SimulatePlates(0.0005));
    noisy_ = new std::vector<SimulatedWell>(SimulatePlates(0.002));
  }
  static void TearDownTestSuite() {
    delete quiet_;
    delete noisy_;
  }
  static std::vector<SimulatedWell>* quiet_;
  static std::vector<SimulatedWell>* noisy_;
};
std::vector<SimulatedWell>* RateAccuracyTest::quiet_ = nullptr;
std::vector<SimulatedWell>* RateAccuracyTest::noisy_ = nullptr;

TEST_F(RateAccuracyTest, ScenarioMeetsItsDesignRules) {
  // The test is only as good as its scenario: up to 30 % used by the weakest
  // wells, which move by 0.02 A.
  double max_consumed = 0.0;
  int large = 0;
  for (const SimulatedWell& w : *quiet_) {
    max_consumed = std::max(max_consumed, w.consumed_fraction);
    large += LargeDepletion(w) ? 1 : 0;
    if (w.lowest_level) {
      const double drop = w.series.value.front() - w.series.value.back();
      EXPECT_NEAR(drop, 0.02, 0.003);  // 0.02 A plus read noise at both ends
    }
  }
  EXPECT_EQ(quiet_->size(), static_cast<std::size_t>(kPlates * kLevels));
  EXPECT_LE(max_consumed, 0.31);
  EXPECT_GE(max_consumed, 0.25);
  EXPECT_GE(large, 20);
}

TEST_F(RateAccuracyTest, AutoRecoversInitialRatesWithinTargets) {
  const Figures f = Measure(*quiet_, RateMethod::kAuto, AllWells);
  Print("auto, sigma 0.0005 A", f);
  EXPECT_EQ(f.ok, f.wells);
  EXPECT_LE(f.median, kMedianTarget);
  EXPECT_LE(f.p95, kP95Target);
  EXPECT_GE(f.coverage, kCoverageTarget);
  // The bend correction leaves no systematic error worth naming: the median
  // signed error is well inside the median absolute error.
  EXPECT_LT(std::abs(f.median_signed), 0.5 * f.median);
}

TEST_F(RateAccuracyTest, ProgressRecoversInitialRatesWithinTargets) {
  const Figures f = Measure(*quiet_, RateMethod::kProgress, AllWells);
  Print("progress, sigma 0.0005 A", f);
  EXPECT_EQ(f.ok, f.wells);
  EXPECT_LE(f.median, kMedianTarget);
  EXPECT_LE(f.p95, kP95Target);
  EXPECT_GE(f.coverage, kCoverageTarget);
}

TEST_F(RateAccuracyTest, ProgressDoesBetterWhereDepletionIsLarge) {
  // Wells that use ≥ 20 % of their substrate over the read: auto stops at
  // 10 % and keeps only part of the trace, progress fits all of it.
  const Figures automatic = Measure(*quiet_, RateMethod::kAuto, LargeDepletion);
  const Figures progress = Measure(*quiet_, RateMethod::kProgress, LargeDepletion);
  Print("auto, wells >= 20 % depleted", automatic);
  Print("progress, wells >= 20 % depleted", progress);
  ASSERT_GE(automatic.wells, 20);
  EXPECT_LT(progress.median, automatic.median);
  EXPECT_LT(progress.p95, automatic.p95);
  EXPECT_GE(progress.coverage, kCoverageTarget);
}

TEST_F(RateAccuracyTest, LinearAndLagReadLowUnderDepletion) {
  // Documented behaviour: window averages read low when the substrate runs
  // down, and their intervals then miss the initial rate. At ≤ 10 % consumed
  // the bias is about ε·f/2: more than 0.5 % in the median.
  constexpr double kDocumentedBias = -0.005;
  for (RateMethod method : {RateMethod::kLinear, RateMethod::kLag}) {
    const Figures f = Measure(*quiet_, method, AllWells);
    Print(RateMethodToString(method), f);
    EXPECT_LT(f.median_signed, kDocumentedBias) << RateMethodToString(method);
    EXPECT_LT(f.coverage, kCoverageTarget) << RateMethodToString(method);
  }
}

TEST_F(RateAccuracyTest, AutoDegradesGracefullyAtFourTimesTheNoise) {
  // σ = 0.002 A: the weakest wells move by only 10 σ over the whole read and
  // by about 3 σ over their 10 % window. No target is set for this case; the
  // bounds are the measured figures (median 1.4 %, p95 12 %) with room for
  // noise, so that a regression shows. The interval must stay honest.
  constexpr double kMedianBound = 0.025;
  constexpr double kP95Bound = 0.18;
  const Figures f = Measure(*noisy_, RateMethod::kAuto, AllWells);
  const Figures weakest = Measure(*noisy_, RateMethod::kAuto, LowestLevel);
  const Figures progress = Measure(*noisy_, RateMethod::kProgress, AllWells);
  Print("auto, sigma 0.002 A", f);
  Print("auto, sigma 0.002 A, lowest [S]", weakest);
  Print("progress, sigma 0.002 A", progress);
  EXPECT_LE(f.median, kMedianBound);
  EXPECT_LE(f.p95, kP95Bound);
  EXPECT_GE(f.coverage, kCoverageTarget);
  EXPECT_GE(progress.coverage, kCoverageTarget);
  EXPECT_LE(progress.p95, kP95Target);
}

TEST_F(RateAccuracyTest, KnownCouplingTauTightensTheWeakestWells) {
  // τ belongs to the coupling system; given from a first pass over strong
  // wells it no longer has to be found in each weak well's short window.
  const Figures fitted = Measure(*quiet_, RateMethod::kAuto, LowestLevel, false);
  const Figures known = Measure(*quiet_, RateMethod::kAuto, LowestLevel, true);
  Print("auto, lowest [S], tau fitted", fitted);
  Print("auto, lowest [S], tau known", known);
  EXPECT_LT(known.p95, fitted.p95);
  EXPECT_GE(known.coverage, kCoverageTarget);
}

}  // namespace
}  // namespace ratewell
