// Tests of the simulator: the ODE against published closed forms, the truth
// against the rate-law equations, the plate design, reproducibility and the
// files of a run.
#include "simulate/simulator.h"

#include <gmock/gmock.h>
#include <gtest/gtest.h>
#include <unistd.h>

#include <boost/math/special_functions/lambert_w.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <numeric>
#include <sstream>
#include <string>

#include "fitting/assay_settings.h"
#include "fitting/beer_lambert.h"
#include "fitting/pathlength.h"
#include "importers/input_error.h"
#include "importers/layout.h"
#include "simulate/detail/coupled_assay.h"

namespace ratewell {
namespace {

namespace fs = std::filesystem;
using ::testing::HasSubstr;

std::string DataPath(const std::string& name) {
  return std::string(RATEWELL_TEST_DATA_DIR) + "/scenarios/" + name;
}

std::string ReadBytes(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

// A fresh empty folder under the system temp folder, removed at scope end.
class TempFolder {
 public:
  explicit TempFolder(const std::string& tag) {
    path_ = fs::temp_directory_path() / ("ratewell-sim-" + tag + "-" + std::to_string(::getpid()));
    fs::remove_all(path_);
    fs::create_directories(path_);
  }
  ~TempFolder() {
    std::error_code ignored;
    fs::remove_all(path_, ignored);
  }
  std::string path() const { return path_.string(); }
  std::string operator/(const std::string& name) const { return (path_ / name).string(); }

 private:
  fs::path path_;
};

// ---------------------------------------------------------------------------
// The ODE against closed forms.

// Error control at 1e-12 relative per step keeps the global error of a
// 20-minute run near 1e-11 relative; 1e-9 leaves room for accumulation.
constexpr double kOdeRelativeTolerance = 1e-9;

// (a) Constant-rate enzyme (S ≫ Km, depletion negligible) through a
// first-order coupling step: product reaching the detector is
// P(t) = v·(t − τ(1 − e^(−t/τ))) (McClure 1969), and the intermediate is
// X(t) = v·τ·(1 − e^(−t/τ)).
TEST(CoupledAssayOde, ConstantRateLagMatchesMcClure) {
  for (const double per_turnover : {1.0, 2.0}) {
    detail::CoupledWell well;
    well.kinetics.model = RateLaw::kMichaelisMenten;
    well.kinetics.vmax_uM_per_min = 5.0;
    well.kinetics.km_uM = 1e-12;  // v = Vmax·S/(Km + S) = Vmax to 1e-18
    well.substrate0_uM = 1e6;     // 20 min use 100 µM of it: v changes by < 1e-20
    well.nadh0_uM = 1e4;          // never runs out
    well.tau_min = 0.7;
    well.per_turnover = per_turnover;
    std::vector<double> times;
    for (int k = 0; k <= 400; ++k) times.push_back(0.05 * k);
    const std::vector<detail::CoupledState> states = detail::IntegrateCoupledWell(well, times);
    ASSERT_EQ(states.size(), times.size());
    const double v = 5.0;
    for (std::size_t k = 0; k < times.size(); ++k) {
      const double t = times[k];
      const double lag = -std::expm1(-t / well.tau_min);  // 1 − e^(−t/τ)
      const double product = v * (t - well.tau_min * lag);
      const double drop = well.nadh0_uM - states[k].nadh_uM;
      if (t >= 0.5 * well.tau_min) {
        EXPECT_NEAR(drop, per_turnover * product, kOdeRelativeTolerance * per_turnover * product)
            << "t = " << t;
      } else {
        // Early on the drop (∝ t²) is tiny; compare on the scale of v·τ.
        EXPECT_NEAR(drop, per_turnover * product, kOdeRelativeTolerance * v * well.tau_min)
            << "t = " << t;
      }
      EXPECT_NEAR(states[k].intermediate_uM, v * well.tau_min * lag,
                  kOdeRelativeTolerance * v * well.tau_min)
          << "t = " << t;
    }
  }
}

// Lambert W of Boost.Math against SciPy: scipy.special.lambertw(x).real
// (SciPy 1.10.1, computed), shortest round-trip digits. 4 ulp covers the two
// libraries' last-bit rounding.
TEST(CoupledAssayOde, BoostLambertWAgreesWithScipy) {
  constexpr double kUlps = 4.0 * 2.220446049250313e-16;
  const struct {
    double x, w;
  } kScipy[] = {
      {1.0, 0.5671432904097838},     {10.0, 1.7455280027406994},
      {0.5, 0.35173371124919584},    {30.456234901758684, 2.5},                    // 2.5·e^2.5
      {0.001, 0.000999001497338531}, {1.3383347192042696e+44, 97.03014844704333},  // 100·e^97
  };
  for (const auto& ref : kScipy) {
    EXPECT_NEAR(boost::math::lambert_w0(ref.x), ref.w, kUlps * ref.w) << "W(" << ref.x << ")";
  }
}

// (b) τ = 0, Michaelis–Menten depletion: the integrated rate law
// S0 − S + Km·ln(S0/S) = Vmax·t has the closed form
// S(t) = Km·W((S0/Km)·exp((S0 − Vmax·t)/Km)) (Schnell & Mendoza 1997), and
// every turnover takes per_turnover NADH: N = N0 − p·(S0 − S).
TEST(CoupledAssayOde, MichaelisMentenDepletionMatchesSchnellMendoza) {
  detail::CoupledWell well;
  well.kinetics.model = RateLaw::kMichaelisMenten;
  well.kinetics.vmax_uM_per_min = 10.0;
  well.kinetics.km_uM = 20.0;
  well.substrate0_uM = 100.0;
  well.nadh0_uM = 500.0;
  well.tau_min = 0.0;
  std::vector<double> times;
  for (int k = 0; k <= 60; ++k) times.push_back(0.25 * k);  // to 15 min: S falls to ~2 µM
  const std::vector<detail::CoupledState> states = detail::IntegrateCoupledWell(well, times);
  const double km = 20.0, s0 = 100.0, vmax = 10.0;
  for (std::size_t k = 0; k < times.size(); ++k) {
    const double exact =
        km * boost::math::lambert_w0((s0 / km) * std::exp((s0 - vmax * times[k]) / km));
    EXPECT_NEAR(states[k].substrate_uM, exact, kOdeRelativeTolerance * s0) << "t = " << times[k];
    EXPECT_NEAR(states[k].nadh_uM, 500.0 - (s0 - exact), kOdeRelativeTolerance * s0)
        << "t = " << times[k];
  }
  // The check reached deep depletion: over 90 % of the substrate used.
  EXPECT_LT(states.back().substrate_uM, 0.1 * s0);
}

// Without enzyme only the drift acts: N = N0 + d·t, a straight line.
TEST(CoupledAssayOde, BlankWellDriftsLinearly) {
  detail::CoupledWell well;
  well.substrate0_uM = 300.0;
  well.nadh0_uM = 100.0;
  well.drift_uM_per_min = -2.0;
  const std::vector<double> times = {0.0, 1.0, 7.5, 20.0};
  const auto states = detail::IntegrateCoupledWell(well, times);
  for (std::size_t k = 0; k < times.size(); ++k) {
    EXPECT_NEAR(states[k].nadh_uM, 100.0 - 2.0 * times[k], 1e-9);
    EXPECT_EQ(states[k].substrate_uM, 300.0);
  }
}

// With the default clamp, NADH falls at p·v until it is gone and then stays 0;
// the substrate keeps being used (the primary enzyme does not know).
TEST(CoupledAssayOde, SignalStopsWhenNadhRunsOut) {
  detail::CoupledWell well;
  well.kinetics.model = RateLaw::kMichaelisMenten;
  well.kinetics.vmax_uM_per_min = 10.0;
  well.kinetics.km_uM = 1e-12;
  well.substrate0_uM = 1e6;
  well.nadh0_uM = 50.0;  // gone at t = 5 min
  well.drift_uM_per_min = -0.5;
  std::vector<double> times;
  for (int k = 0; k <= 40; ++k) times.push_back(0.25 * k);
  const auto states = detail::IntegrateCoupledWell(well, times);
  for (std::size_t k = 0; k < times.size(); ++k) {
    const double t = times[k];
    // Before exhaustion the loss is (p·v + |d|)·t = 10.5 µM/min.
    const double expected = std::max(0.0, 50.0 - 10.5 * t);
    EXPECT_NEAR(states[k].nadh_uM, expected, 1e-8) << "t = " << t;
    EXPECT_GE(states[k].nadh_uM, 0.0);
    EXPECT_NEAR(states[k].substrate_uM, 1e6 - 10.0 * t, 1e-6) << "t = " << t;
  }
}

// With K_N > 0 the coupling step slows as NADH runs low, so NADH is never
// below the clamped model's; it never goes negative and never rises.
TEST(CoupledAssayOde, SmoothNadhLimitSlowsTheLastStep) {
  detail::CoupledWell well;
  well.kinetics.model = RateLaw::kMichaelisMenten;
  well.kinetics.vmax_uM_per_min = 10.0;
  well.kinetics.km_uM = 1e-12;
  well.substrate0_uM = 1e6;
  well.nadh0_uM = 50.0;
  well.tau_min = 0.3;
  std::vector<double> times;
  for (int k = 0; k <= 60; ++k) times.push_back(0.25 * k);
  const auto clamped = detail::IntegrateCoupledWell(well, times);
  well.nadh_half_saturation_uM = 2.0;
  const auto smooth = detail::IntegrateCoupledWell(well, times);
  bool slower_somewhere = false;
  for (std::size_t k = 1; k < times.size(); ++k) {
    EXPECT_GE(smooth[k].nadh_uM, 0.0);
    EXPECT_LE(smooth[k].nadh_uM, smooth[k - 1].nadh_uM) << "t = " << times[k];
    EXPECT_GE(smooth[k].nadh_uM, clamped[k].nadh_uM - 1e-9) << "t = " << times[k];
    slower_somewhere = slower_somewhere || smooth[k].nadh_uM > clamped[k].nadh_uM + 0.1;
  }
  EXPECT_TRUE(slower_somewhere);
  EXPECT_LT(smooth.back().nadh_uM, 0.5);  // still runs out in the end
}

// Direction "formed": the detected species rises by p per coupled turnover.
TEST(CoupledAssayOde, FormedSpeciesRises) {
  detail::CoupledWell well;
  well.kinetics.model = RateLaw::kMichaelisMenten;
  well.kinetics.vmax_uM_per_min = 4.0;
  well.kinetics.km_uM = 1e-12;
  well.substrate0_uM = 1e6;
  well.nadh0_uM = 0.0;
  well.consumed = false;
  const auto states = detail::IntegrateCoupledWell(well, {0.0, 2.0, 10.0});
  EXPECT_NEAR(states[1].nadh_uM, 8.0, 1e-8);
  EXPECT_NEAR(states[2].nadh_uM, 40.0, 1e-8);
}

// ---------------------------------------------------------------------------
// The truth.

// Scenario text for one model with the given kinetic keys.
std::string ModelScenario(const std::string& kinetics) {
  return R"({"run": "model check [invented]",
    "reads": {"interval_s": 60, "count": 3},
    "kinetics": )" +
         kinetics + R"(,
    "design": {"substrate_uM": [3, 30, 300], "inhibitor_uM": [0, 2, 7]}})";
}

