// Bootstrap refits on all cores. Resample b is generated from its own
// std::mt19937_64 stream seeded by StreamSeed(seed, b), and stored at index
// b, so the draws are the same whatever the number of threads or the order
// in which the threads take resamples.
#include <algorithm>
#include <atomic>
#include <cmath>
#include <memory>
#include <random>
#include <thread>
#include <vector>

#include "fitting/detail/fit_problem.h"
#include "fitting/detail/fit_statistics.h"

namespace ratewell::detail {

BootstrapRun RunBootstrap(const ResidualSource& source, const ResidualData& data,
                          const std::vector<ParameterSpec>& specs,
                          const std::vector<double>& theta_hat,
                          const std::vector<bool>& log_scale,
                          const std::vector<double>& predicted,
                          const std::vector<double>& weighted_residuals,
                          const BootstrapSettings& settings) {
  BootstrapRun run;
  const int m = data.size();
  const int total = std::max(settings.resamples, 0);
  std::vector<int> free;
  for (size_t j = 0; j < specs.size(); ++j) {
    if (!specs[j].fixed) free.push_back(static_cast<int>(j));
  }
  const int q = static_cast<int>(free.size());
  run.draws.assign(total, {});
  if (total == 0 || q == 0 || m <= q) return run;

  // Residual scheme: the weighted residuals, centred and inflated by
  // √(m/(m − q)) so that their spread matches s (Davison & Hinkley 1997, §6.2).
  std::vector<double> pool(weighted_residuals);
  if (settings.scheme == BootstrapScheme::kResiduals) {
    double mean = 0.0;
    for (double u : pool) mean += u;
    mean /= m;
    const double inflate = std::sqrt(static_cast<double>(m) / (m - q));
    for (double& u : pool) u = (u - mean) * inflate;
  }

  const int threads = std::clamp(settings.threads, 1, total);
  run.threads = threads;
  std::atomic<int> next{0};
  std::atomic<int> done{0};
  std::atomic<bool> cancel{false};

  auto work = [&](bool report) {
    std::unique_ptr<Refitter> refitter;
    if (!settings.use_ceres) refitter = source.NewRefitter(free, log_scale);
    if (!refitter) refitter = NewCeresRefitter(source, specs, m);
    ResidualData resample = data;
    std::vector<double> theta;
    std::vector<char> seen(source.num_observations(), 0);
    while (!cancel.load(std::memory_order_relaxed)) {
      const int b = next.fetch_add(1);
      if (b >= total) break;
      std::mt19937_64 engine(StreamSeed(settings.seed, static_cast<std::uint64_t>(b)));
      bool usable = true;
      if (settings.scheme == BootstrapScheme::kResiduals) {
        for (int k = 0; k < m; ++k) {
          const double e = pool[UniformBelow(engine, m)];
          if (settings.relative_weights) {
            resample.response[k] = predicted[k] + e * std::abs(predicted[k]);
            resample.sqrt_weight[k] = 1.0 / std::abs(resample.response[k]);
            usable = usable && std::isfinite(resample.sqrt_weight[k]);
          } else {
            resample.response[k] = predicted[k] + e / data.sqrt_weight[k];
          }
        }
      } else {
        std::fill(seen.begin(), seen.end(), 0);
        int distinct = 0;
        for (int k = 0; k < m; ++k) {
          const int i = static_cast<int>(UniformBelow(engine, m));
          resample.observation[k] = data.observation[i];
          resample.response[k] = data.response[i];
          resample.sqrt_weight[k] = data.sqrt_weight[i];
          if (!seen[data.observation[i]]) {
            seen[data.observation[i]] = 1;
            ++distinct;
          }
        }
        // A draw needs more distinct observations than free parameters.
        usable = distinct > q;
      }
      theta = theta_hat;
      if (usable && refitter->Refit(resample, theta.data())) {
        // The small solver has no bounds: a refit that leaves them failed.
        bool inside = true;
        for (int j : free) inside = inside && theta[j] >= specs[j].lower && theta[j] <= specs[j].upper;
        if (inside) run.draws[b] = theta;
      }
      const int finished = done.fetch_add(1) + 1;
      if (report && settings.progress && !settings.progress(finished, total)) {
        cancel.store(true);
      }
    }
  };

  std::vector<std::thread> pool_threads;
  for (int t = 1; t < threads; ++t) pool_threads.emplace_back(work, false);
  work(true);
  for (std::thread& t : pool_threads) t.join();

  run.cancelled = cancel.load();
  for (const std::vector<double>& draw : run.draws) {
    if (!draw.empty()) ++run.succeeded;
  }
  run.failed = (run.cancelled ? done.load() : total) - run.succeeded;
  return run;
}

}  // namespace ratewell::detail
