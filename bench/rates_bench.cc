// Initial rates for a whole simulated 1536-well plate (fitting/rates.h).
//
// Target: RateMethod::kAuto on 1536 wells × 120 reads in ≤ 50 ms on one core
// (≈ 30 µs per well). The plate is simulated once per process: a coupled
// assay integrated with RK4 (substrate → product by Michaelis–Menten, product
// → NADH oxidation through a first-order coupling step), read every 0.5 min
// for 60 min with Gaussian read noise (σ = 0.0005 A, fixed seed). Substrate
// varies along the 48 columns from 0.2 to 8 × Km; rows repeat the series with
// a few coupling lags. Invented data, our own scenario.
//
// The kLag and kProgress benchmarks run a 48-well slice (one row): they use
// Ceres and are not meant for whole 1536-well plates in an interactive loop.
// main() comes from benchmark_main (bench/CMakeLists.txt links every
// *_bench.cc into one program).
#include <algorithm>
#include <cmath>
#include <random>
#include <vector>

#include <benchmark/benchmark.h>

#include "fitting/rates.h"
#include "importers/plate.h"

namespace ratewell {
namespace {

constexpr int kRows = 32;
constexpr int kColumns = 48;
constexpr int kReads = 120;
constexpr double kReadIntervalMin = 0.5;
constexpr double kNoiseAbsorbance = 0.0005;
constexpr double kEpsilonPerMolarCm = 6220.0;  // NADH, 340 nm (Horecker & Kornberg 1948)
constexpr double kPathlengthCm = 0.45;
constexpr double kKmMicromolar = 80.0;
constexpr double kVmaxMicromolarPerMin = 1.2;
constexpr double kNadhMicromolar = 300.0;
constexpr double kBaselineAbsorbance = 0.05;
constexpr std::uint64_t kSeed = 0x5eed1536;

struct SimulatedWell {
  Series series;
  double substrate_uM = 0.0;
};

// RK4 of dS/dt = −v(S), dI/dt = v(S) − I/τ, dN/dt = −I/τ; A = ε·l·N + baseline.
Series Simulate(double s0, double tau, std::mt19937_64& rng) {
  const double step = std::min(0.01, tau / 8.0);
  auto rate = [](double s) {
    s = std::max(s, 0.0);
    return kVmaxMicromolarPerMin * s / (kKmMicromolar + s);
  };
  double s = s0, i = 0.0, n = kNadhMicromolar, t = 0.0;
  std::normal_distribution<double> noise(0.0, kNoiseAbsorbance);
  Series series;
  for (int r = 0; r < kReads; ++r) {
    const double target = r * kReadIntervalMin;
    while (t < target - 1e-12) {
      const double h = std::min(step, target - t);
      auto f = [&](double ss, double ii, double* ds, double* di, double* dn) {
        const double v = rate(ss);
        *ds = -v;
        *di = v - ii / tau;
        *dn = -ii / tau;
      };
      double k1[3], k2[3], k3[3], k4[3];
      f(s, i, &k1[0], &k1[1], &k1[2]);
      f(s + h / 2 * k1[0], i + h / 2 * k1[1], &k2[0], &k2[1], &k2[2]);
      f(s + h / 2 * k2[0], i + h / 2 * k2[1], &k3[0], &k3[1], &k3[2]);
      f(s + h * k3[0], i + h * k3[1], &k4[0], &k4[1], &k4[2]);
      s += h / 6 * (k1[0] + 2 * k2[0] + 2 * k3[0] + k4[0]);
      i += h / 6 * (k1[1] + 2 * k2[1] + 2 * k3[1] + k4[1]);
      n += h / 6 * (k1[2] + 2 * k2[2] + 2 * k3[2] + k4[2]);
      t += h;
    }
    const double absorbance =
        kEpsilonPerMolarCm * kPathlengthCm * n * 1e-6 + kBaselineAbsorbance + noise(rng);
    series.Append(target, absorbance, PointStatus::kValid);
  }
  return series;
}

class RatesBench : public benchmark::Fixture {
 public:
  void SetUp(const benchmark::State&) override {
    if (!wells_.empty()) return;
    std::mt19937_64 rng(kSeed);
    const double taus[] = {0.1, 0.3, 0.6, 1.0};
    for (int row = 0; row < kRows; ++row) {
      for (int column = 0; column < kColumns; ++column) {
        SimulatedWell well;
        well.substrate_uM = kKmMicromolar * 0.2 * std::pow(40.0, column / (kColumns - 1.0));
        well.series = Simulate(well.substrate_uM, taus[row % 4], rng);
        wells_.push_back(std::move(well));
      }
    }
  }

  // Runs one method over wells [0, count) once; returns how many were ok.
  int RunPlate(RateMethod method, int count) const {
    RateOptions options;
    options.method = method;
    int ok = 0;
    for (int w = 0; w < count; ++w) {
      RateInput input;
      input.series = &wells_[w].series;
      input.product_uM_per_A = -1e6 / (kEpsilonPerMolarCm * kPathlengthCm);
      input.substrate_uM = wells_[w].substrate_uM;
      const RateEstimate estimate = EstimateInitialRate(input, options);
      benchmark::DoNotOptimize(estimate.rate_uM_per_min);
      ok += estimate.ok ? 1 : 0;
    }
    return ok;
  }

  static std::vector<SimulatedWell> wells_;
};

std::vector<SimulatedWell> RatesBench::wells_;

// Wells per second, and the time per well (the inverse rate).
void Report(benchmark::State& state, int wells) {
  state.SetItemsProcessed(state.iterations() * wells);
  state.counters["time_per_well"] =
      benchmark::Counter(wells, benchmark::Counter::kIsIterationInvariantRate |
                                    benchmark::Counter::kInvert);
}

BENCHMARK_DEFINE_F(RatesBench, Auto1536WellPlate)(benchmark::State& state) {
  const int wells = kRows * kColumns;
  for (auto _ : state) benchmark::DoNotOptimize(RunPlate(RateMethod::kAuto, wells));
  Report(state, wells);
}
BENCHMARK_REGISTER_F(RatesBench, Auto1536WellPlate)->Unit(benchmark::kMillisecond);

BENCHMARK_DEFINE_F(RatesBench, Linear1536WellPlate)(benchmark::State& state) {
  const int wells = kRows * kColumns;
  for (auto _ : state) benchmark::DoNotOptimize(RunPlate(RateMethod::kLinear, wells));
  Report(state, wells);
}
BENCHMARK_REGISTER_F(RatesBench, Linear1536WellPlate)->Unit(benchmark::kMillisecond);

BENCHMARK_DEFINE_F(RatesBench, Lag48Wells)(benchmark::State& state) {
  for (auto _ : state) benchmark::DoNotOptimize(RunPlate(RateMethod::kLag, kColumns));
  Report(state, kColumns);
}
BENCHMARK_REGISTER_F(RatesBench, Lag48Wells)->Unit(benchmark::kMillisecond);

BENCHMARK_DEFINE_F(RatesBench, Progress48Wells)(benchmark::State& state) {
  for (auto _ : state) benchmark::DoNotOptimize(RunPlate(RateMethod::kProgress, kColumns));
  Report(state, kColumns);
}
BENCHMARK_REGISTER_F(RatesBench, Progress48Wells)->Unit(benchmark::kMillisecond);

}  // namespace
}  // namespace ratewell