// The DESIGN §2 equations written out again, independently of EnzymeRate.
struct ModelCase {
  const char* kinetics;
  double (*rate)(double s, double i);
};

// Equal up to a few roundings of the same formula.
constexpr double kFormulaRelativeTolerance = 1e-14;

TEST(SimulatePlate, TruthRatesFollowTheRateLawEquations) {
  const ModelCase kCases[] = {
      {R"({"model": "michaelis-menten", "vmax_uM_per_min": 9, "km_uM": 25})",
       [](double s, double) { return 9 * s / (25 + s); }},
      {R"({"model": "substrate-inhibition", "vmax_uM_per_min": 9, "km_uM": 25, "ksi_uM": 120})",
       [](double s, double) { return 9 * s / (25 + s + s * s / 120); }},
      {R"({"model": "hill", "vmax_uM_per_min": 9, "khalf_uM": 25, "hill_h": 2.5})",
       [](double s, double) {
         return 9 * std::pow(s, 2.5) / (std::pow(25, 2.5) + std::pow(s, 2.5));
       }},
      {R"({"model": "competitive", "vmax_uM_per_min": 9, "km_uM": 25, "ki_uM": 1.5})",
       [](double s, double i) { return 9 * s / (25 * (1 + i / 1.5) + s); }},
      {R"({"model": "uncompetitive", "vmax_uM_per_min": 9, "km_uM": 25, "ki_uM": 1.5})",
       [](double s, double i) { return 9 * s / (25 + s * (1 + i / 1.5)); }},
      {R"({"model": "noncompetitive", "vmax_uM_per_min": 9, "km_uM": 25, "ki_uM": 1.5})",
       [](double s, double i) { return 9 * s / ((25 + s) * (1 + i / 1.5)); }},
      {R"({"model": "mixed", "vmax_uM_per_min": 9, "km_uM": 25, "ki_uM": 1.5, "alpha": 3})",
       [](double s, double i) { return 9 * s / (25 * (1 + i / 1.5) + s * (1 + i / (3 * 1.5))); }},
  };
  for (const ModelCase& c : kCases) {
    const Scenario scenario = ParseScenario(ModelScenario(c.kinetics), "model.json");
    const SimulatedPlate sim = SimulatePlate(scenario);
    int samples = 0;
    for (const WellTruth& w : sim.wells) {
      if (w.role != WellRole::kSample) continue;
      ++samples;
      ASSERT_TRUE(w.rate_uM_per_min.has_value());
      const double expected = c.rate(w.substrate_uM, w.inhibitor_uM);
      EXPECT_NEAR(*w.rate_uM_per_min, expected, kFormulaRelativeTolerance * expected)
          << c.kinetics << " S=" << w.substrate_uM << " I=" << w.inhibitor_uM;
    }
    EXPECT_EQ(samples, 9) << c.kinetics;
  }
}

