#include "fitting/detail/fit_statistics.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include <boost/math/distributions/fisher_f.hpp>
#include <boost/math/distributions/students_t.hpp>
#include <boost/math/special_functions/binomial.hpp>

namespace ratewell::detail {

double StudentTQuantile(double probability, double dof) {
  const boost::math::students_t distribution(dof);
  return boost::math::quantile(distribution, probability);
}

double FisherFQuantileUpper(double upper_tail, double df1, double df2) {
  const boost::math::fisher_f distribution(df1, df2);
  return boost::math::quantile(boost::math::complement(distribution, upper_tail));
}

double FisherFUpperTail(double f, double df1, double df2) {
  if (!(f > 0.0)) return 1.0;
  const boost::math::fisher_f distribution(df1, df2);
  return boost::math::cdf(boost::math::complement(distribution, f));
}

double GaussianMinusTwoLogLikelihood(double ssr, int n, double sum_log_weights) {
  return n * (std::log(2.0 * std::numbers::pi * ssr / n) + 1.0) - sum_log_weights;
}

double Aic(double minus_two_log_likelihood, int /*n*/, int num_parameters) {
  const int k = num_parameters + 1;
  return minus_two_log_likelihood + 2.0 * k;
}

double Aicc(double minus_two_log_likelihood, int n, int num_parameters) {
  const int k = num_parameters + 1;
  if (n - k - 1 <= 0) return std::numeric_limits<double>::infinity();
  return Aic(minus_two_log_likelihood, n, num_parameters) + 2.0 * k * (k + 1) / (n - k - 1);
}

std::vector<double> RunsDistribution(int positive, int negative) {
  const int n = positive + negative;
  std::vector<double> p(n + 1, 0.0);
  if (positive == 0 || negative == 0) {
    if (n > 0) p[1] = 1.0;
    return p;
  }
  // Runs of a random arrangement (Wald & Wolfowitz 1940):
  //   P(R = 2k)     = 2·C(n₁−1, k−1)·C(n₂−1, k−1) / C(n, n₁)
  //   P(R = 2k + 1) = [C(n₁−1, k)·C(n₂−1, k−1) + C(n₁−1, k−1)·C(n₂−1, k)] / C(n, n₁)
  auto choose = [](int a, int b) {
    if (b < 0 || b > a) return 0.0;
    return boost::math::binomial_coefficient<double>(a, b);
  };
  const double total = choose(n, positive);
  for (int r = 2; r <= n; ++r) {
    const int k = r / 2;
    double ways = 0.0;
    if (r % 2 == 0) {
      ways = 2.0 * choose(positive - 1, k - 1) * choose(negative - 1, k - 1);
    } else {
      ways = choose(positive - 1, k) * choose(negative - 1, k - 1) +
             choose(positive - 1, k - 1) * choose(negative - 1, k);
    }
    p[r] = ways / total;
  }
  return p;
}

RunsTestResult RunsTest(const std::vector<std::vector<int>>& series) {
  RunsTestResult result;
  std::vector<double> distribution = {1.0};  // P(total runs = r), r from 0
  for (const std::vector<int>& signs : series) {
    int pos = 0, neg = 0, runs = 0, last = 0;
    for (int s : signs) {
      if (s == 0) continue;
      pos += s > 0 ? 1 : 0;
      neg += s < 0 ? 1 : 0;
      if (s != last) ++runs;
      last = s;
    }
    if (pos + neg == 0) continue;
    result.positive += pos;
    result.negative += neg;
    result.runs += runs;
    const std::vector<double> one = RunsDistribution(pos, neg);
    std::vector<double> combined(distribution.size() + one.size() - 1, 0.0);
    for (size_t a = 0; a < distribution.size(); ++a) {
      if (distribution[a] == 0.0) continue;
      for (size_t b = 0; b < one.size(); ++b) combined[a + b] += distribution[a] * one[b];
    }
    distribution.swap(combined);
  }
  if (result.positive < 2 || result.negative < 2) return result;
  result.computed = true;
  double expected = 0.0, below = 0.0;
  for (size_t r = 0; r < distribution.size(); ++r) {
    expected += r * distribution[r];
    if (static_cast<int>(r) <= result.runs) below += distribution[r];
  }
  result.expected_runs = expected;
  result.p_value_few = std::min(1.0, below);
  return result;
}

double SortedQuantile(const std::vector<double>& sorted, double probability) {
  if (sorted.empty()) return std::numeric_limits<double>::quiet_NaN();
  const double h = (static_cast<double>(sorted.size()) - 1.0) * probability;
  const double lo = std::floor(h);
  const size_t i = static_cast<size_t>(lo);
  if (i + 1 >= sorted.size()) return sorted.back();
  return sorted[i] + (h - lo) * (sorted[i + 1] - sorted[i]);
}

namespace {
__extension__ typedef unsigned __int128 Uint128;  // GCC and Clang

std::uint64_t SplitMix64(std::uint64_t x) {
  x += 0x9E3779B97F4A7C15ull;
  x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9ull;
  x = (x ^ (x >> 27)) * 0x94D049BB133111EBull;
  return x ^ (x >> 31);
}
}  // namespace

std::uint64_t StreamSeed(std::uint64_t seed, std::uint64_t index) {
  return SplitMix64(SplitMix64(seed) ^ SplitMix64(index + 0x632BE59BD9B4E019ull));
}

std::uint64_t UniformBelow(std::mt19937_64& engine, std::uint64_t n) {
  // Lemire (2019), "Fast random integer generation in an interval".
  Uint128 product = static_cast<Uint128>(engine()) * n;
  std::uint64_t low = static_cast<std::uint64_t>(product);
  if (low < n) {
    const std::uint64_t threshold = (0 - n) % n;
    while (low < threshold) {
      product = static_cast<Uint128>(engine()) * n;
      low = static_cast<std::uint64_t>(product);
    }
  }
  return static_cast<std::uint64_t>(product >> 64);
}

}  // namespace ratewell::detail
