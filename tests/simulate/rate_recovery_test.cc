// Acceptance: initial rates recovered from simulated plates with known truth.
//
// Plates come from the coupled-assay simulator (an ODE of substrate
// depletion, a first-order coupling lag and NADH oxidation, checked against
// the McClure 1969 lag curve and the Schnell & Mendoza 1997 closed form in
// simulator_test.cc) and go through the same path as `ratewell analyze`:
// pathlength, EstimateInitialRate with method auto, blank subtraction. The
// truth is v_E(S0, I), the enzyme's rate at the start of the reaction.
//
// Design, as the rates issue asks: lag tau up to 1 min, up to 30 % of the
// substrate consumed over the read in the lowest-[S] wells, read noise
// sigma = 0.0005 A (a good reader at 340 nm), pathlength 0.3-1 cm, the
// lowest-[S] well changing by about 0.02 A over the read.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>
#include <vector>

#include "fitting/plate_rates.h"
#include "simulate/scenario.h"
#include "simulate/simulator.h"

namespace ratewell {
namespace {

struct Recovery {
  std::vector<double> relative_errors;
  int covered = 0;
  int valid = 0;
  int sample_wells = 0;

  double Quantile(double q) const {
    std::vector<double> e = relative_errors;
    std::sort(e.begin(), e.end());
    if (e.empty()) return NAN;
    const double at = q * static_cast<double>(e.size() - 1);
    const auto lo = static_cast<std::size_t>(std::floor(at));
    const auto hi = static_cast<std::size_t>(std::ceil(at));
    return e[lo] + (e[hi] - e[lo]) * (at - static_cast<double>(lo));
  }
  double Coverage() const { return valid ? static_cast<double>(covered) / valid : 0.0; }
};

// One 96-well plate: Km = 150 uM, S from 36 uM (0.24 Km) to 750 uM (5 Km),
// 30 min read every 20 s; Vmax chosen so the lowest-[S] wells consume about
// 30 % of their substrate over the read.
std::string ScenarioJson(double pathlength_cm, double tau_min, double noise_sd_A, int seed) {
  char json[2048];
  std::snprintf(json, sizeof json, R"json({
    "run": "rate recovery (invented)",
    "reads": {"interval_s": 20, "count": 91, "start_delay_s": 0},
    "pathlength": {"cm": %.3f},
    "nadh_uM": 250,
    "enzyme": {"nM": 2},
    "kinetics": {"model": "michaelis-menten", "vmax_uM_per_min": 1.86, "km_uM": 150},
    "coupling_tau_min": %.3f,
    "blank_drift_A_per_min": -0.0002,
    "noise_sd_A": %.5f,
    "seed": %d,
    "design": {"substrate_uM": [36, 55, 80, 120, 180, 270, 450, 750],
               "replicates": 6, "blank_substrate_uM": [36, 120, 450, 750]}
  })json", pathlength_cm, tau_min, noise_sd_A, seed);
  return json;
}

Recovery RecoverRates(double noise_sd_A) {
  Recovery r;
  int seed = 1;
  for (double l : {0.3, 0.6, 1.0}) {
    for (double tau : {0.0, 0.5, 1.0}) {
      const Scenario scenario = ParseScenario(ScenarioJson(l, tau, noise_sd_A, seed++), "recovery.json");
      const SimulatedPlate sim = SimulatePlate(scenario);
      const PlateRates rates = ComputePlateRates(sim.plate, sim.layout, sim.assay);
      for (const WellRate& w : rates.wells) {
        if (w.role != WellRole::kSample) continue;
        ++r.sample_wells;
        const WellTruth& truth = sim.wells[static_cast<std::size_t>(w.well)];
        if (!w.HasRate() || !truth.rate_uM_per_min) continue;
        ++r.valid;
        const double v = *truth.rate_uM_per_min;
        r.relative_errors.push_back(std::abs(w.rate_uM_per_min - v) / v);
        if (w.ci95_lo_uM_per_min <= v && v <= w.ci95_hi_uM_per_min) ++r.covered;
      }
    }
  }
  return r;
}

TEST(RateRecovery, AutoRecoversTrueInitialRatesOnAGoodReader) {
  const Recovery r = RecoverRates(0.0005);
  std::printf("sigma 0.0005 A: %d/%d sample wells valid, median error %.2f %%, p95 %.2f %%, "
              "max %.2f %%, 95 %% CI coverage %.1f %%\n",
              r.valid, r.sample_wells, 100 * r.Quantile(0.5), 100 * r.Quantile(0.95),
              100 * r.Quantile(1.0), 100 * r.Coverage());
  // Every sample well of these designs has enough signal for a rate.
  EXPECT_GE(r.valid, r.sample_wells * 95 / 100);
  // Acceptance thresholds of the rates issue.
  EXPECT_LE(r.Quantile(0.5), 0.02);
  EXPECT_LE(r.Quantile(0.95), 0.06);
  EXPECT_GE(r.Coverage(), 0.90);
}

TEST(RateRecovery, DegradesGracefullyOnANoisierReader) {
  const Recovery r = RecoverRates(0.002);
  std::printf("sigma 0.002 A: %d/%d sample wells valid, median error %.2f %%, p95 %.2f %%, "
              "max %.2f %%, 95 %% CI coverage %.1f %%\n",
              r.valid, r.sample_wells, 100 * r.Quantile(0.5), 100 * r.Quantile(0.95),
              100 * r.Quantile(1.0), 100 * r.Coverage());
  // Four times the noise: errors grow, but the intervals stay honest.
  EXPECT_LE(r.Quantile(0.5), 0.08);
  EXPECT_GE(r.Coverage(), 0.88);
}

}  // namespace
}  // namespace ratewell