// NADH standards follow Beer–Lambert with ε340 = 6220 M⁻¹cm⁻¹ (Horecker &
// Kornberg 1948): 100 µM in 1 cm reads 0.622 above the background.
TEST(SimulatePlate, StandardsFollowBeerLambert) {
  const Scenario s = ParseScenario(R"({"run": "standards [invented]",
      "reads": {"interval_s": 60, "count": 3},
      "kinetics": {"model": "michaelis-menten", "vmax_uM_per_min": 1, "km_uM": 10},
      "background_A": 0.05,
      "design": {"substrate_uM": [10], "standards_uM": [0, 100, 250]}})",
                                   "std.json");
  const SimulatedPlate sim = SimulatePlate(s);
  const int channel = sim.plate.ChannelOf(340.0);
  ASSERT_EQ(channel, 0);
  // Layout: sample A01, then controls from B01: standards B01..B03.
  const double expected[] = {0.05, 0.672, 1.605};  // 0.05 + 6220 × 1 × c × 1e-6
  for (int k = 0; k < 3; ++k) {
    const int well = 12 + k;
    ASSERT_EQ(sim.layout.at(well).role, WellRole::kStandard);
    for (double a : sim.plate.at(channel, well).value) {
      EXPECT_NEAR(a, expected[k], 1e-12) << WellName(well, sim.plate.geometry);
    }
  }
}

