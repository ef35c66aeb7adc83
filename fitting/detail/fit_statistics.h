// Small statistics for the kinetic fits: distribution quantiles (Boost.Math),
// the information criteria, the runs test, percentiles and the seeded
// random streams of the bootstrap.
#pragma once

#include <cstdint>
#include <random>
#include <vector>

namespace ratewell::detail {

// Student t quantile t(probability, dof), dof > 0 (Boost.Math).
double StudentTQuantile(double probability, double dof);
// Upper quantile of F(df1, df2): the f with P(F > f) = upper_tail.
double FisherFQuantileUpper(double upper_tail, double df1, double df2);
// P(F > f) for F ~ F(df1, df2).
double FisherFUpperTail(double f, double df1, double df2);

// −2·log-likelihood of a weighted Gaussian least-squares fit with σ²
// estimated (R's logLik for nls): n·(ln(2π·SSR/n) + 1) − Σ ln wᵢ.
double GaussianMinusTwoLogLikelihood(double ssr, int n, double sum_log_weights);
// AIC = −2 log L + 2k and AICc = AIC + 2k(k + 1)/(n − k − 1), k = p + 1 (σ²
// counted). AICc is +infinity when n − k − 1 ≤ 0.
double Aic(double minus_two_log_likelihood, int n, int num_parameters);
double Aicc(double minus_two_log_likelihood, int n, int num_parameters);

// Exact distribution of the number of runs in a random arrangement of
// `positive` and `negative` signs: result[r] = P(R = r), r = 0..n.
std::vector<double> RunsDistribution(int positive, int negative);

struct RunsTestResult {
  bool computed = false;
  int runs = 0;
  int positive = 0;
  int negative = 0;
  double expected_runs = 0.0;
  double p_value_few = 1.0;  // P(R ≤ runs) under random order
};
// Wald–Wolfowitz runs test over several independent series of signs (+1,
// −1; 0 entries are skipped). The run counts of the series add; their
// exact distributions are convolved. computed is false with fewer than 2
// signs of either kind in total.
RunsTestResult RunsTest(const std::vector<std::vector<int>>& series);

// Linear-interpolation quantile (R type 7, NumPy's default) of sorted data.
double SortedQuantile(const std::vector<double>& sorted, double probability);

// Seed of random stream `index` derived from `seed` (two SplitMix64 steps):
// the same (seed, index) always gives the same stream.
std::uint64_t StreamSeed(std::uint64_t seed, std::uint64_t index);
// Uniform integer in [0, n) from a 64-bit engine (Lemire's multiply-and-
// reject), the same on every platform — unlike std::uniform_int_distribution,
// whose algorithm the standard leaves open.
std::uint64_t UniformBelow(std::mt19937_64& engine, std::uint64_t n);

}  // namespace ratewell::detail
