// Kinetic fits (fitting/nonlinear_fit.h). Targets (Release, the project's
// 2-core machine):
//   - one 24-point Michaelis–Menten fit with asymptotic intervals ≤ 100 µs;
//   - 2,000 bootstrap resamples of that fit ≤ 150 ms on 2 threads;
//   - a global mixed-inhibition fit over 384 wells with profile intervals
//     ≤ 200 ms.
// Data are invented (our own scenario): exact rate laws times a deterministic
// ±3 % ripple (1 + 0.03·sin(7k)), so every run fits the same numbers.
#include <cmath>
#include <vector>

#include <benchmark/benchmark.h>

#include "fitting/kinetic_models.h"
#include "fitting/nonlinear_fit.h"

namespace ratewell {
namespace {

KineticObservation Point(double s, double i, double v) {
  KineticObservation p;
  p.substrate_uM = s;
  p.inhibitor_uM = i;
  p.rate = v;
  return p;
}

// 12 substrate levels from 0.1 to 10 × Km (Km 40 uM, Vmax 1.2 uM/min), in
// duplicate: 24 points.
KineticData MichaelisMenten24() {
  KineticData data;
  int k = 0;
  for (int level = 0; level < 12; ++level) {
    const double s = 4.0 * std::pow(100.0, level / 11.0);
    for (int replicate = 0; replicate < 2; ++replicate) {
      const double v = 1.2 * s / (40.0 + s);
      data.points.push_back(Point(s, 0.0, v * (1.0 + 0.03 * std::sin(7.0 * k++))));
    }
  }
  return data;
}

// A 384-well plate: 24 substrate levels (0.1–10 Km) × 16 inhibitor levels
// (0 and 0.05–20 Ki), mixed inhibition with Vmax 1.2, Km 40, Ki 2, alpha 4.
KineticData Mixed384() {
  KineticData data;
  int k = 0;
  for (int a = 0; a < 24; ++a) {
    const double s = 4.0 * std::pow(100.0, a / 23.0);
    for (int b = 0; b < 16; ++b) {
      const double i = b == 0 ? 0.0 : 0.1 * std::pow(400.0, (b - 1) / 14.0);
      const double v = EvaluateKineticModel(KineticModel::kMixed, {1.2, 40.0, 2.0, 4.0}, s, i);
      data.points.push_back(Point(s, i, v * (1.0 + 0.03 * std::sin(7.0 * k++))));
    }
  }
  return data;
}

void BM_MichaelisMenten24Asymptotic(benchmark::State& state) {
  const KineticData data = MichaelisMenten24();
  FitOptions options;
  options.interval_method = IntervalMethod::kAsymptotic;
  for (auto _ : state) {
    KineticFit fit = FitKineticModel(data, KineticModel::kMichaelisMenten, options);
    benchmark::DoNotOptimize(fit);
    if (!fit.Find("Km")->ci.determined) state.SkipWithError("interval not determined");
  }
}
BENCHMARK(BM_MichaelisMenten24Asymptotic)->Unit(benchmark::kMicrosecond);

void BM_MichaelisMenten24Profile(benchmark::State& state) {
  const KineticData data = MichaelisMenten24();
  FitOptions options;
  options.interval_method = IntervalMethod::kProfile;
  for (auto _ : state) {
    KineticFit fit = FitKineticModel(data, KineticModel::kMichaelisMenten, options);
    benchmark::DoNotOptimize(fit);
  }
}
BENCHMARK(BM_MichaelisMenten24Profile)->Unit(benchmark::kMicrosecond);

// Arg: threads. The fit itself is included (≈ 1 % of the time).
void BM_MichaelisMenten24Bootstrap2000(benchmark::State& state) {
  const KineticData data = MichaelisMenten24();
  FitOptions options;
  options.interval_method = IntervalMethod::kBootstrap;
  options.bootstrap_resamples = 2000;
  options.num_threads = static_cast<int>(state.range(0));
  for (auto _ : state) {
    KineticFit fit = FitKineticModel(data, KineticModel::kMichaelisMenten, options);
    benchmark::DoNotOptimize(fit);
    if (fit.bootstrap.succeeded < 1900) state.SkipWithError("bootstrap refits failed");
  }
}
BENCHMARK(BM_MichaelisMenten24Bootstrap2000)
    ->Arg(1)
    ->Arg(2)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime();

void BM_Mixed384Profile(benchmark::State& state) {
  const KineticData data = Mixed384();
  FitOptions options;
  options.interval_method = IntervalMethod::kProfile;
  for (auto _ : state) {
    KineticFit fit = FitKineticModel(data, KineticModel::kMixed, options);
    benchmark::DoNotOptimize(fit);
    for (const ParameterEstimate& p : fit.parameters) {
      if (!p.ci.determined) state.SkipWithError("profile interval not determined");
    }
  }
}
BENCHMARK(BM_Mixed384Profile)->Unit(benchmark::kMillisecond);

void BM_Mixed384Asymptotic(benchmark::State& state) {
  const KineticData data = Mixed384();
  FitOptions options;
  options.interval_method = IntervalMethod::kAsymptotic;
  for (auto _ : state) {
    KineticFit fit = FitKineticModel(data, KineticModel::kMixed, options);
    benchmark::DoNotOptimize(fit);
  }
}
BENCHMARK(BM_Mixed384Asymptotic)->Unit(benchmark::kMillisecond);

}  // namespace
}  // namespace ratewell