TEST(SimulatePlate, WellsArePlacedInTheDocumentedOrder) {
  const Scenario s = ReadScenarioFile(DataPath("full_96.json"));
  const SimulatedPlate sim = SimulatePlate(s);
  const Layout& layout = sim.layout;
  auto at = [&](const char* name) -> const WellInfo& {
    const WellPosition p = *ParseWellName(name);
    return layout.at(p.row * 12 + p.column);
  };
  // Rows A-F: inhibitor 0, 2, 6 × replicates 1, 2; substrate along the row.
  EXPECT_EQ(at("A01").role, WellRole::kSample);
  EXPECT_EQ(at("A01").substrate_uM, 5.0);
  EXPECT_EQ(at("A01").inhibitor_uM, 0.0);
  EXPECT_EQ(at("A08").substrate_uM, 640.0);
  EXPECT_EQ(at("A09").role, WellRole::kEmpty);
  EXPECT_EQ(at("B01").inhibitor_uM, 0.0);
  EXPECT_EQ(at("C01").inhibitor_uM, 2.0);
  EXPECT_EQ(at("F08").inhibitor_uM, 6.0);
  EXPECT_EQ(at("F08").substrate_uM, 640.0);
  // Row G on: 2 saturating, 8 + 1 blanks, 2 no-substrate, 6 standards.
  EXPECT_EQ(at("G01").role, WellRole::kSample);
  EXPECT_EQ(at("G01").group, "saturating");
  EXPECT_EQ(at("G03").role, WellRole::kBlank);
  EXPECT_EQ(at("G03").substrate_uM, 5.0);
  EXPECT_EQ(at("G03").enzyme_nM, 0.0);
  EXPECT_EQ(at("G11").role, WellRole::kBlank);
  EXPECT_EQ(at("G11").substrate_uM, 640.0);
  EXPECT_EQ(at("G12").role, WellRole::kNoSubstrate);
  EXPECT_EQ(at("H01").role, WellRole::kNoSubstrate);
  EXPECT_EQ(at("H02").role, WellRole::kStandard);
  EXPECT_EQ(at("H02").standard_uM, 0.0);
  EXPECT_EQ(at("H07").standard_uM, 250.0);
  EXPECT_EQ(at("H08").role, WellRole::kEmpty);
  EXPECT_EQ(layout.CountRole(WellRole::kSample), 50);
  EXPECT_EQ(layout.CountRole(WellRole::kBlank), 9);
  EXPECT_EQ(layout.CountRole(WellRole::kStandard), 6);
}

