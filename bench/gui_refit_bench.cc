// The refit the window runs after one well is set aside: SetExclusion +
// FitKinetics on the 384-well demo plate (demo-plates/cbx-inhibitor-series:
// a 6 [S] × 5 [I] matrix in triplicate, the inhibition family of four
// models fitted globally). The target is 50 ms, so that a click feels
// immediate; the window runs it off the UI thread either way.
#include <benchmark/benchmark.h>

#include <filesystem>
#include <string>

#include "fitting/analysis.h"

namespace ratewell {
namespace {

std::string DemoPath(const std::string& file) {
  const std::filesystem::path root = RATEWELL_SOURCE_DIR;
  return (root / "demo-plates" / "cbx-inhibitor-series" / file).string();
}

Analysis LoadDemo(IntervalMethod interval) {
  AnalysisRequest request;
  request.plate_paths = {DemoPath("cbx214_grid.csv")};
  request.layout_path = DemoPath("layout.csv");
  request.assay_path = DemoPath("ASSAY.json");
  request.interval_method = interval;
  return RunAnalysis(request);
}

// Each iteration sets one sample well aside (alternating with restoring it,
// so the data stay the same size) and refits every candidate model.
void RefitAfterExclusion(benchmark::State& state, IntervalMethod interval) {
  Analysis analysis = LoadDemo(interval);
  const WellRate* target = nullptr;
  for (const WellRate& w : analysis.plate_rates.front().wells) {
    if (w.role == WellRole::kSample && w.HasRate()) {
      target = &w;
      break;
    }
  }
  if (target == nullptr) {
    state.SkipWithError("no sample well with a rate in the demo plate");
    return;
  }
  const std::string well = target->name;
  bool excluded = false;
  for (auto _ : state) {
    excluded = !excluded;
    SetExclusion(&analysis, 0, well,
                 excluded ? std::optional<std::string>("pipetting error") : std::nullopt);
    FitKinetics(&analysis);
    benchmark::DoNotOptimize(analysis.kinetics.choice.Preferred());
  }
  state.counters["points"] = static_cast<double>(analysis.kinetics.data.points.size());
  state.counters["models"] = static_cast<double>(analysis.kinetics.choice.fits.size());
}

BENCHMARK_CAPTURE(RefitAfterExclusion, asymptotic, IntervalMethod::kAsymptotic)
    ->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(RefitAfterExclusion, profile, IntervalMethod::kProfile)
    ->Unit(benchmark::kMillisecond);

}  // namespace
}  // namespace ratewell
