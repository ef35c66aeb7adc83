// The small statistics behind the fits: quantiles (Boost.Math) against R's
// values, the F/t identity behind the profile threshold, the exact runs-test
// distribution against brute-force enumeration, AIC against SciPy, the
// quantile rule against NumPy, and the seeded streams of the bootstrap.
#include "fitting/detail/fit_statistics.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <set>
#include <vector>

#include <gtest/gtest.h>

namespace ratewell::detail {
namespace {

TEST(FitStatistics, StudentTQuantilesMatchR) {
  // R 4.2.2 qt(0.975, df), as stored in tests/data/puromycin/reference-fits.json
  // (R's qt is exact to double precision there).
  constexpr double kTolerance = 1e-14;
  EXPECT_NEAR(StudentTQuantile(0.975, 10), 2.228138851986274, kTolerance);
  EXPECT_NEAR(StudentTQuantile(0.975, 9), 2.262157162798205, kTolerance);
  EXPECT_NEAR(StudentTQuantile(0.975, 20), 2.085963447265865, kTolerance);
  // SciPy 1.10.1, computed: brentq on special.stdtr(14, t) = 0.975.
  EXPECT_NEAR(StudentTQuantile(0.975, 14), 2.1447866879178044, 1e-12);
}

TEST(FitStatistics, FQuantileWithOneNumeratorDegreeIsTheSquaredTQuantile) {
  // The profile threshold SSR/SSR̂ = 1 + F(1, ν; 0.95)/ν equals the profile-t
  // threshold |τ| = t(0.975, ν) because F(1, ν; 0.95) = t(0.975, ν)².
  for (double dof : {3.0, 8.0, 10.0, 27.0, 380.0}) {
    const double t = StudentTQuantile(0.975, dof);
    EXPECT_NEAR(FisherFQuantileUpper(0.05, 1.0, dof), t * t, 1e-12 * t * t) << dof;
  }
}

TEST(FitStatistics, FUpperTailMatchesRsAnova) {
  // R 4.2.2 anova() on the Puromycin shared-K and separate-K fits
  // (tests/data/puromycin/reference-fits.json): F = 1.718168870582976 on
  // (1, 19) gives p = 0.20555227241044538.
  EXPECT_NEAR(FisherFUpperTail(1.718168870582976, 1, 19), 0.20555227241044538, 1e-13);
  EXPECT_EQ(FisherFUpperTail(0.0, 1, 19), 1.0);
}

TEST(FitStatistics, AicMatchesTheGaussianLogLikelihoodFromSciPy) {
  // Puromycin treated, Michaelis–Menten: RSS = 1195.4488144393595, n = 12,
  // p = 2. SciPy 1.10.1, computed: sum(stats.norm.logpdf(r, 0, sqrt(RSS/n)))
  // = -44.635484324473765; AIC = 95.27096864894753, AICc = 98.27096864894753.
  const double m2ll = GaussianMinusTwoLogLikelihood(1195.4488144393595, 12, 0.0);
  EXPECT_NEAR(m2ll, 2 * 44.635484324473765, 1e-11);
  EXPECT_NEAR(Aic(m2ll, 12, 2), 95.27096864894753, 1e-11);
  EXPECT_NEAR(Aicc(m2ll, 12, 2), 98.27096864894753, 1e-11);
  // n − k − 1 ≤ 0: not comparable.
  EXPECT_TRUE(std::isinf(Aicc(m2ll, 4, 2)));
}

// Runs of every arrangement of `positive` + and `negative` − signs.
std::map<int, double> BruteForceRuns(int positive, int negative) {
  std::vector<int> signs(positive, 1);
  signs.insert(signs.end(), negative, -1);
  std::sort(signs.begin(), signs.end());
  std::map<int, double> counts;
  int total = 0;
  do {
    int runs = 1;
    for (size_t k = 1; k < signs.size(); ++k) runs += signs[k] != signs[k - 1] ? 1 : 0;
    counts[runs] += 1.0;
    ++total;
  } while (std::next_permutation(signs.begin(), signs.end()));
  for (auto& [r, c] : counts) c /= total;
  return counts;
}

TEST(FitStatistics, RunsDistributionMatchesEnumerationOfEveryArrangement) {
  for (int positive = 1; positive <= 6; ++positive) {
    for (int negative = 1; negative <= 5; ++negative) {
      const std::vector<double> exact = RunsDistribution(positive, negative);
      const std::map<int, double> counted = BruteForceRuns(positive, negative);
      double sum = 0.0;
      for (size_t r = 0; r < exact.size(); ++r) {
        const auto it = counted.find(static_cast<int>(r));
        EXPECT_NEAR(exact[r], it == counted.end() ? 0.0 : it->second, 1e-14)
            << positive << "+ " << negative << "- runs " << r;
        sum += exact[r];
      }
      EXPECT_NEAR(sum, 1.0, 1e-14);
    }
  }
}

TEST(FitStatistics, RunsTestOfSeveralSeriesConvolvesTheirDistributions) {
  // Two series: + + − − (2 runs) and − + + (2 runs): 4 runs in total.
  const RunsTestResult result = RunsTest({{1, 1, -1, -1}, {-1, 1, 1}});
  ASSERT_TRUE(result.computed);
  EXPECT_EQ(result.runs, 4);
  EXPECT_EQ(result.positive, 4);
  EXPECT_EQ(result.negative, 3);
  // By enumeration: series 1 has P(R=2) = 2/6, P(R=3) = 2/6, P(R=4) = 2/6;
  // series 2 (2+, 1−) has P(R=2) = 2/3, P(R=3) = 1/3.
  // P(total ≤ 4) = P(2)·P(2) = (2/6)(2/3) = 2/9.
  EXPECT_NEAR(result.p_value_few, 2.0 / 9.0, 1e-14);
  EXPECT_NEAR(result.expected_runs, 3.0 + 7.0 / 3.0, 1e-14);
  // Zero signs are skipped; one kind only is not tested.
  EXPECT_FALSE(RunsTest({{1, 1, 0, 1}}).computed);
}

TEST(FitStatistics, QuantilesFollowNumPysDefaultRule) {
  // NumPy 1.24.2 (Debian), computed: np.percentile([3,1,4,1,5,9,2,6],
  // [2.5, 50, 97.5]) = [1.0, 3.5, 8.475].
  std::vector<double> data = {3, 1, 4, 1, 5, 9, 2, 6};
  std::sort(data.begin(), data.end());
  EXPECT_NEAR(SortedQuantile(data, 0.025), 1.0, 1e-14);
  EXPECT_NEAR(SortedQuantile(data, 0.5), 3.5, 1e-14);
  EXPECT_NEAR(SortedQuantile(data, 0.975), 8.475, 1e-12);
  EXPECT_TRUE(std::isnan(SortedQuantile({}, 0.5)));
}

TEST(FitStatistics, StreamSeedsAreReproducibleAndDistinct) {
  EXPECT_EQ(StreamSeed(42, 7), StreamSeed(42, 7));
  std::set<std::uint64_t> seeds;
  for (std::uint64_t seed : {0ull, 1ull, 42ull}) {
    for (std::uint64_t index = 0; index < 1000; ++index) seeds.insert(StreamSeed(seed, index));
  }
  EXPECT_EQ(seeds.size(), 3000u);
}

TEST(FitStatistics, UniformBelowStaysInRangeAndIsFlat) {
  std::mt19937_64 engine(StreamSeed(1, 2));
  constexpr int kCells = 7;
  constexpr int kDraws = 70000;
  std::vector<int> counts(kCells, 0);
  for (int k = 0; k < kDraws; ++k) {
    const std::uint64_t x = UniformBelow(engine, kCells);
    ASSERT_LT(x, static_cast<std::uint64_t>(kCells));
    ++counts[x];
  }
  // χ² with 6 degrees of freedom: P(χ² > 22.46) = 0.001.
  double chi2 = 0.0;
  const double expected = static_cast<double>(kDraws) / kCells;
  for (int c : counts) chi2 += (c - expected) * (c - expected) / expected;
  EXPECT_LT(chi2, 22.46);
}

}  // namespace
}  // namespace ratewell::detail