TEST(SimulatePlate, ColumnFillRunsDownTheColumns) {
  const Scenario s = ReadScenarioFile(DataPath("hill_384_columns.json"));
  const SimulatedPlate sim = SimulatePlate(s);
  auto at = [&](const char* name) -> const WellInfo& {
    const WellPosition p = *ParseWellName(name);
    return sim.layout.at(p.row * 24 + p.column);
  };
  EXPECT_EQ(at("A01").substrate_uM, 3.0);
  EXPECT_EQ(at("B01").substrate_uM, 6.0);
  EXPECT_EQ(at("J01").substrate_uM, 1536.0);
  EXPECT_EQ(at("K01").role, WellRole::kEmpty);
  EXPECT_EQ(at("A03").substrate_uM, 3.0);  // third replicate series
  EXPECT_EQ(at("A04").role, WellRole::kBlank);
  // 20 blanks fill column 4 and P.. of column 5; then 8 standards.
  EXPECT_EQ(at("D05").role, WellRole::kBlank);
  EXPECT_EQ(at("E05").role, WellRole::kStandard);
  EXPECT_EQ(at("L05").role, WellRole::kStandard);
  EXPECT_EQ(at("M05").role, WellRole::kEmpty);
  // 0.00026 mg/mL ÷ 52000 g/mol = 5 nM.
  EXPECT_NEAR(at("A01").enzyme_nM, 5.0, 1e-12);
}

TEST(SimulatePlate, SaturatingWellsStartAboveTheCeiling) {
  const Scenario s = ReadScenarioFile(DataPath("full_96.json"));
  const SimulatedPlate sim = SimulatePlate(s);
  const int channel = sim.plate.ChannelOf(340.0);
  const int g01 = 6 * 12;
  const WellTruth& truth = sim.wells[g01];
  ASSERT_TRUE(truth.saturating);
  const Series& series = sim.plate.at(channel, g01);
  EXPECT_EQ(series.status.front(), PointStatus::kSaturated);
  EXPECT_TRUE(std::isnan(series.value.front()));
  EXPECT_GT(truth.saturated_points, 0);
  // Its NADH was raised so that ε·l·N·1e-6 + background = 3.5.
  EXPECT_NEAR(6220.0 * truth.pathlength_cm * truth.nadh_start_uM * 1e-6 + 0.04, 3.5, 1e-12);
  // The ordinary wells stay below the ceiling.
  EXPECT_EQ(sim.wells[0].saturated_points, 0);
  EXPECT_EQ(
      sim.plate.CountPoints(PointStatus::kSaturated),
      static_cast<long>(sim.wells[g01].saturated_points + sim.wells[g01 + 1].saturated_points));
}

// With no noise the water band minus its baseline is k·l in every well
// (common practice: A977 − A900 ≈ 0.18 per cm of water).
TEST(SimulatePlate, WaterPeakMatchesEachWellsPathlength) {
  const Scenario s = ParseScenario(R"({"run": "water [invented]",
      "reads": {"interval_s": 60, "count": 3},
      "pathlength": {"volume_uL": 200, "well_area_cm2": 0.32, "spread_percent": 5,
                     "water_peak": true},
      "kinetics": {"model": "michaelis-menten", "vmax_uM_per_min": 1, "km_uM": 10},
      "design": {"substrate_uM": [10, 20, 40], "replicates": 4}})",
                                   "water.json");
  const SimulatedPlate sim = SimulatePlate(s);
  const int sample = sim.plate.ChannelOf(977.0);
  const int reference = sim.plate.ChannelOf(900.0);
  ASSERT_GE(sample, 0);
  ASSERT_GE(reference, 0);
  double lo = 10.0, hi = 0.0;
  for (const WellTruth& w : sim.wells) {
    if (w.role == WellRole::kEmpty) continue;
    lo = std::min(lo, w.pathlength_cm);
    hi = std::max(hi, w.pathlength_cm);
    const double difference =
        sim.plate.at(sample, w.well).value[0] - sim.plate.at(reference, w.well).value[0];
    // Both reads are rounded to 1e-4.
    EXPECT_NEAR(difference, 0.18 * w.pathlength_cm, 1e-4) << w.name;
  }
  EXPECT_LT(lo, 0.625);  // the spread did vary the wells
  EXPECT_GT(hi, 0.625);
  EXPECT_GE(lo, 0.625 * (1 - 0.15));  // z clipped at ±3 → ±15 %
}

// Box–Muller deviates: empty wells read background + σ·z; over 15360 draws
// the sample SD lies within 3 % of σ (its relative SE is 1/√(2n) = 0.57 %)
// and the mean within 4 SE of the background.
TEST(SimulatePlate, ReadNoiseHasTheRequestedSpread) {
  const Scenario s = ParseScenario(R"({"run": "noise [invented]", "plate": {"wells": 1536},
      "reads": {"interval_s": 60, "count": 10},
      "noise_sd_A": 0.01, "seed": 99,
      "kinetics": {"model": "michaelis-menten", "vmax_uM_per_min": 1, "km_uM": 10},
      "design": {"substrate_uM": [10]}})",
                                   "noise.json");
  const SimulatedPlate sim = SimulatePlate(s);
  std::vector<double> deviations;
  for (int w = 0; w < 1536; ++w) {
    if (sim.layout.at(w).role != WellRole::kEmpty) continue;
    for (double a : sim.plate.at(0, w).value) deviations.push_back(a - 0.04);
  }
  ASSERT_GT(deviations.size(), 15000u);
  const double n = static_cast<double>(deviations.size());
  const double mean = std::accumulate(deviations.begin(), deviations.end(), 0.0) / n;
  double ss = 0.0;
  for (double d : deviations) ss += (d - mean) * (d - mean);
  const double sd = std::sqrt(ss / (n - 1));
  EXPECT_NEAR(sd, 0.01, 0.03 * 0.01);
  EXPECT_NEAR(mean, 0.0, 4 * 0.01 / std::sqrt(n));
}

TEST(SimulatePlate, ProgressRisesToTheEnd) {
  const Scenario s = ReadScenarioFile(DataPath("minimal.json"));
  std::vector<double> seen;
  SimulatePlate(s, [&](double f) { seen.push_back(f); });
  ASSERT_FALSE(seen.empty());
  EXPECT_TRUE(std::is_sorted(seen.begin(), seen.end()));
  EXPECT_GT(seen.back(), 0.0);
  EXPECT_LE(seen.back(), 1.0);
}

// After the coupling lag (t ≫ 4.6 τ) a well with S ≫ Km falls at
// ε·l·p·v·1e-6 A/min; the fitting module's Beer–Lambert factor turns that
// slope back into the truth's rate. A blank falls at the stated drift.
TEST(SimulatePlate, SteadySlopeGivesBackTheTrueRate) {
  const Scenario s = ParseScenario(R"({"run": "slope [invented]",
      "reads": {"interval_s": 60, "count": 8},
      "pathlength": {"cm": 0.6},
      "detection": {"per_turnover": 2},
      "nadh_uM": 400,
      "kinetics": {"model": "michaelis-menten", "vmax_uM_per_min": 7, "km_uM": 10},
      "coupling_tau_min": 0.3,
      "blank_drift_A_per_min": -0.0005,
      "detector": {"decimals": 10},
      "design": {"substrate_uM": [100000], "blanks_per_substrate": 1}})",
                                   "slope.json");
  const SimulatedPlate sim = SimulatePlate(s);
  const Series& sample = sim.plate.at(0, 0);  // A01
  const Series& blank = sim.plate.at(0, 12);  // B01
  ASSERT_EQ(sim.layout.at(12).role, WellRole::kBlank);
  // Reads at 5, 6 and 7 min: e^(−5/0.3) < 1e-7, the lag is over.
  const double sample_slope = (sample.value[7] - sample.value[5]) / 2.0;
  const double blank_slope = (blank.value[7] - blank.value[5]) / 2.0;
  // 10 decimals: rounding adds < 1e-10 A to a 2-min difference of ~0.05 A.
  EXPECT_NEAR(blank_slope, -0.0005, 1e-9);
  const double factor = ProductMicromolarPerAbsorbance(s.detection, 0.6);
  const double rate = (sample_slope - blank_slope) * factor;
  ASSERT_TRUE(sim.wells[0].rate_uM_per_min.has_value());
  // v changes by Km·ΔS/S² ≈ 1e-8 relative over 7 min of depletion; the lag
  // term left is v·τ·e^(−t/τ) ≈ 1e-7 µM over 2 min.
  EXPECT_NEAR(rate, *sim.wells[0].rate_uM_per_min, 1e-6 * 7.0);
}

// The pathlengths the analysis computes from the simulated plate are the
// truth's: per well from the water peak, and for the plate from the NADH
// standards (slope of A against c = ε·l·1e-6).
TEST(SimulatePlate, AnalysisPathlengthRecoversTheTruth) {
  const Scenario s = ParseScenario(R"({"run": "pathlength [invented]",
      "reads": {"interval_s": 60, "count": 4},
      "pathlength": {"volume_uL": 150, "well_area_cm2": 0.3, "spread_percent": 4,
                     "water_peak": true},
      "kinetics": {"model": "michaelis-menten", "vmax_uM_per_min": 3, "km_uM": 10},
      "design": {"substrate_uM": [5, 20, 80], "replicates": 3,
                 "standards_uM": [0, 50, 100, 150, 200]}})",
                                   "pathlength.json");
  const SimulatedPlate sim = SimulatePlate(s);
  const PathlengthResult water = ComputePathlength(sim.assay, sim.plate, &sim.layout);
  ASSERT_EQ(water.mode, "water-peak");
  for (const WellTruth& w : sim.wells) {
    if (w.role == WellRole::kEmpty) continue;
    // Two reads rounded to 1e-4 A, divided by k = 0.18 per cm.
    EXPECT_NEAR(water.cm_per_well[w.well], w.pathlength_cm, 2 * 0.5e-4 / 0.18) << w.name;
  }
  AssaySettings by_standards = sim.assay;
  by_standards.pathlength.mode = PathlengthMode::kStandards;
  const PathlengthResult standards = ComputePathlength(by_standards, sim.plate, &sim.layout);
  ASSERT_TRUE(standards.standards.has_value());
  // The standards' own pathlengths scatter by the 4 % spread; their
  // least-squares slope gives a pathlength within that spread of nominal.
  double lo = 10.0, hi = 0.0;
  for (const WellTruth& w : sim.wells) {
    if (w.role != WellRole::kStandard || w.standard_uM == 0.0) continue;
    lo = std::min(lo, w.pathlength_cm);
    hi = std::max(hi, w.pathlength_cm);
  }
  EXPECT_GE(standards.standards->cm, lo - 1e-3);
  EXPECT_LE(standards.standards->cm, hi + 1e-3);
}

// ---------------------------------------------------------------------------
// A whole run.

TEST(RunScenarioFile, WritesEveryFileAndTheTruth) {
  TempFolder out("files");
  const SimulationOutput result = RunScenarioFile(DataPath("full_96.json"), out.path());
  const std::vector<std::string> names = {
      "rk1-lot7_long.csv", "rk1-lot7_wide.csv", "rk1-lot7_grid.csv",  "rk1-lot7_long.xlsx",
      "rk1_grid_eu.csv",   "rk1-lot7_long.txt", "rk1-lot7_grid.xlsx", "layout.csv",
      "ASSAY.json",        "truth.json"};
  ASSERT_EQ(result.files_written.size(), names.size());
  for (std::size_t i = 0; i < names.size(); ++i) {
    EXPECT_EQ(fs::path(result.files_written[i]).filename().string(), names[i]);
    EXPECT_TRUE(fs::exists(out / names[i])) << names[i];
  }
  // No temporary files are left behind.
  int entries = 0;
  for (const auto& entry : fs::directory_iterator(out.path())) {
    (void)entry;
    ++entries;
  }
  EXPECT_EQ(entries, static_cast<int>(names.size()));
  EXPECT_EQ(result.wells_used,
            67);  // 48 samples, 2 saturating, 9 blanks, 2 no-substrate, 6 standards
  EXPECT_EQ(result.reads, 21);
  EXPECT_EQ(result.channels, 4);  // 340, 405, 900, 977

  const nlohmann::json truth = nlohmann::json::parse(ReadBytes(out / "truth.json"));
  EXPECT_EQ(truth["kinetics"]["model"], "mixed");
  EXPECT_DOUBLE_EQ(truth["kinetics"]["parameters"]["Vmax"]["value"].get<double>(), 3.6);
  EXPECT_EQ(truth["kinetics"]["parameters"]["Ki"]["value"].get<double>(), 3.0);
  EXPECT_EQ(truth["kinetics"]["parameters"]["alpha"]["value"].get<double>(), 4.0);
  EXPECT_EQ(truth["signal"]["coupling_tau_min"].get<double>(), 0.4);
  EXPECT_EQ(truth["signal"]["seed"].get<std::uint64_t>(), 20240611u);
  EXPECT_EQ(truth["detection"]["epsilon_per_M_cm"].get<double>(), 6220.0);
  ASSERT_EQ(truth["files"].size(), names.size());
  EXPECT_EQ(truth["files"][4]["delimiter"], "semicolon");
  ASSERT_EQ(truth["wells"].size(), 96u);
  // C05: inhibitor 2 µM, substrate 80 µM; mixed: v = 3.6·80/(40(1 + 2/3) + 80(1 + 2/12)).
  const nlohmann::json& c05 = truth["wells"][2 * 12 + 4];
  EXPECT_EQ(c05["well"], "C05");
  const double expected = 3.6 * 80 / (40 * (1 + 2.0 / 3) + 80 * (1 + 2.0 / 12));
  EXPECT_NEAR(c05["rate_uM_per_min"].get<double>(), expected, 1e-14 * expected);
  EXPECT_EQ(c05["enzyme_nM"].get<double>(), 5.0);
  EXPECT_GT(c05["pathlength_cm"].get<double>(), 0.5);
  // H02, a standard: no rate (null); H12, empty: role only.
  EXPECT_EQ(truth["wells"][7 * 12 + 1]["role"], "standard");
  EXPECT_TRUE(truth["wells"][7 * 12 + 1]["rate_uM_per_min"].is_null());
  EXPECT_EQ(truth["wells"][7 * 12 + 11]["role"], "empty");
  EXPECT_FALSE(truth["wells"][7 * 12 + 11].contains("rate_uM_per_min"));

  // ASSAY.json is what the scenario says, and the settings parser accepts it.
  const Scenario scenario = ReadScenarioFile(DataPath("full_96.json"));
  EXPECT_EQ(ReadAssaySettingsFile(out / "ASSAY.json"), scenario.ToAssaySettings());
}

TEST(RunScenarioFile, LayoutFileReadsBackAsTheSimulatedLayout) {
  TempFolder out("layout");
  RunScenarioFile(DataPath("full_96.json"), out.path());
  const Scenario scenario = ReadScenarioFile(DataPath("full_96.json"));
  const SimulatedPlate sim = SimulatePlate(scenario);
  const Layout read = ReadLayoutFile(out / "layout.csv", scenario.geometry);
  EXPECT_EQ(read.form, "list");
  ASSERT_EQ(read.wells.size(), sim.layout.wells.size());
  auto same = [](double a, double b) { return (std::isnan(a) && std::isnan(b)) || a == b; };
  for (std::size_t w = 0; w < read.wells.size(); ++w) {
    const WellInfo& expected = sim.layout.wells[w];
    const WellInfo& got = read.wells[w];
    EXPECT_EQ(got.role, expected.role) << w;
    EXPECT_TRUE(same(got.substrate_uM, expected.substrate_uM)) << w;
    EXPECT_TRUE(same(got.inhibitor_uM, expected.inhibitor_uM)) << w;
    EXPECT_TRUE(same(got.enzyme_nM, expected.enzyme_nM)) << w;
    EXPECT_TRUE(same(got.standard_uM, expected.standard_uM)) << w;
    EXPECT_EQ(got.group, expected.group) << w;
  }
  EXPECT_TRUE(read.warnings.empty()) << read.warnings.front();
}

TEST(RunScenarioFile, SameSeedGivesByteIdenticalFiles) {
  TempFolder first("same-1");
  TempFolder second("same-2");
  const SimulationOutput a = RunScenarioFile(DataPath("full_96.json"), first.path());
  const SimulationOutput b = RunScenarioFile(DataPath("full_96.json"), second.path());
  ASSERT_EQ(a.files_written.size(), b.files_written.size());
  for (std::size_t i = 0; i < a.files_written.size(); ++i) {
    const std::string bytes = ReadBytes(a.files_written[i]);
    EXPECT_FALSE(bytes.empty());
    EXPECT_TRUE(bytes == ReadBytes(b.files_written[i])) << a.files_written[i];
  }
}

TEST(RunScenarioFile, DifferentSeedGivesDifferentReadings) {
  TempFolder scenarios("seed-scenario");
  std::string text = ReadBytes(DataPath("full_96.json"));
  const std::string from = "\"seed\": 20240611";
  text.replace(text.find(from), from.size(), "\"seed\": 20240612");
  const std::string other = scenarios / "other_seed.json";
  std::ofstream(other, std::ios::binary) << text;
  TempFolder first("seed-1");
  TempFolder second("seed-2");
  RunScenarioFile(DataPath("full_96.json"), first.path());
  RunScenarioFile(other, second.path());
  for (const char* plate_file : {"rk1-lot7_long.csv", "rk1-lot7_grid.xlsx", "rk1_grid_eu.csv"}) {
    EXPECT_FALSE(ReadBytes(first / plate_file) == ReadBytes(second / plate_file)) << plate_file;
  }
  EXPECT_TRUE(ReadBytes(first / "layout.csv") == ReadBytes(second / "layout.csv"));
  EXPECT_TRUE(ReadBytes(first / "ASSAY.json") == ReadBytes(second / "ASSAY.json"));
}

TEST(RunScenarioFile, NeverWritesOverTheScenario) {
  TempFolder out("protect");
  // A scenario saved under a name the run writes, inside the output folder.
  const std::string scenario = out / "layout.csv";
  const std::string text = ReadBytes(DataPath("minimal.json"));
  std::ofstream(scenario, std::ios::binary) << text;
  try {
    RunScenarioFile(scenario, out.path());
    ADD_FAILURE() << "the scenario was overwritten";
  } catch (const InputError& e) {
    EXPECT_THAT(e.reason(), HasSubstr("over an input file"));
  }
  EXPECT_EQ(ReadBytes(scenario), text);
  // Refused before anything was written: the folder holds only the scenario.
  EXPECT_FALSE(fs::exists(out / "plate_long.csv"));
  EXPECT_EQ(std::distance(fs::directory_iterator(out.path()), fs::directory_iterator()), 1);
}

TEST(RunScenarioFile, OutputFolderThatIsAFileIsAnInputError) {
  TempFolder out("not-a-folder");
  const std::string file = out / "plain_file";
  std::ofstream(file) << "x";
  EXPECT_THROW(RunScenarioFile(DataPath("minimal.json"), file), InputError);
}

}  // namespace
}  // namespace ratewell
